"""`stackproof validate INSTANCE`: exit 0 when the instance is valid, 2 when not."""
from __future__ import annotations

import argparse

from instances.io import read_instance

NAME = "validate"
HELP = "Check an instance file against the format and the problem's rules (exit 0 valid, 2 not)."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("instance", help="instance JSON file")


def run(args: argparse.Namespace) -> int:
    inst = read_instance(args.instance)
    print(f"{args.instance}: valid {inst.dim}D instance, {len(inst.boxes)} boxes, {len(inst.containers)} container types")
    return 0
