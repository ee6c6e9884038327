"""The `stackproof` command: one sub-command per module in `benchmarks.commands`.

Each command module defines NAME, HELP, `add_arguments(parser)` and `run(args) -> int`.
Bad input (`instances.errors.InputError`) becomes a message on stderr and exit 2.
"""
from __future__ import annotations

import argparse
import importlib
import pkgutil
import sys
from typing import Optional, Sequence

from instances.errors import InputError

EXIT_BAD_INPUT = 2


def _command_modules():
    import benchmarks.commands as pkg

    for info in sorted(pkgutil.iter_modules(pkg.__path__), key=lambda m: m.name):
        if not info.name.startswith("_"):
            yield importlib.import_module(f"{pkg.__name__}.{info.name}")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="stackproof",
        description="Exact unstack-and-pack planning: solve, check, bound, generate, benchmark.",
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", required=True)
    for module in _command_modules():
        p = sub.add_parser(module.NAME, help=module.HELP, description=module.HELP)
        module.add_arguments(p)
        p.set_defaults(_run=module.run)
    return parser


def main(argv: Optional[Sequence[str]] = None) -> int:
    args = build_parser().parse_args(argv)
    try:
        return int(args._run(args))
    except InputError as exc:
        print(f"stackproof {args.command}: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except BrokenPipeError:
        return 0


if __name__ == "__main__":
    sys.exit(main())
