"""`stackproof grade SUITE (--plans DIR | --heuristic MODULE:FUNCTION)`: check plans made
elsewhere and measure their gap to the gold standard; exit 1 if any plan is infeasible."""
from __future__ import annotations

import argparse
import json

from instances.errors import InputError

from ..grade import grade, plans_from_dir, plans_from_heuristic, summary, table
from ..runner import read_results
from ..suites import load_suites, select

NAME = "grade"
HELP = "Grade plans from a folder or a heuristic function against proven optima, known optima or bounds."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("suites", nargs="+", metavar="SUITE", help="directory (with or without MANIFEST.json), manifest or instance file")
    src = parser.add_mutually_exclusive_group(required=True)
    src.add_argument("--plans", metavar="DIR", help="folder of plan (or result) files named after the instances")
    src.add_argument("--heuristic", metavar="MODULE:FUNCTION", help="a function plan(instance) -> Plan in an importable module")
    parser.add_argument("--gold", metavar="RESULTS.jsonl", help="bench results whose proven optima serve as the gold standard")
    parser.add_argument("--filter", action="append", metavar="GLOB", help="only instances whose set/name or name matches (repeatable)")
    parser.add_argument("--json", action="store_true", help="print {\"instances\": [...], \"summary\": {...}} as JSON")


def run(args: argparse.Namespace) -> int:
    entries = select(load_suites(args.suites), args.filter)
    if not entries:
        raise InputError.one(None, "--filter", "no instance matches")
    gold = read_results(args.gold) if args.gold else []
    source = plans_from_dir(args.plans, entries) if args.plans else plans_from_heuristic(args.heuristic)
    rows = grade(entries, source, gold)
    if args.json:
        print(json.dumps({"instances": [r.as_dict() for r in rows], "summary": summary(rows)}, indent=2, allow_nan=False, default=str))
    else:
        print(table(rows))
    return 0 if all(r.feasible for r in rows) else 1
