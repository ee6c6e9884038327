"""The height-map search (`milp.heightmap`) against independent references.

- the exhaustive oracle (`tests.oracles.exhaustive`, its own reading of PROBLEM.md) on drawn tiny
  one-container instances where the search applies (a source, loading from above, a support
  rule): at the oracle's optimum the search finds a plan the checker accepts, one unit lower it
  says "none"; on instances the oracle proves infeasible it says "none" at every height;
- OR-Tools CP-SAT (`tests.oracles.cpsat_rules`, a whole-problem model) on generated rule-heavy
  loads of 8 boxes in 2D and 6 in 3D: the same two facts at CP-SAT's proved optimum.

The top-down search of the support-free relaxation (`heightmap.refute`, `heightmap.hunt`):
- it never answers "none" at a height where the exhaustive oracle has a plan, `hunt` says "none"
  only where it does, and every plan either gives is accepted by the checker within the height;
- it is exact for the relaxation: on the rule-heavy loads above with the support rule set to
  `none` (then the relaxation is the instance itself), it answers "none" one unit below CP-SAT's
  optimum and not at it.
"""
from __future__ import annotations

import dataclasses

import pytest
from hypothesis import given

from instances.checker import check_plan
from instances.generate import random_instance
from instances.model import Support
from milp import heightmap, split
from milp.pipeline import _safe_cap
from milp.problem import prepare
from tests.oracles.cpsat_rules import solve_cpsat_rules
from tests.oracles.tiny import binding_instances
from tests.test_milp_split import oracle_optimum
from tests.test_milp_vs_oracles import drawn


SMALL_LOADS = [(2, 8, s) for s in range(4)] + [(3, 6, s) for s in range(3)]


def rule_heavy(dim: int, n: int, seed: int):
    """A generated rule-heavy load for one container (the speed benchmark's recipe, smaller)."""
    return random_instance(dim, n, seed, size_class="uniform", width=6 if dim == 2 else 4, source_ratio=1.5,
                           targets=1, must_tip=0.2, flush=0.5, drop_order="large-first", support="center",
                           integer_positions=True, name=f"hm-{dim}d-{n}-{seed}")


def with_support(inst, rule: str):
    return dataclasses.replace(inst, rules=dataclasses.replace(inst.rules, support=Support(rule)))


def one_container(inst):
    kind = dataclasses.replace(inst.containers[0], count=1)
    boxes = tuple(dataclasses.replace(b, target=None) for b in inst.boxes)
    return dataclasses.replace(inst, containers=(kind,), boxes=boxes)


def answer(inst, height: int):
    """The search's answer on the instance's one container, with its plan as a plan of the instance."""
    p = prepare(inst)
    (part,) = split.parts(p)
    assert heightmap.applies(part.problem)
    found = heightmap.search(part.problem, height, deadline=float("inf"))
    plan = split.merge(p, [(part, found.plan)]) if found.status == "plan" else None
    if plan is not None:  # the height the search reports is the checker's
        assert found.height == check_plan(inst, plan).objective
    return found.status, plan


def assert_exact_at(inst, optimum: int) -> None:
    status, plan = answer(inst, optimum)
    assert status == "plan"
    assert plan is not None, "the search's sequence must merge into a plan"
    report = check_plan(inst, plan)
    assert report.feasible, [str(v) for v in report.violations]
    assert report.objective <= optimum
    if optimum > 0:
        assert answer(inst, optimum - 1)[0] == "none"


@pytest.mark.parametrize("dim,n,seed", SMALL_LOADS)
def test_search_agrees_with_cpsat(dim, n, seed):
    inst = rule_heavy(dim, n, seed)
    ref = solve_cpsat_rules(inst, time_limit=60)
    assert ref.status == "optimal"
    assert_exact_at(inst, int(ref.objective))


def relaxed_answer(inst, height: int, search=heightmap.refute) -> str:
    """The top-down search's status on the instance's one container; a plan it gives must be checked."""
    p = prepare(inst)
    (part,) = split.parts(p)
    assert heightmap.refutable(part.problem)
    found = search(part.problem, height, deadline=float("inf"))
    if found.status == "plan":
        plan = split.merge(p, [(part, found.plan)])
        assert plan is not None, "the relaxation's plan, replayed, must merge"
        report = check_plan(inst, plan)
        assert report.feasible, [str(v) for v in report.violations]
        assert report.objective <= height and report.objective == found.height
    return found.status


@drawn(150)
@given(inst=binding_instances())
def test_searches_agree_with_exhaustive_oracle(inst):
    """Forward: exact at the oracle's optimum. Top down: never "none" where the oracle has a plan."""
    inst = one_container(inst)
    if inst.objective.minimise != "height":
        inst = dataclasses.replace(inst, objective=dataclasses.replace(inst.objective, minimise="height"))
    p = prepare(inst)
    if p.infeasible_reason is not None:
        return
    got = oracle_optimum(inst)
    if got is None:
        return
    if got.status == "infeasible":
        top = p.slots[0].size[-1]
        height = int(top if top is not None else _safe_cap(p))
        assert answer(inst, height)[0] == "none"
        assert relaxed_answer(inst, height) != "plan"
        assert relaxed_answer(inst, height, heightmap.hunt) != "plan"
        return
    optimum = int(got.objective)
    assert_exact_at(inst, optimum)
    assert relaxed_answer(inst, optimum) in ("plan", "relaxed")
    assert relaxed_answer(inst, optimum, heightmap.hunt) in ("plan", "unknown")
    if optimum > 0:  # no plan below the optimum: the search may say "none" or "relaxed", never "plan"
        below = relaxed_answer(inst, optimum - 1)
        assert below in ("none", "relaxed")
        # hunt's "none" is refute's: it may say so only where refute does
        assert relaxed_answer(inst, optimum - 1, heightmap.hunt) in (("none", "unknown") if below == "none"
                                                                     else ("unknown",))


@pytest.mark.parametrize("dim,n,seed", SMALL_LOADS)
def test_refute_is_exact_for_the_support_free_relaxation(dim, n, seed):
    inst = rule_heavy(dim, n, seed)
    free = with_support(inst, "none")
    ref = solve_cpsat_rules(free, time_limit=60)
    assert ref.status == "optimal"
    assert relaxed_answer(free, int(ref.objective)) == "plan"  # without support the relaxation is the instance
    assert relaxed_answer(free, int(ref.objective) - 1) == "none"
    # no leaf to turn down without support: hunt walks as refute does and proves the same
    assert relaxed_answer(free, int(ref.objective) - 1, heightmap.hunt) == "none"
    # the same proof holds for the instance with its support rule: its optimum is no lower
    assert solve_cpsat_rules(inst, time_limit=60).objective >= ref.objective
