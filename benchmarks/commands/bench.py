"""`stackproof bench SUITE...`: solve every instance, verify, record, report; exit 1 on a
contradiction, an unchecked result or a regression against the baseline."""
from __future__ import annotations

import argparse
import sys

from instances.errors import InputError

from ..baseline import regressions
from ..junit import write_junit
from ..report import set_summary, write_report
from ..results import is_failure, read_results
from ..runner import DEFAULT_SOLVER, RunConfig, run_bench
from ..suites import load_suites, select

NAME = "bench"
HELP = "Run the solver on benchmark suites, verify every result against known values, write reports."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("suites", nargs="+", metavar="SUITE", help="directory (with or without MANIFEST.json), manifest or instance file")
    parser.add_argument("--time-limit", type=float, default=60.0, metavar="S", help="solver time limit per instance (default 60)")
    parser.add_argument("--hard-limit", type=float, default=None, metavar="S",
                        help="wall-clock limit after which the solve process is killed (default: time limit + max(10, time limit / 2))")
    parser.add_argument("--jobs", type=int, default=1, metavar="N", help="instances solved at once in local processes (default 1)")
    parser.add_argument("--scheduler", metavar="ADDRESS", help="run on an existing Dask distributed scheduler instead (tcp://host:port)")
    parser.add_argument("--filter", action="append", metavar="GLOB", help="only instances whose set/name or name matches (repeatable)")
    parser.add_argument("--results", metavar="FILE.jsonl", help="append one JSON line per finished instance; instances already there are skipped")
    parser.add_argument("--report", metavar="DIR", help="write summary.md, results.csv and report.html here")
    parser.add_argument("--junit", metavar="FILE.xml", help="write a JUnit file: one test case per instance")
    parser.add_argument("--baseline", metavar="FILE.jsonl", help="earlier results: exit 1 on a regression, listing each")
    parser.add_argument("--shuffle-seed", type=int, default=None, metavar="S", help="shuffle the order of the boxes of every instance")
    parser.add_argument("--backend", default="highs", help="MILP backend passed to the solver (default highs)")
    parser.add_argument("--threads", type=int, default=1, help="solver threads per instance (default 1)")
    parser.add_argument("--seed", type=int, default=0, help="solver random seed (default 0)")
    parser.add_argument("--solver", default=DEFAULT_SOLVER, metavar="MODULE:FUNCTION",
                        help=f"solve function f(instance, *, time_limit, backend, threads, seed, log) -> Result (default {DEFAULT_SOLVER})")
    parser.add_argument("--quiet", action="store_true", help="no progress output")


def _check_args(args: argparse.Namespace) -> None:
    if args.time_limit <= 0:
        raise InputError.one(None, "--time-limit", f"must be positive, got {args.time_limit:g}")
    if args.hard_limit is not None and args.hard_limit <= 0:
        raise InputError.one(None, "--hard-limit", f"must be positive, got {args.hard_limit:g}")
    if args.jobs < 1:
        raise InputError.one(None, "--jobs", f"must be at least 1, got {args.jobs}")
    if args.threads < 1:
        raise InputError.one(None, "--threads", f"must be at least 1, got {args.threads}")
    if ":" not in args.solver:
        raise InputError.one(None, "--solver", f"must be MODULE:FUNCTION, got {args.solver!r}")


def run(args: argparse.Namespace) -> int:
    _check_args(args)
    entries = select(load_suites(args.suites), args.filter)
    if not entries:
        raise InputError.one(None, "--filter", "no instance matches")
    if args.solver == DEFAULT_SOLVER:  # fail fast (exit 2) on options the MILP cannot honour
        from milp import validate_options

        for e in entries:
            validate_options(e.instance, args.time_limit, args.backend, args.threads, args.seed, None)
    baseline = read_results(args.baseline) if args.baseline else None
    config = RunConfig(time_limit=args.time_limit, solver=args.solver, backend=args.backend, threads=args.threads,
                       seed=args.seed, shuffle_seed=args.shuffle_seed, hard_limit=args.hard_limit)
    records = run_bench(entries, config, results=args.results, jobs=args.jobs, scheduler=args.scheduler, progress=not args.quiet)

    s = set_summary(records)
    print(f"{s['instances']} instances: {s['proven']} proven optimal, {s['with_plan']} with a checked plan, "
          f"{s['errors']} errors, {s['contradictions']} with contradictions, {s['unchecked']} unchecked")
    failures = [r for r in records if is_failure(r)]
    for r in failures:
        for text in r["contradictions"]:
            print(f"CONTRADICTION {r['key']}: {text}", file=sys.stderr)
        for text in r["problems"]:
            print(f"UNCHECKED {r['key']}: {text}", file=sys.stderr)

    if args.report:
        instances = {e.key: e.instance for e in entries}
        mine = {r["run_key"] for r in records}
        earlier = [dict(r, config=f"baseline: {r.get('config')}") for r in baseline or []
                   if r.get("key") in instances and r.get("run_key") not in mine]
        compare = records + earlier
        files = write_report(args.report, compare, instances)
        print("report: " + ", ".join(str(f) for f in files))
    if args.junit:
        write_junit(args.junit, records)
    regressed = regressions(baseline, records) if baseline is not None else []
    for reg in regressed:
        print(f"REGRESSION {reg}", file=sys.stderr)
    if regressed:
        print(f"{len(regressed)} regressions against {args.baseline}")
    return 1 if failures or regressed else 0
