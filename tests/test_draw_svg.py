"""The 2D picture (instances.draw.elevation rendered by instances.draw.svg).

Geometry of the drawn boxes is checked with shapely (an outside geometry library): one scale
for every panel, no overlaps where the checker found none, areas preserved.
"""
from __future__ import annotations

import copy
import xml.etree.ElementTree as ET

import networkx as nx
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from shapely.geometry import Polygon
from shapely.ops import unary_union

from instances.checker import check_plan
from instances.draw import render, replay, scene
from instances.draw.svg import to_svg
from instances.drop import drop_plan
from instances.generate import random_instance
from instances.io import instance_from_dict, plan_from_dict, read_instance, read_plan
from instances.demo import demo_instance_path, demo_plan_path
from instances.precedence import lift_graph, precedence_graph
from tests.worked_examples import FORMATS_INSTANCE, FORMATS_PLAN

NS = "{http://www.w3.org/2000/svg}"


def parse(svg_text: str) -> ET.Element:
    return ET.fromstring(svg_text.encode("utf-8"))


def groups(root: ET.Element, cls: str, **attrs: str) -> list[ET.Element]:
    """Every <g> whose class is `cls` and whose data-* attributes match `attrs`."""
    out = []
    for g in root.iter(NS + "g"):
        if g.get("class") != cls:
            continue
        if all(g.get("data-" + k.replace("_", "-")) == v for k, v in attrs.items()):
            out.append(g)
    return out


def body(g: ET.Element) -> Polygon:
    """The box outline of a box group as a shapely polygon (pixels)."""
    polys = [p for p in g.findall(NS + "polygon") if p.get("class") == "body"]
    assert len(polys) == 1, "a box group holds exactly one body"
    pts = [tuple(map(float, xy.split(","))) for xy in polys[0].get("points").split()]
    return Polygon(pts)


def worked():
    return instance_from_dict(copy.deepcopy(FORMATS_INSTANCE)), plan_from_dict(copy.deepcopy(FORMATS_PLAN))


def svg_of(inst, plan=None, color_by="destination"):
    return parse(render(inst, plan, "svg", color_by).decode("utf-8"))


def test_one_shape_per_box_and_side_worked_example():
    inst, plan = worked()
    root = svg_of(inst, plan)
    for b in inst.boxes:
        assert len(groups(root, "box", side="source", box=b.id)) == 1
        assert len(groups(root, "box", side="target", box=b.id)) == 1
    assert len(groups(root, "box")) == 2 * len(inst.boxes)
    steps = {g.get("data-box"): int(g.get("data-step")) for g in groups(root, "box", side="target")}
    assert steps == {m.box: k + 1 for k, m in enumerate(plan.moves)}


def test_one_scale_and_positions_follow_the_world():
    """Every drawn box has area scale^2 * its area, and positions map by one affine map per panel."""
    inst, plan = read_instance(demo_instance_path()), read_plan(demo_plan_path())
    root = svg_of(inst, plan)
    src = {g.get("data-box"): body(g) for g in groups(root, "box", side="source")}
    dst = {g.get("data-box"): body(g) for g in groups(root, "box", side="target")}
    ref = inst.boxes[0]
    scale = (src[ref.id].area / ref.volume) ** 0.5
    for b in inst.boxes:
        assert src[b.id].area == pytest.approx(scale**2 * b.volume, rel=1e-3)
        assert dst[b.id].area == pytest.approx(scale**2 * b.volume, rel=1e-3)
        # source: x grows to the right, y (world) grows upwards (pixel y downwards)
        minx, _, _, maxy = src[b.id].bounds
        rminx, _, _, rmaxy = src[ref.id].bounds
        assert minx - rminx == pytest.approx((b.at[0] - ref.at[0]) * scale, abs=0.05)
        assert rmaxy - maxy == pytest.approx((b.at[1] - ref.at[1]) * scale, abs=0.05)
    # target: the same map within one container
    moves = {m.box: m for m in plan.moves}
    for cont in {m.container for m in plan.moves}:
        ids = [m.box for m in plan.moves if m.container == cont]
        r = ids[0]
        for i in ids:
            assert dst[i].bounds[0] - dst[r].bounds[0] == pytest.approx((moves[i].at[0] - moves[r].at[0]) * scale, abs=0.05)
            assert dst[r].bounds[3] - dst[i].bounds[3] == pytest.approx((moves[i].at[1] - moves[r].at[1]) * scale, abs=0.05)


def test_feasible_packing_draws_without_overlap_and_keeps_area():
    inst, plan = read_instance(demo_instance_path()), read_plan(demo_plan_path())
    assert check_plan(inst, plan).feasible
    root = svg_of(inst, plan)
    for side in ("source", "target"):
        polys = [body(g) for g in groups(root, "box", side=side)]
        for a in range(len(polys)):
            for b in range(a + 1, len(polys)):
                assert polys[a].intersection(polys[b]).area < 1e-6
        assert unary_union(polys).area == pytest.approx(sum(p.area for p in polys), rel=1e-9)


def test_published_perfect_packing_drawn_area(published_dir):
    """Hopper & Turton (2001), EJOR 128(1), Table 1, category C1: a perfect packing, item area
    20 x 20 = 400 with optimum height 20. The picture of a checked plan keeps that area."""
    from benchmarks.published import load_published

    entry = load_published(published_dir, ["C1_1"])[0]
    inst = entry.instance
    assert sum(b.volume for b in inst.boxes) == 400
    plan = drop_plan(inst)
    assert plan is not None
    report = check_plan(inst, plan)
    assert report.feasible
    root = svg_of(inst, plan)
    polys = [body(g) for g in groups(root, "box", side="target")]
    assert len(polys) == len(inst.boxes) == 16
    marks = groups(root, "height-mark")
    assert len(marks) == 1
    dy = [float(v) for v in marks[0].get("data-dy").split()]
    assert len(dy) == len(plan.moves) + 1 and dy[-1] == 0  # drawn at the final height
    scale = dy[0] / report.objective  # the floor lies `objective` units below
    assert unary_union(polys).area == pytest.approx(400 * scale**2, rel=1e-3)
    assert report.objective >= 20  # never below the published optimum


def test_edges_match_the_precedence_graph():
    """Lift edges drawn = the transitive reduction (networkx) of the lift edges; side edges all drawn."""
    inst, plan = read_instance(demo_instance_path()), read_plan(demo_plan_path())
    g = precedence_graph(inst)
    root = svg_of(inst, plan)
    lifts = {(e.get("data-from"), e.get("data-to")) for e in groups(root, "edge", kind="lift")}
    assert lifts == set(nx.transitive_reduction(lift_graph(g)).edges)
    sides = {(e.get("data-from"), e.get("data-to"), e.get("data-kind")) for e in groups(root, "edge") if e.get("data-kind") != "lift"}
    assert sides == {(j, i, k) for j, i, k in g.edges(data="kind") if k != "lift"}
    assert sides, "the demo has side edges"
    # distinguishable without colour: lift solid with a filled head, side dashed with an open head
    for e in groups(root, "edge"):
        line = [ln for ln in e.findall(NS + "line") if ln.get("class") in ("lift", "side")][0]
        if e.get("data-kind") == "lift":
            assert line.get("stroke-dasharray") is None and "solid" in line.get("marker-end")
        else:
            assert line.get("stroke-dasharray") and "open" in line.get("marker-end")


def test_walls_and_tips_are_marked():
    inst, plan = read_instance(demo_instance_path()), read_plan(demo_plan_path())
    g = precedence_graph(inst)
    root = svg_of(inst, plan)
    walls = sum(len(f) for _, f in g.nodes(data="wall_blocked"))
    drawn = [ln for grp in groups(root, "box", side="source") for ln in grp.findall(NS + "line") if ln.get("class") == "wall-block"]
    assert walls > 0 and len(drawn) == walls
    tips = check_plan(inst, plan).tips
    for side in ("source", "target"):
        marks = [p for grp in groups(root, "box", side=side) for p in grp.findall(NS + "polygon") if p.get("class") == "tip-mark"]
        assert len(marks) == tips > 0


def _fill(g: ET.Element) -> str:
    return [p for p in g.findall(NS + "polygon") if p.get("class") == "body"][0].get("fill")


def test_colour_by_destination_and_by_step():
    inst, plan = read_instance(demo_instance_path()), read_plan(demo_plan_path())
    root = svg_of(inst, plan, "destination")
    where = {m.box: m.container for m in plan.moves}
    fills = {g.get("data-box"): _fill(g) for g in groups(root, "box", side="target")}
    for a in fills:
        for b in fills:
            assert (fills[a] == fills[b]) == (where[a] == where[b])
    root = svg_of(inst, plan, "step")
    fills = [_fill(g) for g in sorted(groups(root, "box", side="target"), key=lambda g: int(g.get("data-step")))]
    assert len(set(fills)) == len(fills)
    with pytest.raises(ValueError):
        render(inst, plan, "svg", "rainbow")


def test_labels_fit_or_hide_on_a_large_instance():
    inst = random_instance(2, 60, 3)
    plan = drop_plan(inst)
    assert plan is not None
    root = svg_of(inst, plan)
    shown = 0
    for g in groups(root, "label"):
        for t in g.findall(NS + "text"):
            size = float(t.get("font-size"))
            assert size >= 7.0, "labels below 7 px are hidden, not shrunk further"
            shown += 1
    assert shown < 2 * 2 * len(inst.boxes), "some labels of the smallest boxes are hidden"
    # a label never runs wider than its box (0.6 em per glyph, common practice estimate)
    bodies = {(g.get("data-side"), g.get("data-box")): body(g) for g in groups(root, "box")}
    for g in groups(root, "label"):
        box = bodies[(g.get("data-side"), g.get("data-box"))]
        for t in g.findall(NS + "text"):
            width = 0.6 * float(t.get("font-size")) * len(t.text)
            assert width <= box.bounds[2] - box.bounds[0] + 0.5


def test_infeasible_plan_marks_the_move_and_lists_the_violation():
    inst, plan = worked()
    bad = copy.deepcopy(FORMATS_PLAN)
    bad["moves"][2]["at"] = [1, 1]  # crate-b now overlaps crate-a
    plan = plan_from_dict(bad)
    report = check_plan(inst, plan)
    assert not report.feasible
    root = svg_of(inst, plan)
    marked = {g.get("data-box") for g in groups(root, "box", side="target") if g.get("data-bad") == "1"}
    assert marked == {v.box for v in report.violations if v.move is not None}
    texts = " ".join(t.text or "" for t in root.iter(NS + "text"))
    assert "Infeasible plan" in texts and "move 3 (crate-b): overlap" in texts


def test_without_a_plan_the_instance_and_its_graph():
    inst, _ = worked()
    root = svg_of(inst)
    assert len(groups(root, "box", side="source")) == len(inst.boxes)
    assert not groups(root, "box", side="target")
    assert len(groups(root, "edge")) == precedence_graph(inst).number_of_edges()  # no lift chains here
    assert {g.get("data-panel") for g in groups(root, "panel")} == {"source", "van-north#1"}


def test_no_source_boxes_laid_out_apart():
    inst = random_instance(2, 12, 5)
    doc_free = instance_from_dict({
        "format": "stackproof/instance", "version": 1, "dim": 2,
        "boxes": [{"id": b.id, "size": list(b.size)} for b in inst.boxes],
        "containers": [{"id": "strip", "size": [30, None]}],
        "rules": {"support": {"rule": "none"}, "loading": "any"},
    })
    root = svg_of(doc_free)
    polys = [body(g) for g in groups(root, "box", side="source")]
    assert len(polys) == 12
    assert unary_union(polys).area == pytest.approx(sum(p.area for p in polys), rel=1e-9)
    assert not groups(root, "edge")


def test_text_is_escaped():
    doc = copy.deepcopy(FORMATS_INSTANCE)
    doc["name"] = "<bay & \"dock\">"
    inst = instance_from_dict(doc)
    text = to_svg(scene(inst))
    root = parse(text)  # would raise on broken markup
    assert root.find(NS + "title").text == "<bay & \"dock\">"


def test_replay_records_tips_and_faces():
    inst, plan = worked()
    rp = replay(inst, plan)
    tip = rp.steps[1]
    assert tip.tipped and tip.grip == "left-right"
    assert tip.faces == {"left": "wall", "right": "free"}  # FORMATS.md: left against the wall, right free
    assert [s.heights[("van-north", 0)] for s in rp.steps] == [1, 5, 5]


def test_malformed_plan_still_draws_and_lists_every_violation():
    """The library draws whatever a solver hands it: unknown box or container, a box moved twice,
    a 3D orientation in 2D. The checker's findings appear, nothing raises."""
    from instances.model import Move, Plan

    inst, _ = worked()
    plan = Plan("x", (Move("crate-c", ("van-north", 0), "xy", (0, 0)), Move("crate-c", ("van-north", 0), "xy", (0, 1)),
                      Move("ghost", ("van-north", 0), "xy", (0, 3)), Move("crate-a", ("lorry", 0), "yx", (0, 0)),
                      Move("crate-b", ("van-north", 3), "xyz", (0, 0, 0))))
    report = check_plan(inst, plan)
    root = svg_of(inst, plan)
    texts = [t.text or "" for t in root.iter(NS + "text") if t.get("class") == "violation-text"]
    lines = [t for t in texts if t.startswith(("move ", "plan ("))]
    assert len(lines) == len(report.violations)
    assert {g.get("data-panel") for g in groups(root, "panel")} >= {"lorry#0"}
    for fmt in ("png", "html"):
        assert len(render(inst, plan, fmt)) > 1000


def test_published_1d_bins_drawn_one_panel_per_bin_used(published_dir):
    """Falkenauer (1996), J. Heuristics 2:5-30, "triplets" t60: built with a known optimum of
    n/3 = 20 bins (the published folder's manifest). A checked plan uses at least that many, and
    the picture has one panel per bin used; the flat unit-height data get a stretched,
    labelled vertical scale."""
    from benchmarks.published import load_published

    entry = load_published(published_dir, ["t60_00"])[0]
    inst = entry.instance
    plan = drop_plan(inst)
    report = check_plan(inst, plan)
    assert report.feasible and report.objective >= inst.known.optimum == 20
    root = svg_of(inst, plan)
    panels = {g.get("data-panel") for g in groups(root, "panel")}
    assert len(panels) == report.objective
    assert len(groups(root, "box", side="target")) == 60
    assert any("vertical scale stretched" in (t.text or "").lower() for t in root.iter(NS + "text"))


@settings(max_examples=12, deadline=None)
@given(dim=st.sampled_from([2, 3]), n=st.integers(2, 12), seed=st.integers(0, 10_000))
def test_any_generated_plan_draws_each_box_once_per_side(dim, n, seed):
    """Generated instances with greedy plans: one body per box and side; in 2D, where the
    checker accepts the plan, no two drawn boxes of a container overlap (shapely)."""
    inst = random_instance(dim, n, seed)
    plan = drop_plan(inst)
    if plan is None:
        return
    root = svg_of(inst, plan)
    for b in inst.boxes:
        assert len(groups(root, "box", side="source", box=b.id)) == 1
        assert len(groups(root, "box", side="target", box=b.id)) == 1
    if dim == 2 and check_plan(inst, plan).feasible:
        by_container: dict[str, list[Polygon]] = {}
        for g in groups(root, "box", side="target"):
            by_container.setdefault(g.get("data-container"), []).append(body(g))
        for polys in by_container.values():
            assert unary_union(polys).area == pytest.approx(sum(p.area for p in polys), rel=1e-6)
