"""`stackproof solve INSTANCE [-o RESULT.json] ...`: a proved-optimal plan, or the best one with its gap.

Exit 0 for optimal / feasible / infeasible, 3 for unknown (no plan within the limit), 2 for bad
input, 1 for an error (a plan the checker rejected). Without `-o` the result document goes to
stdout and the summary line to stderr; with `-o` the file is written atomically and the summary
goes to stdout. Output paths are checked before the solve starts. Ctrl-C stops the search and
still writes the best checked plan. On a terminal, one line on stderr shows the incumbent, the
bound, the gap (in percent) and the elapsed time while the solve runs (not with --quiet or --log).
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

from instances.errors import InputError
from instances.io import check_output, dumps, os_error_text, read_instance, result_to_dict, write_json

from ..progress import SolveProgress, StatusLine
from ..text import number, percent

NAME = "solve"
HELP = "Solve an instance exactly (MILP): a checked plan, a proved bound and the gap."
DESCRIPTION = (HELP + " The summary line shows the gap in percent; the result document keeps FORMATS.md's "
               "fraction (objective - bound) / objective. Exit 0 optimal, feasible or infeasible; 3 unknown; "
               "1 error; 2 bad input or an output that cannot be written.")

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
    parser.add_argument("--log", action="store_true", help="stream the backend's log (replaces the progress line)")
    parser.add_argument("--quiet", action="store_true", help="no progress line on stderr")


def summary(result) -> str:
    """One line: status, objective, bound, gap, tie-break, seconds."""
    parts = [f"status={result.status}", f"objective={number(result.objective)}", f"bound={number(result.bound)}",
             f"gap={percent(result.gap)}"]
    if result.tiebreak is not None:
        parts.append(f"{result.tiebreak.name}={number(result.tiebreak.value)}"
                     f"{'' if result.tiebreak.proved else ' (not proved)'}")
    parts.append(f"seconds={number(result.seconds)}")
    if result.status in ("infeasible", "error") and result.notes:
        parts.append(f"reason: {result.notes[-1]}")
    return " ".join(parts)


OPTIONS = {"time_limit": "--time-limit", "backend": "--backend", "threads": "--threads", "seed": "--seed",
           "export_model": "--export-model"}


def check_options(instance, args: argparse.Namespace) -> None:
    """The solver's own option checks (`milp.validate_options`), reported under the command-line names."""
    from milp import validate_options

    try:
        validate_options(instance, args.time_limit, args.backend, args.threads, args.seed, getattr(args, "export_model", None))
    except InputError as exc:
        raise InputError("command line", [(OPTIONS.get(where, where), message) for where, message in exc.problems]) from None


def run(args: argparse.Namespace) -> int:
    from milp import solve

    if args.demo == bool(args.instance):
        raise InputError("command line", [("INSTANCE", "give exactly one of an instance file or --demo")])
    if args.demo:
        from instances.demo import demo_instance_path

        path = str(demo_instance_path())
    else:
        path = args.instance
    instance = read_instance(path)
    if args.output:
        check_output(args.output, "-o")
    if args.export_model:
        check_output(args.export_model, "--export-model")
    check_options(instance, args)
    if args.export_model:
        Path(args.export_model).parent.mkdir(parents=True, exist_ok=True)  # as -o does; the model writer needs it
    line = StatusLine(enabled=not (args.quiet or args.log))
    with SolveProgress(line) as progress:
        result = solve(instance, time_limit=args.time_limit, backend=args.backend, threads=args.threads,
                       seed=args.seed, log=args.log, export_model=args.export_model,
                       progress=progress if line.on else None)
    doc = result_to_dict(result)
    if args.output:
        try:
            write_json(args.output, doc)
        except OSError as exc:  # the folder changed during the solve: keep the result on stdout
            sys.stdout.write(dumps(doc))
            raise InputError(args.output, [("-o", f"could not be written ({os_error_text(exc)}); "
                                                  "the result document was printed to stdout instead")]) from None
        print(summary(result))
    else:
        sys.stdout.write(dumps(doc))
        print(summary(result), file=sys.stderr)
    return EXIT.get(result.status, 1)
