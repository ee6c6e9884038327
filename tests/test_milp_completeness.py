"""Completeness of the model: every plan the checker accepts is a solution of it (issue 10).

A wrong "optimal" or "infeasible" needs a model that cuts off feasible plans. Here the plans
come from outside the model: the exhaustive oracle's optimal plan and the constructive drop
plan, both accepted by `instances.checker.check_plan`. Each is moved to the representative the
symmetry cuts keep (`milp.embed.canonical`), written into the model as fixed values of its
orientation, container, position and rank variables, and the fixed model must be feasible in
every configuration the pipeline builds: the decision version at H = the plan's height, the
optimisation model bounded above by the plan's value (with the proved lower bound below), and
the tips tie-break model. Draws cover 2D and 3D, one or two container types (two of different
sizes in `mixed_instances`), open and closed tops, targets, counts, every rule and objective.
"""
from __future__ import annotations

import math

import pytest
from hypothesis import HealthCheck, given, settings

import bounds
from instances.checker import check_plan
from instances.drop import drop_plan
from milp import backends
from milp.embed import canonical, fix, plan_values
from milp.model import build
from milp.pipeline import _safe_cap
from milp.problem import prepare
from tests.oracles.exhaustive import NotExact, TooLarge, solve_exhaustive
from tests.oracles.tiny import binding_instances, mixed_instances, tiny_instances


def drawn(examples: int):
    return settings(max_examples=examples, deadline=None, database=None, derandomize=True,
                    suppress_health_check=list(HealthCheck))


def configurations(p, value: float, lower: float):
    """(label, build kwargs) for every model the pipeline may build around a plan of this value."""
    kind = p.instance.objective.minimise
    cap = max(_safe_cap(p), value)
    vcap = cap if kind == "bins" else min(cap, value)
    out = [("main", dict(vcap=vcap, lower=lower, upper=value)),
           ("tips", dict(vcap=vcap, lower=lower, upper=value, goal="tips", main_cap=value))]
    if kind == "height":
        out.append(("decision", dict(vcap=value, lower=0.0, upper=value, goal="feasible")))
    return out


def assert_plan_in_model(inst, plan) -> int:
    """The checked plan, fixed into every model configuration, is feasible there; returns the count."""
    report = check_plan(inst, plan)
    assert report.feasible, [str(v) for v in report.violations]
    p = prepare(inst)
    assert p.infeasible_reason is None, p.infeasible_reason
    lower = min(bounds.best(inst)[0], report.objective)  # the bound itself is checked elsewhere
    done = 0
    for label, kw in configurations(p, report.objective, lower):
        m = build(p, **kw)
        if not m.exact:
            continue  # a restricted model claims no proof, so it need not hold every plan
        fixed = canonical(m, plan)
        again = check_plan(inst, fixed)
        assert again.feasible and again.objective == pytest.approx(report.objective), \
            ("the symmetric copy must be a checked plan of the same value", [str(v) for v in again.violations])
        fix(m, plan_values(m, fixed))
        out = backends.run(m.lp, time_limit=30, integral=True)
        if out.status not in ("optimal", "feasible"):
            second = backends.confirm(m.lp, time_limit=30, integral=True)
            raise AssertionError(f"{label} model rejects a checked plan of value {report.objective}: "
                                 f"HiGHS {out.status}, presolve off {second.status}")
        done += 1
    return done


def oracle_plans(inst):
    plans = []
    try:
        got = solve_exhaustive(inst, max_nodes=300_000)
    except (NotExact, TooLarge):
        got = None
    if got is not None and got.status == "optimal":
        plans.append(got.plan)
    greedy = drop_plan(inst)
    if greedy is not None and check_plan(inst, greedy).feasible:
        plans.append(greedy)
    return plans


@drawn(120)
@given(inst=tiny_instances())
def test_checked_plans_are_model_solutions(inst):
    for plan in oracle_plans(inst):
        assert_plan_in_model(inst, plan)


@drawn(120)
@given(inst=mixed_instances())
def test_checked_plans_are_model_solutions_two_container_sizes(inst):
    for plan in oracle_plans(inst):
        assert_plan_in_model(inst, plan)


@drawn(60)
@given(inst=binding_instances())
def test_checked_plans_are_model_solutions_where_rules_bite(inst):
    for plan in oracle_plans(inst):
        assert_plan_in_model(inst, plan)


def test_completeness_check_can_fail():
    """A plan the model cannot hold is reported: fix a box to a position outside its container."""
    from tests.oracles.handworked import CASES

    inst = CASES[0].instance
    plan = oracle_plans(inst)[0]
    p = prepare(inst)
    report = check_plan(inst, plan)
    m = build(p, vcap=report.objective, lower=0.0, upper=report.objective, goal="feasible") \
        if inst.objective.minimise == "height" else build(p, vcap=_safe_cap(p), lower=0.0, upper=report.objective)
    values = plan_values(m, canonical(m, plan))
    label = next(k for k in values if k.startswith("p_") and k.endswith("_0"))
    var, _ = values[label]
    values[label] = (var, -5.0 if var.lowBound is None else var.lowBound - 5.0)
    fix(m, values)
    out = backends.run(m.lp, time_limit=30, integral=True)
    assert out.status == "infeasible"


def test_two_container_sizes_example_is_solved_at_the_oracle_optimum():
    """The case that exposed big-M over shared containers (issue 10): containers 5 and 2 wide, boxes
    free to go to either. A checked plan reaches 5; the model once claimed 6 optimal."""
    from instances.model import Box, ContainerType, Instance, Objective, Rules, Source, Support

    every = ("xy", "yx")
    boxes = (Box("b0", (2, 3), ("xy",), (4, 0)), Box("b1", (2, 1), every, (2, 0), "B"),
             Box("b2", (3, 2), every, (3, 3)), Box("b3", (4, 3), every, (2, 5), "A"),
             Box("b4", (4, 1), every, (2, 8)))
    inst = Instance(2, boxes, (ContainerType("A", (5, None)), ContainerType("B", (2, None))), Source((6, None)),
                    Rules(support=Support("none"), loading="from-above", access="side-face", integer_positions=True),
                    Objective("height"), name="two-sizes")
    import milp

    oracle = solve_exhaustive(inst)
    result = milp.solve(inst, time_limit=30)
    assert result.status == "optimal"
    assert result.objective == oracle.objective == 5
    assert check_plan(inst, result.plan).feasible
    assert_plan_in_model(inst, oracle.plan)
