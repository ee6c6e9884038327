"""A good checked plan before the MILP starts: the greedy drop, then random restarts of it.

`instances.drop.drop_plan` places boxes one by one in a precedence-respecting order; here that
order is perturbed at random (a randomised lexicographic topological sort of the lift graph,
biased towards big bases first) for a short time budget, and the best plan the checker accepts
is kept, ranked by (main objective, tipped boxes). Its value is an upper bound that lets the
model cut off everything not strictly better, and closes instances where it meets the lower bound.
"""
from __future__ import annotations

import math
import random
import time
from dataclasses import dataclass
from typing import Optional

import networkx as nx

from instances.checker import CheckReport, check_plan
from instances.drop import drop_plan
from instances.model import Instance, Plan
from instances.precedence import lift_graph


@dataclass(frozen=True)
class Incumbent:
    plan: Plan
    report: CheckReport

    @property
    def key(self) -> tuple[float, int]:
        return (self.report.objective, self.report.tips)


def _checked(instance: Instance, graph: nx.DiGraph, plan: Optional[Plan]) -> Optional[Incumbent]:
    if plan is None:
        return None
    report = check_plan(instance, plan, graph)
    return Incumbent(plan, report) if report.feasible else None


def best_incumbent(instance: Instance, graph: nx.DiGraph, *, budget_s: float = 1.0, seed: int = 0,
                   lower: float = -math.inf, max_tries: int = 400) -> Optional[Incumbent]:
    """The best checked greedy plan within `budget_s` seconds (stops early on reaching `lower`)."""
    t_end = time.perf_counter() + budget_s
    best = _checked(instance, graph, drop_plan(instance, graph=graph))
    lifts = lift_graph(graph)
    rng = random.Random(seed)
    base = {b.id: math.prod(b.size[:-1]) for b in instance.boxes}
    tries = 0
    while time.perf_counter() < t_end and tries < max_tries:
        if best is not None and best.report.objective <= lower + 1e-9:
            if instance.objective.then != "tips" or best.report.tips == 0:
                break
        tries += 1
        noise = rng.uniform(0.0, 1.5)
        key = {bid: -base[bid] * (1.0 + noise * rng.random()) for bid in base}
        order = list(nx.lexicographical_topological_sort(lifts, key=lambda n: key[n]))
        cand = _checked(instance, graph, drop_plan(instance, order=order, graph=graph))
        if cand is not None and (best is None or cand.key < best.key):
            best = cand
    return best
