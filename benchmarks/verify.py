"""The runner's own verification of a solver's result: re-check the plan, compare with `known`.

A solver's claim counts for nothing: the plan is replayed by `instances.checker`, and the
objective reported is the checker's. Against a known value (published or planted) a result
is a **contradiction** when it proves a different optimum, has a checked plan better than the
known optimum, a bound above it, or claims `infeasible` where a feasible plan is known to
exist (or finds a checked plan where infeasibility is known).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Optional

from instances.checker import check_plan
from instances.model import Instance, Result, relative_gap

NEEDS_PLAN = ("optimal", "feasible")


@dataclass(frozen=True)
class Verdict:
    """What the runner concludes from one result.

    `objective` is the checker's value of the plan (None without an accepted plan);
    `problems` lists claims not backed by a checked plan (an "unchecked" result);
    `contradictions` lists disagreements with the instance's `known` value.
    """

    checked: bool
    objective: Optional[float]
    gap: Optional[float]
    violations: list[str] = field(default_factory=list)
    problems: list[str] = field(default_factory=list)
    contradictions: list[str] = field(default_factory=list)


def close(a: float, b: float, tol: float) -> bool:
    return abs(a - b) <= tol * max(1.0, abs(a), abs(b))


def verify(instance: Instance, result: Result) -> Verdict:
    """Re-check `result.plan` on `instance` and compare everything with `instance.known`."""
    tol = max(instance.rules.tolerance, 1e-9)
    violations: list[str] = []
    problems: list[str] = []
    checked = False
    objective = None
    if result.plan is not None:
        report = check_plan(instance, result.plan)
        checked = report.feasible
        if checked:
            objective = report.objective
            if result.objective is not None and not close(result.objective, objective, tol):
                problems.append(f"solver reports objective {result.objective:g}, the checker computes {objective:g}")
        else:
            violations = [str(v) for v in report.violations]
            problems.append(f"plan rejected by the checker ({len(violations)} violation{'s' if len(violations) != 1 else ''}; "
                            f"first: {violations[0]})")
    if result.status in NEEDS_PLAN and result.plan is None:
        problems.append(f"status {result.status} without a plan")
    if result.status == "optimal" and objective is not None and result.bound is not None and not close(objective, result.bound, tol):
        problems.append(f"status optimal but objective {objective:g} differs from bound {result.bound:g}")
    gap = relative_gap(objective, result.bound) if objective is not None else None
    found = contradictions(instance, result.status, objective, result.bound, result.bounds)
    return Verdict(checked, objective, gap, violations, problems, found)


def contradictions(instance: Instance, status: str, objective: Optional[float], bound: Optional[float],
                   named_bounds: Optional[dict[str, float]] = None) -> list[str]:
    """Disagreements of (status, checked objective, bound, each named bound) with `instance.known`."""
    known = instance.known
    if known is None:
        return []
    tol = max(instance.rules.tolerance, 1e-9)
    src = f" (known from: {known.source})"
    out = []
    if known.infeasible:
        if objective is not None:
            out.append(f"checked plan with objective {objective:g} on an instance known to be infeasible{src}")
        return out
    opt = known.optimum
    if opt is None:
        return out
    if status == "optimal" and objective is not None and not close(objective, opt, tol):
        out.append(f"proven optimum {objective:g} differs from the known optimum {opt:g}{src}")
    if objective is not None and objective < opt and not close(objective, opt, tol):
        out.append(f"checked plan with objective {objective:g} beats the known optimum {opt:g}{src}")
    if bound is not None and bound > opt and not close(bound, opt, tol):
        out.append(f"lower bound {bound:g} exceeds the known optimum {opt:g}{src}")
    for name, value in sorted((named_bounds or {}).items()):
        if value is not None and value > opt and not close(value, opt, tol):
            out.append(f"bound {name!r} = {value:g} exceeds the known optimum {opt:g}{src}")
    if status == "infeasible":
        out.append(f"status infeasible, but a plan with objective {opt:g} is known{src}")
    return out
