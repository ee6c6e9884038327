"""`stackproof solve INSTANCE [-o RESULT.json] ...`: a proved-optimal plan, or the best one with its gap.

Exit 0 for optimal / feasible / infeasible, 3 for unknown (no plan within the limit), 2 for bad
input, 1 for an error (a plan the checker rejected). Without `-o` the result document goes to
stdout and the summary line to stderr; with `-o` the file is written atomically and the summary
goes to stdout. Ctrl-C stops the search and still writes the best checked plan.
"""
from __future__ import annotations

import argparse
import json
import sys

from instances.errors import InputError
from instances.io import dumps, read_instance, result_to_dict, write_json

NAME = "solve"
HELP = "Solve an instance exactly (MILP): a checked plan, a proved bound and the gap."

EXIT = {"optimal": 0, "feasible": 0, "infeasible": 0, "unknown": 3, "error": 1}


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("instance", nargs="?", help="instance JSON file")
    parser.add_argument("--demo", action="store_true", help="solve the bundled demo instance")
    parser.add_argument("-o", "--output", metavar="RESULT.json", help="write the result document here")
    parser.add_argument("--time-limit", type=float, default=60.0, metavar="S", help="seconds in all (default 60)")
    parser.add_argument("--backend", default="highs", help="highs (default) or cbc")
    parser.add_argument("--threads", type=int, default=1, help="solver threads (default 1)")
    parser.add_argument("--seed", type=int, default=0, help="random seed for solver and incumbent search")
    parser.add_argument("--export-model", metavar="FILE", help="also write the model as FILE.lp or FILE.mps")
    parser.add_argument("--log", action="store_true", help="stream the backend's log")


def _fmt(x) -> str:
    return "-" if x is None else f"{x:g}"


def summary(result) -> str:
    """One line: status, objective, bound, gap, tie-break, seconds."""
    parts = [f"status={result.status}", f"objective={_fmt(result.objective)}", f"bound={_fmt(result.bound)}",
             f"gap={'-' if result.gap is None else f'{100 * result.gap:.2f}%'}"]
    if result.tiebreak is not None:
        parts.append(f"{result.tiebreak.name}={_fmt(result.tiebreak.value)}"
                     f"{'' if result.tiebreak.proved else ' (not proved)'}")
    parts.append(f"seconds={_fmt(result.seconds)}")
    if result.status in ("infeasible", "error") and result.notes:
        parts.append(f"reason: {result.notes[-1]}")
    return " ".join(parts)


def run(args: argparse.Namespace) -> int:
    from milp import solve

    if args.demo == bool(args.instance):
        raise InputError("<command line>", [("INSTANCE", "give exactly one of an instance file or --demo")])
    if args.demo:
        from instances.demo import demo_instance_path

        path = str(demo_instance_path())
    else:
        path = args.instance
    instance = read_instance(path)
    result = solve(instance, time_limit=args.time_limit, backend=args.backend, threads=args.threads,
                   seed=args.seed, log=args.log, export_model=args.export_model)
    doc = result_to_dict(result)
    if args.output:
        write_json(args.output, doc)
        print(summary(result))
    else:
        sys.stdout.write(dumps(doc))
        if not dumps(doc).endswith("\n"):
            sys.stdout.write("\n")
        print(summary(result), file=sys.stderr)
    return EXIT.get(result.status, 1)
