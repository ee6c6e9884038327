"""The `stackproof` command: one sub-command per module in `benchmarks.commands`.

Each command module defines NAME, HELP, `add_arguments(parser)` and `run(args) -> int`.
Bad input (`instances.errors.InputError`), and an output that cannot be written, become a
message on stderr and exit 2; Ctrl-C becomes "interrupted" and exit 130 (128 + SIGINT, as shells do).
"""
from __future__ import annotations

import argparse
import importlib
import pkgutil
import sys
from typing import Optional, Sequence

from instances.errors import InputError
from instances.io import os_error_text

EXIT_BAD_INPUT = 2
EXIT_INTERRUPTED = 130


def _command_modules():
    import benchmarks.commands as pkg

    for info in sorted(pkgutil.iter_modules(pkg.__path__), key=lambda m: m.name):
        if not info.name.startswith("_"):
            yield importlib.import_module(f"{pkg.__name__}.{info.name}")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="stackproof",
        description="Exact unstack-and-pack planning: solve, check, bound, generate, benchmark.",
        epilog="Human-readable output numbers moves from 1 and shows gaps in percent; JSON documents "
               "keep the gap as the fraction (objective - bound) / objective of FORMATS.md.",
    )
    parser.add_argument("--version", action=_Version, nargs=0,
                        help="print the package version (and the git commit in a checkout) and exit")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", required=True)
    for module in _command_modules():
        p = sub.add_parser(module.NAME, help=module.HELP, description=getattr(module, "DESCRIPTION", module.HELP))
        module.add_arguments(p)
        p.set_defaults(_run=module.run)
    return parser


class _Version(argparse.Action):
    """`--version`, looked up only when asked for (it may call git)."""

    def __call__(self, parser, namespace, values, option_string=None):
        from .runner import stackproof_version

        print(f"stackproof {stackproof_version()}")
        parser.exit()


def main(argv: Optional[Sequence[str]] = None) -> int:
    args = build_parser().parse_args(argv)
    try:
        return int(args._run(args))
    except InputError as exc:
        print(f"stackproof {args.command}: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except BrokenPipeError:
        return 0
    except KeyboardInterrupt:
        print(f"stackproof {args.command}: interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
    except OSError as exc:  # a write that failed after the up-front checks (disk full, a race)
        where = exc.filename if exc.filename is not None else "output"
        print(f"stackproof {args.command}: {where}: {os_error_text(exc)}", file=sys.stderr)
        return EXIT_BAD_INPUT


if __name__ == "__main__":
    sys.exit(main())
