"""The plan checker: the worked example, properties on random plans, and single mutations."""
from __future__ import annotations

import copy
from dataclasses import replace

import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from instances.checker import check_plan, supported_measure, supporters
from instances.drop import drop_plan
from instances.geometry import Placed
from instances.io import instance_from_dict, plan_from_dict
from instances.model import ContainerType, Move, grip_needed, is_upright
from instances.precedence import grip_free, precedence_graph
from tests.strategies import resting_instances
from tests.worked_examples import FORMATS_INSTANCE, FORMATS_PLAN

PROPERTY = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])


def rules_of(report):
    return {v.rule for v in report.violations}


def test_formats_worked_example_is_feasible_with_height_5_and_one_tip():
    # FORMATS.md worked example: "The optimum 5 needs crate-a tipped ... beside crate-b on top of crate-c."
    inst = instance_from_dict(FORMATS_INSTANCE)
    report = check_plan(inst, plan_from_dict(FORMATS_PLAN))
    assert report.violations == []
    assert report.feasible
    assert report.objective == 5
    assert report.tips == 1
    assert report.heights == {("van-north", 0): 5}


def test_worked_example_in_wrong_order_breaks_the_lift_edge():
    inst = instance_from_dict(FORMATS_INSTANCE)
    doc = copy.deepcopy(FORMATS_PLAN)
    doc["moves"][0], doc["moves"][1] = doc["moves"][1], doc["moves"][0]
    report = check_plan(inst, plan_from_dict(doc))
    lift = [v for v in report.violations if v.rule == "lift-order"]
    assert [(v.move, v.box) for v in lift] == [(0, "crate-a")]
    assert "crate-c" in lift[0].detail


def test_grip_on_upright_move_and_wrong_grip_are_violations():
    inst = instance_from_dict(FORMATS_INSTANCE)
    doc = copy.deepcopy(FORMATS_PLAN)
    doc["moves"][2]["grip"] = "left-right"   # crate-b is upright
    assert "grip" in rules_of(check_plan(inst, plan_from_dict(doc)))
    doc = copy.deepcopy(FORMATS_PLAN)
    doc["moves"][1]["grip"] = "front-back"   # 2D tip of x needs left-right
    assert "grip" in rules_of(check_plan(inst, plan_from_dict(doc)))


def test_tip_with_both_faces_blocked_is_rejected_and_wall_counts():
    # crate-a: left face against the wall (common practice: a face against a wall cannot be gripped);
    # put a box against its right face so that no face of the left-right pair is free.
    doc = copy.deepcopy(FORMATS_INSTANCE)
    doc["boxes"][1].update(size=[2, 2], at=[4, 0])
    inst = instance_from_dict(doc)
    graph = precedence_graph(inst)
    assert graph.nodes["crate-a"]["wall_blocked"] == {"left"}
    assert graph.edges["crate-b", "crate-a"]["kind"] == "right"
    plan = plan_from_dict(FORMATS_PLAN)
    report = check_plan(inst, plan)
    assert [(v.move, v.rule) for v in report.violations if v.rule == "side-access"] == [(1, "side-access")]
    # once crate-b has left, the right face is free again
    moves = list(plan.moves)
    reordered = replace(plan, moves=(moves[0], Move("crate-b", ("van-north", 0), "xy", (2, 1)), Move("crate-a", ("van-north", 0), "yx", (0, 1))))
    assert "side-access" not in rules_of(check_plan(inst, reordered))


def test_support_rules_each_judge_their_own_geometry():
    # a 4-wide box on one 2-wide supporter at its left half: centre on the supporter's edge (counts),
    # one corner unsupported, supported fraction exactly 1/2.
    base = {
        "format": "stackproof/instance", "version": 1, "dim": 2,
        "boxes": [{"id": "low", "size": [2, 1]}, {"id": "top", "size": [4, 1]}],
        "containers": [{"id": "tote", "size": [6, 5]}],
    }
    plan = plan_from_dict({"format": "stackproof/plan", "version": 1, "moves": [
        {"box": "low", "container": ["tote", 0], "orientation": "xy", "at": [0, 0]},
        {"box": "top", "container": ["tote", 0], "orientation": "xy", "at": [0, 1]},
    ]})
    verdicts = {}
    for support in ({"rule": "none"}, {"rule": "center"}, {"rule": "corners"},
                    {"rule": "base-fraction", "min_fraction": 0.5}, {"rule": "base-fraction", "min_fraction": 0.6}):
        inst = instance_from_dict({**base, "rules": {"support": support}})
        verdicts[support["rule"] + str(support.get("min_fraction", ""))] = check_plan(inst, plan).feasible
    assert verdicts == {"none": True, "center": True, "corners": False, "base-fraction0.5": True, "base-fraction0.6": False}


def test_corners_rule_does_not_let_a_box_bridge_boxes_it_merely_touches():
    # PROBLEM.md 4.6: a supporter that only meets the base along an edge is no supporter.
    doc = {
        "format": "stackproof/instance", "version": 1, "dim": 3,
        "boxes": [{"id": "p", "size": [2, 2, 1]}, {"id": "q", "size": [2, 2, 1]}, {"id": "lid", "size": [2, 2, 1]}],
        "containers": [{"id": "cage", "size": [4, 2, None]}],
        "rules": {"support": {"rule": "corners"}},
    }
    inst = instance_from_dict(doc)
    bridged = plan_from_dict({"format": "stackproof/plan", "version": 1, "moves": [
        {"box": "p", "container": ["cage", 0], "orientation": "xyz", "at": [0, 0, 0]},
        {"box": "q", "container": ["cage", 0], "orientation": "xyz", "at": [2, 0, 0]},
        {"box": "lid", "container": ["cage", 0], "orientation": "xyz", "at": [1, 0, 1]},
    ]})
    assert check_plan(inst, bridged).feasible
    edge_only = replace(bridged, moves=bridged.moves[:1] + (Move("lid", ("cage", 0), "xyz", (2, 0, 1)),))
    report = check_plan(inst, edge_only)
    assert "support" in rules_of(report)


def test_loading_from_above_blocks_sliding_under_an_overhang_but_rule_any_allows_it():
    doc = {
        "format": "stackproof/instance", "version": 1, "dim": 2,
        "boxes": [{"id": "post", "size": [1, 2]}, {"id": "shelf", "size": [3, 1]}, {"id": "under", "size": [2, 1]}],
        "containers": [{"id": "bay", "size": [3, 4]}],
        "rules": {"support": {"rule": "none"}},
    }
    plan = plan_from_dict({"format": "stackproof/plan", "version": 1, "moves": [
        {"box": "post", "container": ["bay", 0], "orientation": "xy", "at": [0, 0]},
        {"box": "shelf", "container": ["bay", 0], "orientation": "xy", "at": [0, 2]},
        {"box": "under", "container": ["bay", 0], "orientation": "xy", "at": [1, 0]},
    ]})
    assert [v.rule for v in check_plan(instance_from_dict(doc), plan).violations] == ["loading"]
    doc["rules"]["loading"] = "any"
    assert check_plan(instance_from_dict(doc), plan).feasible


def test_height_limit_containment_integer_positions_and_every_box_once():
    doc = copy.deepcopy(FORMATS_INSTANCE)
    doc["containers"][0]["size"] = [6, 4.5]
    doc["rules"]["integer_positions"] = True
    inst = instance_from_dict(doc)
    pdoc = copy.deepcopy(FORMATS_PLAN)
    pdoc["moves"][2]["at"] = [3.5, 1]          # not an integer, and sticks out at 6.5
    pdoc["moves"].append(copy.deepcopy(pdoc["moves"][0]))   # crate-c again
    report = check_plan(inst, plan_from_dict(pdoc))
    assert {"height-limit", "integer-position", "containment", "repeated-box"} <= rules_of(report)
    missing = check_plan(inst, replace(plan_from_dict(FORMATS_PLAN), moves=plan_from_dict(FORMATS_PLAN).moves[:2]))
    assert [(v.move, v.box, v.rule) for v in missing.violations if v.rule == "missing-box"] == [(None, "crate-b", "missing-box")]


def test_objectives_and_metrics_on_two_containers():
    doc = {
        "format": "stackproof/instance", "version": 1, "dim": 2,
        "boxes": [{"id": "a", "size": [2, 3]}, {"id": "b", "size": [2, 1]}],
        "containers": [{"id": "cage", "size": [2, 4], "count": 2}],
        "rules": {"support": {"rule": "none"}},
    }
    plan = plan_from_dict({"format": "stackproof/plan", "version": 1, "moves": [
        {"box": "a", "container": ["cage", 0], "orientation": "xy", "at": [0, 0]},
        {"box": "b", "container": ["cage", 1], "orientation": "xy", "at": [0, 0]},
    ]})
    values = {}
    for kind in ("height", "height-sum", "bins"):
        values[kind] = check_plan(instance_from_dict({**doc, "objective": {"minimise": kind}}), plan).objective
    assert values == {"height": 3, "height-sum": 4, "bins": 2}
    metrics = check_plan(instance_from_dict(doc), plan).metrics
    assert metrics["fill_ratio"] == pytest.approx(1.0)
    assert metrics["containers_used"] == 2


# ------------------------------------------------------------------ properties on random plans

def planned(inst):
    plan = drop_plan(inst)
    assume(plan is not None)
    return plan


@PROPERTY
@given(resting_instances())
def test_drop_plans_pass_the_checker(inst):
    report = check_plan(inst, planned(inst))
    assert report.violations == []
    expected = max(report.heights.values()) if inst.objective.minimise == "height" else sum(report.heights.values())
    assert report.objective == expected


@PROPERTY
@given(resting_instances(), st.data())
def test_moving_a_box_onto_an_earlier_one_is_an_overlap(inst, data):
    plan = planned(inst)
    pairs = [(i, k) for k in range(len(plan.moves)) for i in range(k) if plan.moves[i].container == plan.moves[k].container]
    assume(pairs)
    i, k = data.draw(st.sampled_from(pairs))
    moves = list(plan.moves)
    moves[k] = replace(moves[k], at=moves[i].at)
    report = check_plan(inst, replace(plan, moves=tuple(moves)))
    assert any(v.rule == "overlap" and v.move == k for v in report.violations)


@PROPERTY
@given(resting_instances(), st.data())
def test_moving_a_box_before_one_resting_on_it_breaks_lift_order(inst, data):
    plan = planned(inst)
    graph = precedence_graph(inst)
    lifts = [(j, i) for j, i, kind in graph.edges(data="kind") if kind == "lift"]
    assume(lifts)
    j, i = data.draw(st.sampled_from(sorted(lifts)))
    order = [m.box for m in plan.moves]
    moves = list(plan.moves)
    ki = order.index(i)
    moved = moves.pop(ki)
    moves.insert(0, moved)
    report = check_plan(inst, replace(plan, moves=tuple(moves)))
    assert any(v.rule == "lift-order" and v.box == i and v.move == 0 for v in report.violations)


@PROPERTY
@given(resting_instances(access="side-face"), st.data())
def test_tipping_with_every_needed_face_blocked_is_rejected(inst, data):
    plan = planned(inst)
    graph = precedence_graph(inst)
    gone: set[str] = set()
    candidates = []
    for k, m in enumerate(plan.moves):
        box = inst.box(m.box)
        for o in box.orientations:
            g = grip_needed(o)
            if g is not None and not grip_free(graph, m.box, g, gone):
                candidates.append((k, o))
        gone.add(m.box)
    assume(candidates)
    k, o = data.draw(st.sampled_from(candidates))
    moves = list(plan.moves)
    moves[k] = replace(moves[k], orientation=o, grip=None)
    report = check_plan(inst, replace(plan, moves=tuple(moves)))
    assert any(v.rule == "side-access" and v.move == k for v in report.violations)


@PROPERTY
@given(resting_instances(support={"rule": "center"}), st.data())
def test_lifting_a_box_off_its_support_is_rejected(inst, data):
    plan = planned(inst)
    k = data.draw(st.integers(0, len(plan.moves) - 1))
    moves = list(plan.moves)
    at = moves[k].at
    moves[k] = replace(moves[k], at=at[:-1] + (at[-1] + 0.5,))
    report = check_plan(inst, replace(plan, moves=tuple(moves)))
    assert any(v.rule == "support" and v.move == k for v in report.violations)


@PROPERTY
@given(resting_instances())
def test_a_lower_height_limit_than_the_plan_reaches_is_rejected(inst):
    plan = planned(inst)
    height = max(check_plan(inst, plan).heights.values())
    capped = replace(inst, containers=tuple(ContainerType(c.id, c.size[:-1] + (height - 0.5,), c.count) for c in inst.containers))
    assert "height-limit" in rules_of(check_plan(capped, plan))


@PROPERTY
@given(resting_instances(), st.data())
def test_wrong_target_and_repeated_box_are_rejected(inst, data):
    plan = planned(inst)
    k = data.draw(st.integers(0, len(plan.moves) - 1))
    moves = list(plan.moves)
    box = inst.box(moves[k].box)
    retargeted = replace(inst, boxes=tuple(replace(b, target="elsewhere") if b.id == box.id else b for b in inst.boxes))
    assert any(v.rule == "target" and v.move == k for v in check_plan(retargeted, plan).violations)
    repeated = replace(plan, moves=tuple(moves) + (moves[k],))
    assert any(v.rule == "repeated-box" and v.move == len(moves) for v in check_plan(inst, repeated).violations)


# ------------------------------------------------------------------ outside reference: shapely

@settings(max_examples=200, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 6), st.integers(1, 4)), min_size=1, max_size=5),
       st.integers(0, 6), st.integers(1, 5))
def test_supported_length_matches_shapely_2d(tops, x, w):
    """2D supported length of a base on several supporters, cross-checked with shapely's union length."""
    shapely = pytest.importorskip("shapely")
    from shapely.geometry import LineString
    from shapely.ops import unary_union

    box = Placed("box", (x, 2), (w, 1))
    sup = [Placed(f"s{i}", (a, 1), (l, 1)) for i, (a, l) in enumerate(tops)]
    found = supporters(box, sup, 1e-9)
    ours = supported_measure(box, found)
    base = LineString([(x, 0), (x + w, 0)])
    pieces = [LineString([(s.lo(0), 0), (s.hi(0), 0)]).intersection(base) for s in sup]
    theirs = unary_union(pieces).length if pieces else 0.0
    assert ours == pytest.approx(theirs, abs=1e-9)


@settings(max_examples=200, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 5), st.integers(0, 5), st.integers(1, 3), st.integers(1, 3)), min_size=1, max_size=4),
       st.integers(0, 5), st.integers(0, 5), st.integers(1, 4), st.integers(1, 4))
def test_supported_area_matches_shapely_3d(tops, x, y, w, d):
    """3D supported area (union of supporter tops under a base) cross-checked with shapely polygons."""
    pytest.importorskip("shapely")
    from shapely.geometry import box as rect
    from shapely.ops import unary_union

    base = Placed("box", (x, y, 1), (w, d, 1))
    sup = [Placed(f"s{i}", (a, b, 0), (l, m, 1)) for i, (a, b, l, m) in enumerate(tops)]
    ours = supported_measure(base, supporters(base, sup, 1e-9))
    theirs = unary_union([rect(s.lo(0), s.lo(1), s.hi(0), s.hi(1)) for s in sup]).intersection(rect(x, y, x + w, y + d)).area
    assert ours == pytest.approx(theirs, abs=1e-9)


@settings(max_examples=300, deadline=None)
@given(st.tuples(st.integers(0, 5), st.integers(0, 5), st.integers(1, 4), st.integers(1, 4)),
       st.tuples(st.integers(0, 5), st.integers(0, 5), st.integers(1, 4), st.integers(1, 4)))
def test_overlap_matches_shapely_2d(a, b):
    """Positive-area overlap of two rectangles, cross-checked with shapely's intersection area."""
    pytest.importorskip("shapely")
    from shapely.geometry import box as rect

    from instances.geometry import volumes_overlap

    pa, pb = Placed("a", a[:2], a[2:]), Placed("b", b[:2], b[2:])
    theirs = rect(a[0], a[1], a[0] + a[2], a[1] + a[3]).intersection(rect(b[0], b[1], b[0] + b[2], b[1] + b[3])).area
    assert volumes_overlap(pa, pb, 1e-9) == (theirs > 1e-12)


def test_upright_orientations_are_the_turns_about_the_vertical_axis():
    # common practice (and PROBLEM.md section 2): 2 orientations in 2D, 6 in 3D; upright = turn about vertical.
    from instances.model import all_orientations

    assert len(all_orientations(2)) == 2 and len(all_orientations(3)) == 6
    assert [o for o in all_orientations(3) if is_upright(o)] == ["xyz", "yxz"]
    assert {o: grip_needed(o) for o in all_orientations(3) if not is_upright(o)} == {
        "xzy": "front-back", "yzx": "left-right", "zxy": "front-back", "zyx": "left-right"}
