"""The CP-SAT model of the whole problem (tests/oracles/cpsat_rules.py) against outside references.

- the exhaustive search (tests/oracles/exhaustive.py, its own reading of PROBLEM.md) on drawn
  tiny instances: every rule, every objective, `then: tips`, several container types of
  different sizes, targets, counts, closed containers, sources with stacks and side faces;
- the hand-worked table (tests/oracles/handworked.py, reasoning written beside each case) and
  the FORMATS.md worked example (optimum 5 with one tip, argued there by hand);
- the classic strip oracle (tests/oracles/cpsat.py) on precedence-free strip instances;
- a published optimum: Hopper & Turton (2001) EJOR 128(1):34-57, Table 1, category C1,
  instance 1: strip width 20, optimum 20 (a perfect packing);
- the plan checker: every plan returned passes it, and every plan it accepts (the greedy drop
  plan, the exhaustive oracle's plan) is a solution of the model once pinned (no rule of the
  model cuts off a feasible plan).
"""
from __future__ import annotations

import dataclasses

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from instances.checker import check_plan
from instances.drop import drop_plan
from instances.io import instance_from_dict
from instances.model import Instance, Objective
from tests.oracles.cpsat import is_strip_case, strip_height_cpsat
from tests.oracles.cpsat_rules import NotExact, solve_cpsat_rules
from tests.oracles.exhaustive import TooLarge, solve_exhaustive
from tests.oracles.handworked import CASES, instance2d
from tests.oracles.tiny import SUPPORTS, binding_instances, tiny_instances, tiny_strip_instances
from tests.worked_examples import FORMATS_INSTANCE

LIMIT = 20.0


def drawn(n: int):
    return settings(max_examples=n, deadline=None, database=None, derandomize=True,
                    suppress_health_check=list(HealthCheck))


def exhaustive_or_skip(inst: Instance):
    try:
        return solve_exhaustive(inst, max_nodes=400_000)
    except TooLarge:
        return None


def assert_same_optimum(inst: Instance) -> None:
    """CP-SAT's optimum (and fewest tips with `then: tips`) equals the exhaustive oracle's."""
    ex = exhaustive_or_skip(inst)
    if ex is None:
        return
    cp = solve_cpsat_rules(inst, time_limit=LIMIT)
    assert cp.status == ex.status, (cp.status, ex.status, inst)
    if ex.status == "optimal":
        assert cp.objective == ex.objective, (cp.objective, ex.objective, inst, ex.plan, cp.plan)
        assert cp.bound == cp.objective
        report = check_plan(inst, cp.plan)
        assert report.feasible and report.objective == cp.objective
        if inst.objective.then == "tips":
            assert cp.tips == ex.tips == report.tips


@pytest.mark.parametrize("objective", ["height", "height-sum", "bins"])
@pytest.mark.parametrize("support", SUPPORTS, ids=lambda s: f"{s.rule}-{s.min_fraction}")
def test_equals_exhaustive_per_rule_and_objective(support, objective):
    @drawn(20)
    @given(tiny_instances(supports=(support,), objectives=(objective,)))
    def check(inst):
        assert_same_optimum(inst)

    check()


@drawn(80)
@given(binding_instances())
def test_equals_exhaustive_where_rules_bite(inst):
    # stacks, loading from above, a support rule, side-face access
    assert_same_optimum(inst)


@drawn(60)
@given(tiny_instances(with_source=True).filter(lambda i: len(i.containers) == 2))
def test_equals_exhaustive_with_two_container_types(inst):
    # two types of independently drawn sizes, open or closed, counts 1-2, targets on some boxes
    assert_same_optimum(inst)


@drawn(50)
@given(tiny_instances().map(lambda i: dataclasses.replace(i, objective=Objective(i.objective.minimise, "tips"))))
def test_equals_exhaustive_fewest_tips_second(inst):
    assert_same_optimum(inst)


def test_formats_worked_example_has_optimum_five_with_one_tip():
    # FORMATS.md "Instance": optimum 5 with crate-a tipped (argued by hand there), integer positions
    doc = dict(FORMATS_INSTANCE, rules=dict(FORMATS_INSTANCE["rules"], integer_positions=True))
    inst = instance_from_dict(doc)
    got = solve_cpsat_rules(inst, time_limit=LIMIT)
    assert (got.status, got.objective, got.tips) == ("optimal", 5, 1)


def test_real_positions_with_support_rules_are_refused():
    doc = dict(FORMATS_INSTANCE, rules=dict(FORMATS_INSTANCE["rules"], integer_positions=False))
    with pytest.raises(NotExact):
        solve_cpsat_rules(instance_from_dict(doc))


@drawn(30)
@given(tiny_strip_instances())
def test_equals_the_strip_oracle_on_strip_instances(inst):
    assert is_strip_case(inst)
    a, b = strip_height_cpsat(inst, time_limit=LIMIT), solve_cpsat_rules(inst, time_limit=LIMIT)
    assert (a.status, a.height) == (b.status, b.objective)


def test_published_perfect_strip_packing(published_dir):
    # Hopper & Turton (2001), Table 1, C1 problem 1: 16 items, strip width 20, optimum 20
    from benchmarks.published import load_published

    entry = load_published(published_dir, names=["C1_1"])[0]
    got = solve_cpsat_rules(entry.instance, time_limit=60)
    assert entry.instance.known.optimum == 20
    assert (got.status, got.objective) == ("optimal", 20)


@drawn(80)
@given(st.one_of(tiny_instances(), binding_instances()))
def test_every_checker_accepted_plan_is_a_model_solution(inst):
    # the drop plan and the exhaustive plan, once accepted by the checker, pinned into the model:
    # CP-SAT must find that very plan feasible with the checker's objective
    plans = [drop_plan(inst)]
    ex = exhaustive_or_skip(inst)
    if ex is not None and ex.plan is not None:
        plans.append(ex.plan)
    for plan in plans:
        if plan is None:
            continue
        report = check_plan(inst, plan)
        if not report.feasible:
            continue
        got = solve_cpsat_rules(inst, time_limit=LIMIT, fixed=plan)
        assert got.status == "optimal", (got.status, plan)
        assert got.objective == report.objective


@pytest.mark.parametrize("dim,n", [(2, 20), (2, 40), (3, 16)])
def test_benchmark_sized_drop_plans_are_model_solutions(dim, n):
    # the speed benchmark's rule-heavy loads: the greedy drop plan, accepted by the checker,
    # pinned into the model must be a solution there too (the model cuts off no plan at size)
    from benchmarks.speed import make_instance

    inst = make_instance("rules", dim, n, 0)
    plan = drop_plan(inst)
    report = check_plan(inst, plan)
    assert report.feasible
    got = solve_cpsat_rules(inst, time_limit=LIMIT, fixed=plan)
    assert (got.status, got.objective) == ("optimal", report.objective)

def test_base_fraction_counts_two_supporters_together():
    # hand-worked: `big` (2 x 1) lies under s1 and s2 (1 x 1 each) in a 2-wide source, so both
    # leave first and stand on the floor of the 2-wide target; `big` then needs both of them to
    # cover its whole base (fraction 1): optimum 2. With the fraction unreachable, infeasible.
    rows = [("big", (2, 1), (0, 0), ("xy",)), ("s1", (1, 1), (0, 1), ("xy",)), ("s2", (1, 1), (1, 1), ("xy",))]
    both = instance2d(rows, 2, source=(2, None), support="base-fraction", fraction=1.0, access="none")
    got = solve_cpsat_rules(both, time_limit=LIMIT)
    assert (got.status, got.objective) == ("optimal", 2)
    assert [m.box for m in got.plan.moves][-1] == "big"
    one = instance2d(rows[:2], 2, source=(2, None), support="base-fraction", fraction=1.0, access="none")
    assert solve_cpsat_rules(one, time_limit=LIMIT).status == "infeasible"


def test_speed_comparison_flags_every_kind_of_contradiction():
    # benchmarks.speed runs stackproof beside this oracle; its contradiction check must fire on
    # different proved optima, a bound above the other's plan, and "infeasible" against a plan
    from benchmarks.speed import contradictions

    inst = CASES[0].instance
    ok = {"status": "optimal", "objective": 2, "bound": 2}
    assert contradictions(inst, {"a": ok, "b": dict(ok)}) == []
    assert contradictions(inst, {"a": ok, "b": {"status": "optimal", "objective": 3, "bound": 3}})
    assert contradictions(inst, {"a": ok, "b": {"status": "feasible", "objective": 4, "bound": 3}})
    assert contradictions(inst, {"a": ok, "b": {"status": "infeasible", "objective": None, "bound": None}})
    assert contradictions(inst, {"a": ok, "b": {"status": "unknown", "objective": None, "bound": 1}}) == []
