"""`stackproof check INSTANCE PLAN_OR_RESULT`: exit 0 feasible, 1 infeasible, 2 bad input.

A plan (or result) whose `instance` field names another instance than the instance file is bad
input: that is said first, before anything is replayed. Moves are numbered from 1, in the text
and in `--json` alike.
"""
from __future__ import annotations

import argparse
import json

from instances.checker import check_plan
from instances.errors import InputError
from instances.io import read_instance, read_plan_or_result
from instances.validate import validate_plan

from ..text import plural, violation_text

NAME = "check"
HELP = "Check a plan (or the plan inside a result) against an instance: every rule, every move."


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("instance", help="instance JSON file")
    parser.add_argument("plan", metavar="PLAN_OR_RESULT", help="plan or result JSON file")
    parser.add_argument("--json", action="store_true",
                        help="print the report as JSON (violations[].move: the move number counted from 1, null for the plan as a whole)")


def run(args: argparse.Namespace) -> int:
    instance = read_instance(args.instance)
    plan, result = read_plan_or_result(args.plan)
    require_same_instance(instance, plan, result, args.plan, args.instance)
    validate_plan(instance, plan, file=args.plan)
    report = check_plan(instance, plan)
    claims = claim_mismatches(result, report, instance.rules.tolerance) if result is not None else []
    if args.json:
        doc = {
            "feasible": report.feasible,
            "objective": report.objective,
            "tips": report.tips,
            "heights": [{"container": [t, i], "height": h} for (t, i), h in sorted(report.heights.items())],
            "metrics": report.metrics,
            "violations": [dict(vars(v), move=None if v.move is None else v.move + 1) for v in report.violations],
            "claim_mismatches": claims,
        }
        print(json.dumps(doc, indent=2))
    else:
        for v in report.violations:
            print(violation_text(v))
        for c in claims:
            print(f"result: {c}")
        verdict = "feasible" if report.feasible else f"infeasible ({plural(len(report.violations), 'violation')})"
        print(f"{verdict}; {instance.objective.minimise} = {report.objective:g}; tipped boxes = {report.tips}")
    return 0 if report.feasible and not claims else 1


def claim_mismatches(result, report, tol: float) -> list[str]:
    """What a result document claims about its plan that the checker does not confirm."""
    out = []
    if result.objective is not None and report.objective is not None and abs(result.objective - report.objective) > tol:
        out.append(f"claims objective {result.objective:g}, the plan scores {report.objective:g}")
    if result.tiebreak is not None and result.tiebreak.name == "tips" and result.tiebreak.value != report.tips:
        out.append(f"claims {result.tiebreak.value:g} tipped boxes, the plan tips {report.tips}")
    if result.status in ("optimal", "feasible") and not report.feasible:
        out.append(f"claims status {result.status} for a plan the checker rejects")
    return out


def require_same_instance(instance, plan, result, plan_file: str, instance_file: str) -> None:
    """A plan or result written for another instance is bad input (InputError naming its `instance` field)."""
    if instance.name is None:
        return
    for field, named in (("instance", result.instance if result is not None else plan.instance),
                         ("plan.instance", plan.instance if result is not None else None)):
        if named is not None and named != instance.name:
            kind = "result" if result is not None else "plan"
            raise InputError(plan_file, [(field, f"this {kind} is for another instance: it names \"{named}\", "
                                                 f"but {instance_file} holds \"{instance.name}\"")])
