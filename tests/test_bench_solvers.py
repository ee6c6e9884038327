"""Stand-in solvers for the runner tests, importable by the worker process as
`tests.test_bench_solvers:<name>`, so the runner's mechanics (isolation, hard limits,
resume, verification) are tested without depending on the MILP's speed.

`drop_solve` is honest: a checked greedy plan and a valid (area) lower bound. The others
misbehave on purpose: hang, crash, or claim an optimum with a broken plan.
"""
from __future__ import annotations

import math
import os
import time

from instances.checker import check_plan
from instances.drop import drop_plan
from instances.model import Move, Plan, Result, SolverInfo, relative_gap


def area_bound(instance) -> float:
    """Continuous lower bound (common practice): total base area over the container footprint."""
    c = instance.containers[0]
    area = sum(b.size[0] * b.size[1] for b in instance.boxes)
    if instance.objective.minimise == "bins":
        return float(math.ceil(area / (c.size[0] * c.size[1]) - 1e-9))
    tallest = max(min(b.extents(o)[1] for o in b.orientations) for b in instance.boxes)
    value = max(area / c.size[0], tallest)
    return float(math.ceil(value - 1e-9)) if instance.rules.integer_positions else value


def drop_solve(instance, *, time_limit, backend, threads, seed, log=False) -> Result:
    if instance.known is not None:
        raise RuntimeError("the runner showed the solver the known value")
    start = time.monotonic()
    plan = drop_plan(instance)
    if plan is None:
        return Result(instance.name, "unknown", solver=SolverInfo("drop", "test", time_limit, seed))
    report = check_plan(instance, plan)
    bound = area_bound(instance)
    obj = report.objective
    status = "optimal" if abs(obj - bound) <= 1e-9 else "feasible"
    return Result(
        instance.name, status, objective=obj, bound=bound, gap=relative_gap(obj, bound), plan=plan, checked=report.feasible,
        solver=SolverInfo("drop", "test", time_limit, seed), seconds=time.monotonic() - start,
    )


def slow_drop_solve(instance, **kw) -> Result:
    time.sleep(float(os.environ.get("STACKPROOF_TEST_DELAY", "0.6")))
    return drop_solve(instance, **kw)


def hang_solve(instance, **kw) -> Result:
    if instance.name.endswith("hang"):
        while True:
            time.sleep(1)
    return drop_solve(instance, **kw)


def crash_solve(instance, **kw) -> Result:
    raise RuntimeError("deliberate crash for the test")


def bogus_solve(instance, *, time_limit, backend, threads, seed, log=False) -> Result:
    """Claims an optimum with every box at the origin (overlapping): must be caught as unchecked."""
    moves = tuple(Move(b.id, (instance.containers[0].id, 0), b.orientations[0], (0.0,) * instance.dim) for b in instance.boxes)
    top = max(b.size[-1] for b in instance.boxes)
    return Result(instance.name, "optimal", objective=top, bound=top, gap=0.0, plan=Plan(instance.name, moves), checked=True,
                  solver=SolverInfo("bogus", "test", time_limit, seed))


def test_drop_solve_is_honest_on_an_invented_case():
    from instances.model import ContainerType, Box, Instance, Objective, Rules, Support

    inst = Instance(dim=2, boxes=(Box("a", (2.0, 1.0), ("xy",)), Box("b", (2.0, 1.0), ("xy",))),
                    containers=(ContainerType("strip", (2.0, None)),),
                    rules=Rules(support=Support("none"), loading="any", access="none"), objective=Objective("height"), name="two")
    r = drop_solve(inst, time_limit=1, backend="x", threads=1, seed=0)
    assert r.status == "optimal" and r.objective == 2.0 and r.bound == 2.0
