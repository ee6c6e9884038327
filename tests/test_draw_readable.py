"""Readability of the pictures, checked as geometry (not pixels).

Text widths are measured independently of the drawing code, with Pillow's FreeType renderer on
the same DejaVu Sans file the pictures name first; shapes are compared with shapely. Checked:
a title on every picture, labels inside their boxes (or left off), no arrow through a label,
tip marks big enough to see, no '#' numbering, boxes never slivers (the canvas grows and tall
containers are cut into parts), every move in the 3D move table, height marks in exactly one
part of a cut container.
"""
from __future__ import annotations

import math
import re
import statistics
import xml.etree.ElementTree as ET
from functools import lru_cache

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from shapely.geometry import LineString, Polygon, box as shapely_box
from shapely.ops import unary_union

from instances.checker import check_plan
from instances.demo import demo_instance_path, demo_plan_path
from instances.draw import render
from instances.drop import drop_plan
from instances.generate import random_instance
from instances.io import read_instance, read_plan
from instances.model import Result
from tests.test_draw_svg import NS, body, groups, parse


@lru_cache(maxsize=4)
def _font(bold: bool, size: int = 100):
    from matplotlib import font_manager
    from PIL import ImageFont

    path = font_manager.findfont(font_manager.FontProperties(family="DejaVu Sans", weight="bold" if bold else "normal"))
    assert "DejaVuSans" in path
    return ImageFont.truetype(path, size)


def text_rect(t: ET.Element) -> Polygon:
    """The pixel box of an SVG <text> (centred vertically, as `dominant-baseline: central`)."""
    size = float(t.get("font-size"))
    width = _font(t.get("font-weight") == "bold").getlength(t.text or "") / 100 * size
    height = size * 1.0  # cap height to descender of DejaVu Sans is under 1 em
    x, y = float(t.get("x")), float(t.get("y"))
    anchor = t.get("text-anchor")
    x0 = {"start": x, "middle": x - width / 2, "end": x - width}[anchor]
    rect = shapely_box(x0, y - height / 2, x0 + width, y + height / 2)
    turn = t.get("transform")
    if turn:
        angle, cx, cy = map(float, re.match(r"rotate\(([-\d.]+) ([-\d.]+) ([-\d.]+)\)", turn).groups())
        from shapely import affinity

        rect = affinity.rotate(rect, angle, origin=(cx, cy))
    return rect


def polygons(g: ET.Element, cls: str) -> list[Polygon]:
    return [Polygon([tuple(map(float, xy.split(","))) for xy in p.get("points").split()])
            for p in g.findall(NS + "polygon") if p.get("class") == cls]


def drawn(dim: int, n: int, seed: int, result=None):
    inst = random_instance(dim, n, seed)
    plan = drop_plan(inst)
    assert plan is not None and check_plan(inst, plan).feasible
    return inst, plan, parse(render(inst, plan, "svg", result=result).decode("utf-8"))


@pytest.fixture(scope="module")
def flat100():
    return drawn(2, 100, 1)


@pytest.fixture(scope="module")
def iso20():
    return drawn(3, 20, 1)


@pytest.fixture(scope="module")
def flat300():
    return drawn(2, 300, 1)


def test_every_picture_has_a_title_with_objective_and_status():
    inst, plan = read_instance(demo_instance_path()), read_plan(demo_plan_path())
    report = check_plan(inst, plan)
    claimed = Result(inst.name, "feasible", report.objective, report.objective - 1, 1 / report.objective)
    for fmt_plan, result in ((None, None), (plan, None), (plan, claimed)):
        root = parse(render(inst, fmt_plan, "svg", result=result).decode("utf-8"))
        title = [t.text for t in root.iter(NS + "text") if t.get("class") == "picture-title"]
        sub = " ".join(t.text for t in root.iter(NS + "text") if t.get("class") == "picture-subtitle")
        assert title == [inst.name]
        assert f"minimise {inst.objective.minimise}" in sub
        if fmt_plan is not None:
            assert f"= {report.objective:g}" in sub and "feasible" in sub
        if result is not None:
            assert "solver status feasible" in sub and f"bound {report.objective - 1:g}" in sub
            assert f"gap {100 / report.objective:.2f}%" in sub
    html = render(inst, plan, "html", result=claimed).decode("utf-8")
    assert f"<h1>{inst.name}</h1>" in html and "status feasible" in html and f"objective {report.objective:g}" in html


def labels_inside_and_clear(root: ET.Element) -> tuple[int, int]:
    """Assert each label's measured box lies inside its box's drawn shape (2D: the rectangle; 3D:
    the face it is written on; 1 px of slack for rounding) and that no arrow crosses one; return
    how many labels and arrows were checked."""
    shapes = {(g.get("data-side"), g.get("data-box")): polygons(g, "body") + polygons(g, "face") for g in groups(root, "box")}
    rects = []
    for g in groups(root, "label"):
        for t in g.findall(NS + "text"):
            rect = text_rect(t).buffer(-1.0)
            assert any(f.contains(rect) for f in shapes[(g.get("data-side"), g.get("data-box"))]), \
                f"label {t.text!r} of {g.get('data-box')} spills out of its box"
            assert float(t.get("font-size")) >= 7.0
            rects.append(rect)
    labels = unary_union(rects)
    arrows = 0
    for e in groups(root, "edge"):
        for ln in e.findall(NS + "line"):
            if ln.get("class") in ("lift", "side"):
                seg = LineString([(float(ln.get("x1")), float(ln.get("y1"))), (float(ln.get("x2")), float(ln.get("y2")))])
                assert not seg.intersects(labels), f"{e.get('data-kind')} arrow {e.get('data-from')}->{e.get('data-to')} crosses a label"
                arrows += 1
    return len(rects), arrows


@pytest.mark.parametrize("which", ["flat100", "iso20"])
def test_labels_inside_their_boxes_and_no_arrow_through_one(which, request):
    inst, _, root = request.getfixturevalue(which)
    labels, arrows = labels_inside_and_clear(root)
    assert labels > len(inst.boxes)  # most boxes are labelled
    assert arrows > 10


@pytest.mark.parametrize("which", ["flat100", "iso20"])
def test_tip_marks_are_big_enough_to_see(which, request):
    inst, plan, root = request.getfixturevalue(which)
    marks = 0
    for g in groups(root, "box"):
        for tri in polygons(g, "tip-mark"):
            shape = unary_union(polygons(g, "body") + polygons(g, "face"))
            pts = list(tri.exterior.coords)[:3]
            legs = sorted(math.dist(pts[k], pts[(k + 1) % 3]) for k in range(3))
            small = min(shape.bounds[2] - shape.bounds[0], shape.bounds[3] - shape.bounds[1])
            # the two legs along the box's edges are at least 7 px (or most of a tiny box) and the
            # mark covers at least a 5 x 5 px patch (area of a 7 px right triangle: 24.5)
            assert legs[1] >= min(7.0, small * 0.45) - 1e-6, legs
            assert tri.area >= min(20.0, shape.area * 0.1), tri.area
            marks += 1
    assert marks == 2 * check_plan(inst, plan).tips > 0


def test_no_hash_numbering_and_containers_named_by_index(flat100):
    inst, plan, root = flat100
    texts = [t.text or "" for t in root.iter(NS + "text")]
    assert not any("#" in t for t in texts)
    titles = {t.text for t in root.iter(NS + "text") if t.get("class") == "panel-title"}
    for m in plan.moves:
        assert any(t.startswith(f"{m.container[0]}[{m.container[1]}]") for t in titles)
    legend = " ".join(t.text for t in root.iter(NS + "text") if t.get("class") in ("legend", "legend-note"))
    assert "move number" in legend and "type[index]" in legend


def test_many_boxes_are_not_slivers_and_the_canvas_grows(flat300):
    """300 boxes: the median drawn box keeps its smallest side over 18 px; tall containers are cut
    into parts; each box still drawn exactly once per side; and the canvas is larger than for 20."""
    inst, plan, root = flat300
    small = drawn(2, 20, 1)[2]
    sides = [min(p.bounds[2] - p.bounds[0], p.bounds[3] - p.bounds[1]) for g in groups(root, "box") for p in [body(g)]]
    assert statistics.median(sides) >= 18.0
    titles = [t.text for t in root.iter(NS + "text") if t.get("class") == "panel-title"]
    assert any(re.search(r" \d+/\d+$", t) for t in titles), "tall containers are cut into parts"
    for b in inst.boxes:
        assert len(groups(root, "box", side="source", box=b.id)) == 1
        assert len(groups(root, "box", side="target", box=b.id)) == 1
    area = float(root.get("width")) * float(root.get("height"))
    assert area > 4 * float(small.get("width")) * float(small.get("height"))
    legend = " ".join(t.text for t in root.iter(NS + "text") if t.get("class") == "legend-note")
    assert "cut into parts" in legend
    unlabelled = sum(1 for g in groups(root, "label") if not g.findall(NS + "text"))
    if unlabelled:
        assert f"Labels left off {unlabelled} of" in legend


def test_height_mark_in_exactly_one_part_per_move(flat300):
    inst, plan, root = flat300
    by_container: dict[str, list[list[str]]] = {}
    finals: dict[str, int] = {}
    for g in groups(root, "height-mark"):
        by_container.setdefault(g.get("data-container"), []).append(g.get("data-dy").split())
        finals[g.get("data-container")] = finals.get(g.get("data-container"), 0) + (g.get("display") != "none")
    assert any(len(parts) > 1 for parts in by_container.values())
    for name, parts in by_container.items():
        assert finals[name] == 1, "the final height is drawn once"
        for k in range(len(plan.moves) + 1):
            assert sum(dy[k] != "-" for dy in parts) == 1, (name, k)


def test_3d_move_table_lists_every_move_in_order(iso20):
    inst, plan, root = iso20
    table = [g for g in root.iter(NS + "g") if g.get("class") == "move-table"]
    assert len(table) == 1
    rows = [t for t in table[0].iter(NS + "text") if t.get("class") == "table-row"]
    cells = 6
    assert len(rows) == cells * len(plan.moves)
    for k, m in enumerate(plan.moves):
        number, box, container = (rows[cells * k + c].text for c in range(3))
        assert number == str(k + 1) and box == m.box and container == f"{m.container[0]}[{m.container[1]}]"
    # the table sits beside or below the view, never over a box
    boxes = unary_union([body(g) for g in groups(root, "box")])
    for t in rows:
        assert not text_rect(t).intersects(boxes)


def test_page_titles_and_move_table_row_follow_the_slider(tmp_path):
    """In headless Chromium: the page's title names the instance, objective and status; at move k
    the move table marks row k and greys the later ones; a screenshot renders."""
    from PIL import Image

    from instances.draw import write_page
    from tests.test_draw_page import CHROMIUM, browser, dom_at

    if CHROMIUM is None:
        pytest.skip("no chromium binary found")
    inst = random_instance(3, 8, 3)
    plan = drop_plan(inst)
    report = check_plan(inst, plan)
    result = Result(inst.name, "optimal", report.objective, report.objective, 0.0)
    page = write_page(inst, plan, tmp_path / "p.html", result=result)
    d = dom_at(page, 3)
    title = [a for t, a in d.elements if t == "title"]
    assert title
    html_title = page.read_text(encoding="utf-8").split("<title>")[1].split("</title>")[0]
    assert inst.name in html_title and f"= {report.objective:g}" in html_title and "solver status optimal" in html_title
    rows = {a["data-row"]: a.get("class", "").split() for t, a in d.elements if t == "g" and "data-row" in a}
    assert len(rows) == len(plan.moves)
    assert "current" in rows["3"] and all("pending" in rows[str(k)] for k in range(4, len(plan.moves) + 1))
    assert not any("pending" in rows[str(k)] or "current" in rows[str(k)] for k in (1, 2))
    shot = tmp_path / "shot.png"
    browser(page.resolve().as_uri() + "#step=3", f"--screenshot={shot}", "--window-size=1400,1000")
    with Image.open(shot) as im:
        assert im.size == (1400, 1000)
        assert len(im.convert("L").resize((70, 50)).getcolors(maxcolors=4096) or ()) > 10  # not a blank page


@settings(max_examples=6, deadline=None)
@given(dim=st.sampled_from([2, 3]), n=st.integers(25, 45), seed=st.integers(0, 10_000))
def test_generated_loads_stay_readable(dim, n, seed):
    """Generated instances large enough to be cut into parts: each box drawn once per side, every
    label inside its box and clear of every arrow, ghosts never labelled."""
    inst = random_instance(dim, n, seed)
    plan = drop_plan(inst)
    if plan is None:
        return
    root = parse(render(inst, plan, "svg").decode("utf-8"))
    for b in inst.boxes:
        assert len(groups(root, "box", side="source", box=b.id)) == 1
        assert len(groups(root, "box", side="target", box=b.id)) == 1
    labels_inside_and_clear(root)
    for g in root.iter(NS + "g"):
        if g.get("class") == "ghost":
            assert not g.findall(NS + "text")


def test_page_shows_one_height_mark_per_container_in_a_cut_picture(tmp_path):
    """In headless Chromium, on a 2D load cut into parts: at move k each container's running
    height shows in exactly one part, with the height after move k."""
    from instances.draw import write_page
    from tests.test_draw_page import CHROMIUM, dom_at

    if CHROMIUM is None:
        pytest.skip("no chromium binary found")
    inst = random_instance(2, 60, 3)
    plan = drop_plan(inst)
    root = parse(render(inst, plan, "svg").decode("utf-8"))
    assert any(re.search(r" \d+/\d+$", t.text or "") for t in root.iter(NS + "text") if t.get("class") == "panel-title")
    page = write_page(inst, plan, tmp_path / "cut.html")
    k = len(plan.moves) // 2
    d = dom_at(page, k)
    heights: dict[str, float] = {}
    for m in plan.moves[:k]:
        key = f"{m.container[0]}#{m.container[1]}"
        ext = inst.box(m.box).extents(m.orientation)
        heights[key] = max(heights.get(key, 0.0), m.at[-1] + ext[-1])
    shown: dict[str, int] = {}
    for t, a in d.elements:
        if t == "g" and a.get("class") == "height-mark" and a.get("display") != "none":
            shown[a["data-container"]] = shown.get(a["data-container"], 0) + 1
            assert a["data-dy"].split()[k] != "-", "shown in the part that holds the height"
            assert float(a["data-h"].split()[k]) == pytest.approx(heights.get(a["data-container"], 0.0))
    containers = {f"{m.container[0]}#{m.container[1]}" for m in plan.moves}
    assert shown == {c: 1 for c in containers}


@pytest.mark.parametrize("which", ["flat100", "iso20"])
def test_bold_labels_are_move_numbers_and_most_boxes_show_theirs(which, request):
    """Every bold number on a box is that box's move number (from 1); in 3D a hidden top face moves
    it to the front face, so most packed boxes still show theirs."""
    inst, plan, root = request.getfixturevalue(which)
    numbered = 0
    for g in groups(root, "label", side="target"):
        bold = [t.text for t in g.findall(NS + "text") if t.get("font-weight") == "bold"]
        assert bold in ([], [g.get("data-step")])
        numbered += bool(bold)
    assert numbered >= 0.6 * len(plan.moves)
