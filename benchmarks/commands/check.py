"""`stackproof check INSTANCE PLAN_OR_RESULT`: exit 0 feasible, 1 infeasible, 2 bad input."""
from __future__ import annotations

import argparse
import json

from instances.checker import check_plan
from instances.io import read_instance, read_plan_or_result
from instances.validate import validate_plan

NAME = "check"
HELP = "Check a plan (or the plan inside a result) against an instance: every rule, every move."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("instance", help="instance JSON file")
    parser.add_argument("plan", metavar="PLAN_OR_RESULT", help="plan or result JSON file")
    parser.add_argument("--json", action="store_true", help="print the report as JSON")


def run(args: argparse.Namespace) -> int:
    instance = read_instance(args.instance)
    plan, _ = read_plan_or_result(args.plan)
    validate_plan(instance, plan, file=args.plan)
    report = check_plan(instance, plan)
    if args.json:
        doc = {
            "feasible": report.feasible,
            "objective": report.objective,
            "tips": report.tips,
            "heights": [{"container": [t, i], "height": h} for (t, i), h in sorted(report.heights.items())],
            "metrics": report.metrics,
            "violations": [vars(v) for v in report.violations],
        }
        print(json.dumps(doc, indent=2))
    else:
        for v in report.violations:
            print(v)
        verdict = "feasible" if report.feasible else f"infeasible ({len(report.violations)} violations)"
        print(f"{verdict}; {instance.objective.minimise} = {report.objective:g}; tipped boxes = {report.tips}")
    return 0 if report.feasible else 1
