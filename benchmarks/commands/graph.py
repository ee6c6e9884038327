"""`stackproof graph INSTANCE`: the precedence graph as JSON or Graphviz DOT."""
from __future__ import annotations

import argparse
import json

from instances.io import read_instance
from instances.precedence import precedence_graph, to_dot, to_json

NAME = "graph"
HELP = "Print the precedence graph (lift and side-face edges, wall-blocked faces) of an instance."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("instance", help="instance JSON file")
    parser.add_argument("--format", choices=("json", "dot"), default="json", help="output format (default json)")


def run(args: argparse.Namespace) -> int:
    graph = precedence_graph(read_instance(args.instance))
    print(to_dot(graph) if args.format == "dot" else json.dumps(to_json(graph), indent=2), end="" if args.format == "dot" else "\n")
    return 0
