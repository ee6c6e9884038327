"""Tests of the independent oracles themselves: hand-worked examples, the checker, each other.

The oracles judge the MILP, so they are checked here against things outside them: examples
worked by hand (the reasoning is written beside each), the FORMATS.md worked example, the plan
checker (every plan they return must pass it), the project's precedence graph, the greedy drop
plan (a feasible plan bounds the optimum from above), OR-Tools CP-SAT against the exhaustive
search on precedence-free strip instances, and monotonicity: relaxing a rule never worsens an
optimum.
"""
from __future__ import annotations

import dataclasses

import pytest
from hypothesis import HealthCheck, given, settings

from instances.drop import drop_plan
from instances.checker import check_plan
from instances.io import instance_from_dict
from instances.model import Box, ContainerType, Instance, Objective, Rules, Source, Support
from instances.precedence import precedence_graph
from instances.validate import instance_problems
from tests.oracles.cpsat import is_strip_case, strip_height_cpsat
from tests.oracles.exhaustive import NotExact, solve_exhaustive, source_relations
from tests.oracles.handworked import CASES, bridge as _bridge, instance2d, neighbour_rows as _neighbour_rows
from tests.oracles.tiny import drop, tiny_instances, tiny_strip_instances
from tests.worked_examples import FORMATS_INSTANCE

FAST = settings(max_examples=60, deadline=None, database=None, derandomize=True,
                suppress_health_check=list(HealthCheck))


# ---------------------------------------------------------------- hand-worked examples


@pytest.mark.parametrize("case", CASES, ids=lambda c: c.name)
def test_hand_worked_table(case):
    # every independent reference reproduces the hand-argued answer: both exhaustive searches
    # and the whole-problem CP-SAT model
    from tests.oracles.cpsat_rules import solve_cpsat_rules

    answers = {m: solve_exhaustive(case.instance, method=m) for m in ("sequence", "layout")}
    answers["cpsat"] = solve_cpsat_rules(case.instance, time_limit=30)
    for name, got in answers.items():
        assert got.status == case.status, (name, case.why)
        if case.status == "optimal":
            assert got.objective == case.objective, (name, case.why)
            if case.tips is not None:
                assert got.tips == case.tips, (name, case.why)



def test_formats_worked_example_has_optimum_five_with_one_tip():
    # FORMATS.md "Instance": optimum 5, needing crate-a tipped (argued by hand there). Integer
    # positions are switched on: the hand plan uses integer positions, so the integer optimum
    # is also 5.
    doc = dict(FORMATS_INSTANCE, rules=dict(FORMATS_INSTANCE["rules"], integer_positions=True))
    inst = instance_from_dict(doc)
    got = solve_exhaustive(inst)
    assert (got.status, got.objective, got.tips) == ("optimal", 5, 1)
    assert [m.box for m in got.plan.moves][0] == "crate-c"  # crate-c rests on crate-a: it leaves first


def test_formats_worked_example_without_integer_positions_is_refused():
    # Enumerating integer positions is not exact for real positions with support rules.
    with pytest.raises(NotExact):
        solve_exhaustive(instance_from_dict(FORMATS_INSTANCE))


def test_stack_order_reverses_into_target():
    # Source: a (2x1) on the floor, b (2x1) on a. b must leave first, so in a 2-wide target b is
    # at the bottom and a on top: height 2 is the only packing.
    inst = instance2d([("a", (2, 1), (0, 0), ("xy",)), ("b", (2, 1), (0, 1), ("xy",))], 2, source=(2, None))
    got = solve_exhaustive(inst)
    assert got.objective == 2
    assert [(m.box, m.at) for m in got.plan.moves] == [("b", (0, 0)), ("a", (0, 1))]


def test_tip_with_both_faces_against_walls_is_infeasible():
    # A 1x3 box filling a 1-wide source: both side faces are against walls, so it can never be
    # tipped; the target is 3 wide and 1 tall, so it fits only tipped: infeasible. Without the
    # access rule it lies flat: height 1.
    rows = [("a", (1, 3), (0, 0), ("xy", "yx"))]
    assert solve_exhaustive(instance2d(rows, 3, height=1, source=(1, None))).status == "infeasible"
    relaxed = solve_exhaustive(instance2d(rows, 3, height=1, source=(1, None), access="none"))
    assert (relaxed.status, relaxed.objective, relaxed.tips) == ("optimal", 1, 1)


def test_neighbour_blocks_tip_until_it_has_left():
    # Target 3 wide, support corners. a can only be tipped after b has left (left face at the
    # wall, right face touched by b). Then b is in the target first and a (3x1 tipped) cannot
    # stand on the 1-wide b (corners unsupported) nor on the floor beside it (3 wide): a stays
    # upright, height 3. Without the access rule a is tipped first and b goes on top: height 2.
    assert solve_exhaustive(instance2d(_neighbour_rows(0), 3, source=(3, None), support="corners")).objective == 3
    free = solve_exhaustive(instance2d(_neighbour_rows(0), 3, source=(3, None), support="corners", access="none"))
    assert (free.objective, free.tips) == (2, 1)
    assert free.plan.moves[0].box == "a"


def test_side_clearance_decides_whether_a_neighbour_touches():
    # Same boxes with a gap of 1 between a and b. With clearance 0 b does not touch a (height 2);
    # with clearance 1 it does, and we are back to height 3.
    kw = dict(source=(4, None), support="corners")
    assert solve_exhaustive(instance2d(_neighbour_rows(1), 3, clearance=0, **kw)).objective == 2
    assert solve_exhaustive(instance2d(_neighbour_rows(1), 3, clearance=1, **kw)).objective == 3


def test_center_support_lets_a_wide_box_bridge_onto_a_narrow_one():
    # As above but support center: a (tipped, 3 wide at x=0) has its base centre at 1.5, which
    # lies on b's top when b stands at x=1: height 2 even though b must go first.
    got = solve_exhaustive(instance2d(_neighbour_rows(0), 3, source=(3, None), support="center", then="tips"))
    assert (got.objective, got.tips) == (2, 1)
    assert [m.box for m in got.plan.moves] == ["b", "a"]


def test_loading_from_above_forbids_sliding_under_an_overhang():
    # Source stack: a (1x1) on the floor, b (2x1) on a, c (1x1) on b: the order is c, b, a.
    # Target 2 wide, support center. c at x=0, b on c (base centre x=1 on c's top edge: edges
    # count). With loading `any`, a slides in under b's overhang at x=1: height 2. Lowered from
    # above it can only go on top of b: height 3.
    rows = [("a", (1, 1), (0, 0), ("xy",)), ("b", (2, 1), (0, 1), ("xy",)), ("c", (1, 1), (0, 2), ("xy",))]
    assert solve_exhaustive(instance2d(rows, 2, source=(2, None), loading="from-above")).objective == 3
    slid = solve_exhaustive(instance2d(rows, 2, source=(2, None), loading="any"))
    assert slid.objective == 2
    assert [m.box for m in slid.plan.moves] == ["c", "b", "a"]


def test_base_fraction_threshold():
    # Source: a (2x1, never tipped) on the floor, b (1x1) on a, so b leaves first. In a 2-wide
    # target a must then stand on b (no room beside it), with half of its base on b's top.
    # Fraction 0.5 allows it (height 2); fraction 1 makes the instance infeasible.
    rows = [("a", (2, 1), (0, 0), ("xy",)), ("b", (1, 1), (0, 1), ("xy",))]
    half = solve_exhaustive(instance2d(rows, 2, source=(2, None), support="base-fraction", fraction=0.5))
    full = solve_exhaustive(instance2d(rows, 2, source=(2, None), support="base-fraction", fraction=1.0))
    assert (half.status, half.objective) == ("optimal", 2)
    assert full.status == "infeasible"
    assert solve_exhaustive(instance2d(rows, 2, source=(2, None), support="none")).objective == 2


def test_bins_and_height_sum():
    # Three 2x2 boxes, bins 3x3 (count 3): no two fit in one bin (2 + 2 > 3 both ways): 3 bins.
    rows = [(f"b{k}", (2, 2), None, ("xy", "yx")) for k in range(3)]
    assert solve_exhaustive(instance2d(rows, 3, height=3, count=3, objective="bins")).objective == 3
    # Four unit boxes, two open 2-wide vans, height-sum: one van stacked 2 high costs 2, two vans
    # with two boxes side by side cost 1 + 1 = 2; volume 4 over the widest floor 2 says >= 2.
    units = [(f"u{k}", (1, 1), None, ("xy",)) for k in range(4)]
    assert solve_exhaustive(instance2d(units, 2, count=2, objective="height-sum", support="none")).objective == 2
    # Three units: one van (2 + 1 on top) costs 2, two vans (2 | 1) cost 2; never below 2.
    assert solve_exhaustive(instance2d(units[:3], 2, count=2, objective="height-sum")).objective == 2
    assert solve_exhaustive(instance2d(units[:1], 2, count=2, objective="height-sum")).objective == 1


def test_three_d_tip_needs_the_right_pair_of_faces():
    # 3D: box a (1x1x2, x by y by z) in a 1x2 source footprint at y=0, with b (1x1x1) at y=1 just
    # behind it. a's left/right faces are at the source walls (x), its front face at the wall
    # (y=0) and its back face touched by b. Tipping with x vertical (orientation 'zyx': needs
    # left-right) is impossible; tipping with y vertical ('xzy': needs front-back) is possible
    # once b has left. The target is 2x1 footprint, 1 tall: a fits only lying along x (2x1x1).
    def inst(orients):
        boxes = (Box("a", (1, 1, 2), orients, (0, 0, 0)), Box("b", (1, 1, 1), ("xyz",), (0, 1, 0)))
        rules = Rules(Support("none"), "from-above", "side-face", 0, True, 1e-6)
        return Instance(3, boxes, (ContainerType("c", (2, 1, 1), 2),), Source((1, 2, None)), rules,
                        Objective("bins"))
    # 'zyx': extents (2, 1, 1) along x, needs left-right, both at walls: infeasible.
    assert solve_exhaustive(inst(("xyz", "zyx"))).status == "infeasible"
    # 'zxy': extents (z, x, y) = (2, 1, 1), y becomes vertical: needs front-back, back freed by
    # b. a then fills one container, so b needs the other: 2 bins.
    got = solve_exhaustive(inst(("xyz", "zxy")))
    assert (got.status, got.objective, got.tips) == ("optimal", 2, 1)
    assert [m.box for m in got.plan.moves] == ["b", "a"]


def test_three_d_support_rules_on_a_bridge():
    # Two supporters under b: each of its four base corners lies on one of them: height 2.
    assert solve_exhaustive(_bridge(Support("corners"), True)).objective == 2
    # One supporter (a1 under the left half): the right corners are unsupported; the centre
    # (1, 1) lies on a1's top edge (edges count); half the base area is covered.
    assert solve_exhaustive(_bridge(Support("corners"), False)).status == "infeasible"
    assert solve_exhaustive(_bridge(Support("center"), False)).objective == 2
    assert solve_exhaustive(_bridge(Support("base-fraction", 0.5), False)).objective == 2
    assert solve_exhaustive(_bridge(Support("base-fraction", 0.75), False)).status == "infeasible"


def test_three_d_turn_about_the_vertical_is_not_a_tip():
    # A 1x2x1 box filling a 1x2 source (every side face at a wall) into a 2x1 target 1 tall:
    # it fits only turned ('yxz', extents 2x1x1), which keeps it upright, so no face is needed.
    # Allowed only tipped orientations of the same footprint ('zxy' is 1x1x2: too tall;
    # 'yzx' is 2x1x1 with x vertical, needing left-right, both at walls): infeasible.
    def inst(orients):
        rules = Rules(Support("center"), "from-above", "side-face", 0, True, 1e-6)
        return Instance(3, (Box("a", (1, 2, 1), orients, (0, 0, 0)),), (ContainerType("c", (2, 1, 1), 1),),
                        Source((1, 2, None)), rules, Objective("height", "tips"))
    turned = solve_exhaustive(inst(("xyz", "yxz")))
    assert (turned.status, turned.objective, turned.tips) == ("optimal", 1, 0)
    assert solve_exhaustive(inst(("xyz", "yzx"))).status == "infeasible"


# ---------------------------------------------------------------- against the project's own modules


@FAST
@given(tiny_instances())
def test_drawn_instances_are_valid(inst):
    assert instance_problems(inst) == []


@FAST
@given(tiny_instances(with_source=True))
def test_own_source_reading_matches_precedence_graph(inst):
    lift, faces = source_relations(inst)
    graph = precedence_graph(inst)
    ids = [b.id for b in inst.boxes]
    for i, b in enumerate(inst.boxes):
        theirs_lift = {j for j, _, k in graph.in_edges(b.id, data="kind") if k == "lift"}
        assert {ids[j] for j in lift[i]} == theirs_lift
        blocked = graph.nodes[b.id]["wall_blocked"]
        for face, blockers in faces[i].items():
            assert (blockers is None) == (face in blocked)
            if blockers is not None:
                theirs = {j for j, _, k in graph.in_edges(b.id, data="kind") if k == face}
                # the graph keeps one edge per pair: a lift predecessor is not repeated as a side edge
                assert {ids[j] for j in blockers} - theirs_lift == theirs


@settings(max_examples=150, deadline=None, database=None, derandomize=True, suppress_health_check=list(HealthCheck))
@given(tiny_instances())
def test_oracle_plans_pass_the_checker_and_beat_the_drop_plan(inst):
    got = solve_exhaustive(inst)  # asserts inside that the checker accepts the plan and its scores
    greedy = drop_plan(inst)
    if greedy is not None:
        report = check_plan(inst, greedy)
        if report.feasible:
            assert got.status == "optimal"
            assert got.objective <= report.objective + 1e-9
            if got.objective == report.objective and inst.objective.then == "tips":
                assert got.tips <= report.tips


def _relaxations(inst: Instance):
    """Instances whose feasible plans include every feasible plan of `inst`."""
    r = inst.rules
    yield dataclasses.replace(inst, rules=dataclasses.replace(r, support=Support("none")))
    yield dataclasses.replace(inst, rules=dataclasses.replace(r, access="none"))
    yield dataclasses.replace(inst, rules=dataclasses.replace(r, loading="any"))
    yield dataclasses.replace(inst, boxes=tuple(dataclasses.replace(b, target=None) for b in inst.boxes))
    yield dataclasses.replace(inst, containers=tuple(dataclasses.replace(c, count=c.count + 1) for c in inst.containers))
    if r.support.rule == "base-fraction" and r.support.min_fraction == 1.0:
        yield dataclasses.replace(inst, rules=dataclasses.replace(r, support=Support("base-fraction", 0.5)))


@settings(max_examples=40, deadline=None, database=None, derandomize=True, suppress_health_check=list(HealthCheck))
@given(tiny_instances(max_boxes=4))
def test_relaxing_a_rule_never_worsens_the_optimum(inst):
    base = solve_exhaustive(inst)
    for loose in _relaxations(inst):
        got = solve_exhaustive(loose)
        if base.status == "optimal":
            assert got.status == "optimal"
            assert got.objective <= base.objective
        elif got.status == "infeasible":
            assert base.status == "infeasible"


# ---------------------------------------------------------------- the two oracles against each other


@settings(max_examples=120, deadline=None, database=None, derandomize=True, suppress_health_check=list(HealthCheck))
@given(tiny_instances(max_boxes=4))
def test_sequence_and_layout_searches_agree(inst):
    # two different enumerations (move sequences; final layouts plus a greedy sequencing)
    a = solve_exhaustive(inst, method="sequence")
    b = solve_exhaustive(inst, method="layout")
    assert (a.status, a.objective) == (b.status, b.objective)
    if inst.objective.then == "tips":
        assert a.tips == b.tips



@settings(max_examples=80, deadline=None, database=None, derandomize=True, suppress_health_check=list(HealthCheck))
@given(tiny_strip_instances())
def test_cpsat_and_exhaustive_agree_on_strip_packing(inst):
    assert is_strip_case(inst)
    cp = strip_height_cpsat(inst, time_limit=20)
    ex = solve_exhaustive(inst)
    assert cp.status == ex.status
    if ex.status == "optimal":
        assert cp.height == ex.objective
        assert cp.bound == cp.height


# name -> where the published optimum comes from (MANIFEST.json); C1 allows rotation.
PUBLISHED_STRIPS = {
    "C1_1": "Hopper & Turton (2001), EJOR 128(1), Table 1 (C1: optimum 20); read in a file",
    "C1_2": "Hopper & Turton (2001), EJOR 128(1), Table 1 (C1: optimum 20); read in a file",
    "C1_3": "Hopper & Turton (2001), EJOR 128(1), Table 1 (C1: optimum 20); read in a file",
    "T1d": "Hopper (2000), PhD thesis, Cardiff, Table A.1 (optimum 200x200); read in a file",
    "ngcut1": "Martello, Monaci & Vigo (2003), INFORMS J. Computing 15(3); from memory",
    "ngcut3": "Martello, Monaci & Vigo (2003), INFORMS J. Computing 15(3); from memory",
    "ngcut4": "Martello, Monaci & Vigo (2003), INFORMS J. Computing 15(3); from memory",
    "ngcut5": "Martello, Monaci & Vigo (2003), INFORMS J. Computing 15(3); from memory",
    "ngcut7": "Martello, Monaci & Vigo (2003), INFORMS J. Computing 15(3); from memory",
    "cgcut1": "Martello, Monaci & Vigo (2003), INFORMS J. Computing 15(3); from memory",
    "gcut1": "Martello, Monaci & Vigo (2003), INFORMS J. Computing 15(3); from memory",
}


@pytest.mark.parametrize("name", sorted(PUBLISHED_STRIPS))
def test_cpsat_reproduces_published_strip_optima(name):
    from benchmarks.published import load_published, published_folder

    folder = published_folder()
    if folder is None:
        pytest.skip("published benchmark folder not found (../shared/benchmarks/published)")
    (entry,) = load_published(folder, names=[name])
    assert entry.from_memory == PUBLISHED_STRIPS[name].endswith("from memory")
    got = strip_height_cpsat(entry.instance, time_limit=60)
    assert got.status == "optimal", PUBLISHED_STRIPS[name]
    assert got.height == entry.instance.known.optimum, PUBLISHED_STRIPS[name]


def test_cpsat_refuses_instances_with_a_source():
    inst = instance2d([("a", (2, 1), (0, 0), ("xy",))], 2, source=(2, None), support="none", loading="any")
    with pytest.raises(ValueError):
        strip_height_cpsat(inst)


def test_cpsat_strip_worked_example():
    # Four rectangles 3x2, 2x2, 1x4, 4x1 (area 18) in a strip of width 4: the area bound is
    # ceil(18 / 4) = 5, reached by 3x2 at the floor beside the 4x1 tipped (1x4), the 2x2 on the
    # 3x2, and the 1x4 tipped (4x1) across the top.
    rows = [(f"r{k}", s, None, ("xy", "yx")) for k, s in enumerate([(3, 2), (2, 2), (1, 4), (4, 1)])]
    inst = instance2d(rows, 4, support="none", loading="any", access="none")
    assert strip_height_cpsat(inst).height == 5
    assert solve_exhaustive(inst).objective == 5
    fixed = instance2d([(i, s, a, ("xy",)) for i, s, a, _ in rows], 4, support="none", loading="any")
    # Without rotation: 3x2 at x 0-3 beside the 1x4 at x 3-4, the 2x2 on the 3x2 (both up to 4),
    # then the 4x1 across the top: 5, again the area bound.
    assert strip_height_cpsat(fixed).height == solve_exhaustive(fixed).objective == 5


def test_drop_rests_every_box():
    # the strategy's drop helper: a 2-wide box over two 1-wide stacks of heights 1 and 2 lands at 2
    ats = drop([(1, 1), (1, 2), (2, 1)], [(0,), (1,), (0,)])
    assert ats == [(0, 0), (1, 0), (0, 2)]
