"""`stackproof grade SUITE (--plans DIR | --heuristic MODULE:FUNCTION)...`: check plans made
elsewhere and measure their gap to the gold standard; exit 1 if any plan is infeasible.

Several `--plans` / `--heuristic` options compare the sources (and `--report` then draws a
Dolan-More profile of their objective values)."""
from __future__ import annotations

import argparse
import json

from instances.errors import InputError
from instances.io import check_output

from ..grade import grade, plans_from_dir, plans_from_heuristic, summary, table
from ..results import read_results
from ..suites import load_suites, select

NAME = "grade"
HELP = "Grade plans from a folder or a heuristic function against proven optima, known optima or bounds."
DESCRIPTION = (HELP + " The table shows gaps (objective - gold) / objective in percent; --json and grade.csv "
               "keep the fraction. Plan files in a --plans folder are named after the instance: NAME.plan.json, "
               "NAME.result.json or NAME.json (a file holding an instance is never taken as a plan), in DIR/SET/ or DIR/. "
               "Exit 0 when every plan is feasible, 1 when one is not, 2 on bad input.")


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("suites", nargs="+", metavar="SUITE", help="directory (with or without MANIFEST.json), manifest or instance file")
    parser.add_argument("--plans", action="append", default=[], metavar="DIR", help="folder of plan (or result) files: NAME.plan.json, NAME.result.json or NAME.json per instance NAME (repeatable: compares them)")
    parser.add_argument("--heuristic", action="append", default=[], metavar="MODULE:FUNCTION",
                        help="a function plan(instance) -> Plan in an importable module (repeatable: compares them)")
    parser.add_argument("--gold", metavar="RESULTS.jsonl", help="bench results whose proven optima serve as the gold standard")
    parser.add_argument("--filter", action="append", metavar="GLOB", help="only instances whose set/name or name matches (repeatable)")
    parser.add_argument("--report", metavar="DIR", help="write grade.csv and grade.html here")
    parser.add_argument("--json", action="store_true", help="print {\"instances\": [...], \"summary\": {...}} as JSON")


def run(args: argparse.Namespace) -> int:
    if not args.plans and not args.heuristic:
        raise InputError.one("command line", "--plans/--heuristic", "give a plan folder or a heuristic to grade")
    entries = select(load_suites(args.suites), args.filter)
    if not entries:
        raise InputError.one("command line", "--filter", "no instance matches")
    if args.report:
        check_output(args.report, "--report", folder=True)
    gold = read_results(args.gold) if args.gold else []
    sources = [(f"plans {d}", plans_from_dir(d, entries)) for d in args.plans]
    sources += [(spec, plans_from_heuristic(spec)) for spec in args.heuristic]
    graded = {label: grade(entries, source, gold) for label, source in sources}

    if args.json:
        docs = [{"source": label, "instances": [r.as_dict() for r in rows], "summary": summary(rows)} for label, rows in graded.items()]
        doc = {k: v for k, v in docs[0].items() if k != "source"} if len(docs) == 1 else {"sources": docs}
        print(json.dumps(doc, indent=2, allow_nan=False))
    else:
        for label, rows in graded.items():
            if len(graded) > 1:
                print(f"== {label}")
            print(table(rows))
    if args.report:
        from ..report import write_grade_report

        files = write_grade_report(args.report, graded)
        if not args.json:
            print("report: " + ", ".join(str(f) for f in files))
    return 0 if all(r.feasible for rows in graded.values() for r in rows) else 1
