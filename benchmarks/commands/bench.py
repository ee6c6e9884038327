"""`stackproof bench SUITE...`: solve every instance, verify, record, report; exit 1 on a
contradiction, an unchecked result, a regression against the baseline, or when no instance produced
a checked result; 2 on bad input or an output that cannot be written (checked before any solve);
130 on Ctrl-C (what is in --results stays, and the same command resumes)."""
from __future__ import annotations

import argparse
import sys

from instances.errors import InputError

from ..baseline import regressions
from ..cli import EXIT_INTERRUPTED
from ..junit import write_junit
from ..report import set_summary, write_report
from instances.io import check_output

from ..results import has_checked_result, is_failure, read_results
from ..runner import DEFAULT_SOLVER, RunConfig, run_bench
from ..suites import load_suites, select
from ..text import percent, plural

NAME = "bench"
HELP = "Run the solver on benchmark suites, verify every result against known values, write reports."
DESCRIPTION = (HELP + " Rows on the terminal show gaps in percent; the results file and results.csv keep FORMATS.md's "
               "fraction (objective - bound) / objective. Exit 0 when all is well; 1 on a contradiction, an unchecked "
               "plan, a regression, or when no instance produced a checked result; 2 on bad input; 130 on Ctrl-C.")


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
    parser.add_argument("--quiet", action="store_true", help="no progress output (rows and the status line appear only on a terminal)")


def _check_args(args: argparse.Namespace) -> None:
    if args.time_limit <= 0:
        raise InputError.one("command line", "--time-limit", f"must be positive, got {args.time_limit:g}")
    if args.hard_limit is not None and args.hard_limit <= 0:
        raise InputError.one("command line", "--hard-limit", f"must be positive, got {args.hard_limit:g}")
    if args.jobs < 1:
        raise InputError.one("command line", "--jobs", f"must be at least 1, got {args.jobs}")
    if args.threads < 1:
        raise InputError.one("command line", "--threads", f"must be at least 1, got {args.threads}")
    if ":" not in args.solver:
        raise InputError.one("command line", "--solver", f"must be MODULE:FUNCTION, got {args.solver}")


def _check_outputs(args: argparse.Namespace) -> None:
    """Every output path is writable before the first solve starts."""
    if args.results:
        check_output(args.results, "--results", append=True)
    if args.junit:
        check_output(args.junit, "--junit")
    if args.report:
        check_output(args.report, "--report", folder=True)


def _check_solver(args: argparse.Namespace, entries) -> None:
    """Fail fast (exit 2) on a solver that cannot be loaded or options the MILP cannot honour."""
    if args.solver == DEFAULT_SOLVER:
        from .solve import check_options

        for e in entries:
            check_options(e.instance, args)
    elif args.scheduler is None:  # on a cluster the workers' environment may differ from this one
        from ..isolate import solver_load_error

        why = solver_load_error(args.solver)
        if why is not None:
            raise InputError.one("command line", "--solver", f"cannot load {args.solver}: {why}")


def run(args: argparse.Namespace) -> int:
    _check_args(args)
    _check_outputs(args)
    entries = select(load_suites(args.suites), args.filter)
    if not entries:
        raise InputError.one("command line", "--filter", "no instance matches")
    _check_solver(args, entries)
    baseline = read_results(args.baseline) if args.baseline else None
    config = RunConfig(time_limit=args.time_limit, solver=args.solver, backend=args.backend, threads=args.threads,
                       seed=args.seed, shuffle_seed=args.shuffle_seed, hard_limit=args.hard_limit)
    try:
        records = run_bench(entries, config, results=args.results, jobs=args.jobs, scheduler=args.scheduler,
                            progress=not args.quiet)
    except KeyboardInterrupt:
        kept = (f"finished instances are in {args.results}; run the same command again to resume"
                if args.results else "nothing was kept (no --results file)")
        print(f"stackproof bench: interrupted; {kept}", file=sys.stderr)
        return EXIT_INTERRUPTED

    s = set_summary(records)
    gaps = [r["gap"] for r in records if r.get("gap") is not None]
    print(f"{plural(s['instances'], 'instance')}: {s['proven']} proven optimal, {s['with_plan']} with a checked plan, "
          f"{plural(s['errors'], 'error')}, {s['contradictions']} with contradictions, {s['unchecked']} unchecked; "
          f"largest gap {percent(max(gaps) if gaps else None)}")
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
        print(f"{plural(len(regressed), 'regression')} against {args.baseline}")
    if not any(has_checked_result(r) for r in records):
        errors = [r for r in records if r.get("status") == "error"]
        first = f"; first error: {errors[0]['key']}: {errors[0]['notes'][0]}" if errors and errors[0].get("notes") else ""
        print(f"stackproof bench: no instance produced a checked result{first}", file=sys.stderr)
        return 1
    return 1 if failures or regressed else 0
