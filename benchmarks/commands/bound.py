"""`stackproof bound INSTANCE [--json]`: every lower bound on the instance's objective, and the best."""
from __future__ import annotations

import argparse
import json
import math

from instances.io import read_instance

NAME = "bound"
HELP = "Lower bounds on an instance's objective: each bound's value and time, and the best one."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("instance", help="instance JSON file")
    parser.add_argument("--json", action="store_true",
                        help='print {"best": v, "bounds": {name: v}} (null for a bound proving infeasibility)')


def run(args: argparse.Namespace) -> int:
    instance = read_instance(args.instance)
    import bounds  # scipy-backed: imported here so that every other command starts fast

    values = bounds.all_bounds(instance)
    top = max((b.value for b in values), default=0.0)
    if args.json:
        doc = {"best": _num(top), "bounds": {b.name: _num(b.value) for b in values}}
        print(json.dumps(doc, indent=2))
        return 0
    width = max([len(b.name) for b in values] + [len("bound")])
    print(f"{'bound':<{width}}  {'value':>12}  {'seconds':>8}  reason")
    for b in values:
        print(f"{b.name:<{width}}  {_text(b.value):>12}  {b.seconds:>8.3f}  {b.reason}")
    print(f"{'best':<{width}}  {_text(top):>12}")
    if math.isinf(top):
        print("the bounds prove the instance infeasible")
    return 0


def _num(v: float):
    """JSON has no infinity: an infinite bound (proved infeasible) is written as null."""
    return None if math.isinf(v) else v


def _text(v: float) -> str:
    return "infeasible" if math.isinf(v) else f"{v:.6g}"
