"""The container decomposition (`milp.split`): each part is a relaxation, and merged plans pass the checker.

A part proves bounds for the whole instance only if every checked plan of the whole, cut down to
the part's boxes, is a plan of the part. Here the plans come from the exhaustive oracle
(`tests.oracles.exhaustive`): each, restricted to each part, is written into the part's model
(`milp.embed`) and must be a solution; the height-map search must not call the part empty at that
height. The solver, which uses the decomposition on these draws, must agree with the oracle.
"""
from __future__ import annotations

import contextlib
import dataclasses
import time

import pytest
from hypothesis import given
from hypothesis import strategies as st

import milp
from instances.checker import check_plan
from instances.model import Plan
from milp import backends, heightmap, split
from milp.embed import canonical, fix, plan_values
from milp.model import build
from milp import pipeline
from milp.problem import prepare
from tests.oracles.exhaustive import NotExact, TooLarge, solve_exhaustive
from tests.oracles.tiny import split_instances
from tests.test_milp_vs_oracles import TIME_LIMIT, assert_agrees, drawn


def restricted(plan: Plan, part: split.Part) -> Plan:
    """The plan's moves of the part's boxes, in order, into the part's one container."""
    q = part.problem
    ids = set(q.ids)
    slot = q.slots[0]
    return Plan(q.instance.name, tuple(dataclasses.replace(m, container=(slot.type_id, 0))
                                       for m in plan.moves if m.box in ids))


def part_height(plan: Plan, part: split.Part) -> float:
    q = part.problem
    return max((m.at[-1] + q.ext[q.ids.index(m.box)][m.orientation][-1] for m in plan.moves), default=0.0)


def oracle_optimum(inst):
    try:
        return solve_exhaustive(inst, max_nodes=300_000)
    except (NotExact, TooLarge):
        return None


@contextlib.contextmanager
def top_down_always():
    """The top-down step on every instance with part plans above the bound; each call's gap recorded
    (the parts' highest plan above the bound when the step was asked: the step runs when >= 1)."""
    calls = []
    real = pipeline._top_down

    def spy(run, pieces, best):
        if len(best) == len(pieces):
            calls.append(max(h for h, _ in best.values()) - run.bound)
        return real(run, pieces, best)

    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(pipeline, "TOP_DOWN_GAP", 1)
        mp.setattr(pipeline, "_top_down", spy)
        yield calls


@drawn(80)
@given(inst=st.one_of(split_instances(dim=2), split_instances(dim=3), split_instances(rules_bite=True)))
def test_solver_with_decomposition_agrees_with_oracle(inst):
    """As shipped, and with the top-down step forced wherever the parts' plans lie above the bound."""
    got = oracle_optimum(inst)
    if got is None:
        return
    assert_agrees(inst, milp.solve(inst, time_limit=TIME_LIMIT), got, require_proof=False)
    with top_down_always():
        result = milp.solve(inst, time_limit=TIME_LIMIT)
    assert_agrees(inst, result, got, require_proof=False)


@drawn(80)
@given(inst=st.one_of(split_instances(rules_bite=True), split_instances(dim=3)))
def test_no_part_search_denies_the_oracle_plan(inst):
    """The oracle's checked plan cut down to each part: neither height-map search calls the part
    empty at that plan's height (the forward search finds a plan; the relaxation is not refuted)."""
    got = oracle_optimum(inst)
    if got is None or got.plan is None:
        return
    p = prepare(inst)
    if not split.applies(p):
        return
    pieces = split.parts(p)
    for pc in pieces:
        q = pc.problem
        height = int(round(part_height(restricted(got.plan, pc), pc)))
        if heightmap.applies(q):
            assert heightmap.search(q, height, deadline=float("inf")).status == "plan"
        if heightmap.refutable(q):
            assert heightmap.refute(q, height, deadline=float("inf")).status in ("plan", "relaxed")


def deadlocked():
    """Speed family 2D n = 30, seed 0, with each part's top-down plan at height 67: (instance,
    problem, parts, plans)."""
    from benchmarks.speed import make_instance
    from instances.precedence import precedence_graph

    inst = make_instance("rules", 2, 30, 0)
    p = prepare(inst, precedence_graph(inst))
    pieces = split.parts(p)
    plans = {pc.slot: heightmap.hunt(pc.problem, 67, deadline=time.perf_counter() + 30).plan for pc in pieces}
    return inst, p, pieces, plans


def test_unlocked_merges_parts_whose_own_plans_deadlock():
    """Speed family 2D n = 30, seed 0: the parts' top-down plans at height 67 each need the other
    container to go first (a circle through source orders); re-planned in turn they merge."""
    from instances.precedence import precedence_graph

    inst, p, pieces, plans = deadlocked()
    assert all(plan is not None for plan in plans.values())
    assert split.merge(p, [(pc, plans[pc.slot]) for pc in pieces]) is None
    run = pipeline._Run(inst, p, precedence_graph(inst), time.perf_counter(), 60.0)
    merged = pipeline._unlocked(run, pieces, plans)
    assert merged is not None
    report = check_plan(inst, merged)
    assert report.feasible, [str(v) for v in report.violations]
    assert report.objective == 67


def test_replanned_answers_plan_none_or_unknown():
    """The same deadlock: each kept plan's re-planning answers a checked plan within 67, or "none"
    (an exact failure, never retried), and "unknown" only when its deadline has passed."""
    inst, p, pieces, plans = deadlocked()
    answers = []
    for first in range(len(pieces)):
        order = pieces[first:] + pieces[:first]
        got = pipeline._replanned(p, order, plans[order[0].slot], lambda pc: 67, time.perf_counter() + 60)
        answers.append(got)
        if isinstance(got, Plan):
            report = check_plan(inst, got)
            assert report.feasible and report.objective <= 67, [str(v) for v in report.violations]
        else:
            assert got == "none"
        assert pipeline._replanned(p, order, plans[order[0].slot], lambda pc: 67, time.perf_counter()) in ("unknown", "none")
    assert any(isinstance(a, Plan) for a in answers), answers


@pytest.mark.parametrize("seed", [4, 6])
def test_top_down_step_agrees_with_cpsat(seed):
    """Rule-heavy loads with two destinations (the speed benchmark's 2D n = 20 family), larger than
    the exhaustive oracle takes; seeds whose early plans lie above the bound, which is asserted."""
    from instances.generate import random_instance
    from tests.oracles.cpsat_rules import solve_cpsat_rules

    inst = random_instance(2, 20, seed, size_class="uniform", width=10, source_ratio=1.5, targets=2, must_tip=0.2,
                           flush=0.5, drop_order="large-first", support="center", integer_positions=True,
                           name=f"top-down-{seed}")
    ref = solve_cpsat_rules(inst, time_limit=60)
    assert ref.status == "optimal"
    with top_down_always() as calls:
        result = milp.solve(inst, time_limit=60)
    assert any(gap >= 1 for gap in calls), ("the top-down step must have run", calls)
    assert result.status == "optimal", result.notes
    assert result.objective == ref.objective
    assert check_plan(inst, result.plan).objective == result.objective


def test_merge_refuses_parts_that_need_a_circular_order():
    """Two containers whose plans each need the other's box first: no sequence, so no plan.

    Source (2D, 2 wide): a over b in one column, c over d in another... here b (container L) must
    go in before a (on top of it in L), while the source takes a out first: a circle."""
    from instances.model import Box, ContainerType, Instance, Move, Objective, Rules, Source, Support

    boxes = (Box("a", (1, 1), ("xy",), (0, 1), "L"), Box("b", (1, 1), ("xy",), (0, 0), "L"))
    inst = Instance(2, boxes, (ContainerType("L", (1, None), 1),), Source((1, None)),
                    Rules(support=Support("center")), Objective("height"), name="circle")
    p = prepare(inst)
    (part,) = split.parts(p)
    # b below a in the container: b must go in first, but a is above b in the source
    plan = Plan("circle", (Move("b", ("L", 0), "xy", (0.0, 0.0)), Move("a", ("L", 0), "xy", (0.0, 1.0))))
    assert split.merge(p, [(part, plan)]) is None
    swapped = Plan("circle", (Move("a", ("L", 0), "xy", (0.0, 0.0)), Move("b", ("L", 0), "xy", (0.0, 1.0))))
    merged = split.merge(p, [(part, swapped)])
    assert merged is not None and check_plan(inst, merged).feasible
