"""`stackproof draw INSTANCE [PLAN_OR_RESULT] -o FILE.(svg|png|html)`: pictures and the step-through page."""
from __future__ import annotations

import argparse
from pathlib import Path

from instances.draw import COLOR_BY, FORMATS, draw
from instances.errors import InputError
from instances.io import check_output, read_instance, read_plan_or_result
from instances.validate import validate_plan

NAME = "draw"
HELP = ("Draw an instance (source, targets, precedence graph) and optionally a plan: "
        ".svg or .png picture, or a self-contained .html page that steps through the moves.")


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("instance", help="instance JSON file")
    parser.add_argument("plan", metavar="PLAN_OR_RESULT", nargs="?", help="plan or result JSON file (optional)")
    parser.add_argument("-o", "--output", required=True, metavar="FILE",
                        help="output file; its extension (.svg, .png, .html) picks the format")
    parser.add_argument("--color-by", choices=COLOR_BY, default="destination",
                        help="colour boxes by destination container (default) or by move number (without a plan: by required target type)")


def run(args: argparse.Namespace) -> int:
    out = Path(args.output)
    if out.suffix.lower().lstrip(".") not in FORMATS:
        raise InputError(str(out), [("-o", f"extension must be one of {', '.join('.' + f for f in FORMATS)}, got {out.suffix or 'none'}")])
    check_output(out, "-o")
    instance = read_instance(args.instance)
    plan = result = None
    if args.plan is not None:
        plan, result = read_plan_or_result(args.plan)
        validate_plan(instance, plan, file=args.plan)
    draw(instance, plan, out, color_by=args.color_by, result=result)
    print(f"wrote {out}")
    return 0
