"""The 3D picture (instances.draw.iso3d): isometric projection and back-to-front order.

The drawing order is checked against ray casting: for two boxes whose outlines overlap on
screen (shapely computes the overlap), a ray through a common point meets the nearer box
first, and that box must be drawn later.
"""
from __future__ import annotations

import math
import random

import pytest
from shapely.geometry import MultiPoint

from instances.draw import render
from instances.draw.iso3d import VIEW, depth_order, project
from instances.drop import drop_plan
from instances.generate import random_instance
from tests.test_draw_svg import NS, groups, parse


def test_isometric_axes():
    """Isometric projection (common practice, any descriptive-geometry text): the three edges at
    the corner nearest the viewer (+x, -y, +z here) project to equal lengths sqrt(2/3) and
    120 degrees apart; the view direction projects to a point."""
    axes = [project(e) for e in ((1, 0, 0), (0, -1, 0), (0, 0, 1))]
    for a in axes:
        assert math.hypot(*a) == pytest.approx(math.sqrt(2 / 3))
    for i in range(3):
        a, b = axes[i], axes[(i + 1) % 3]
        cos = (a[0] * b[0] + a[1] * b[1]) / (math.hypot(*a) * math.hypot(*b))
        assert cos == pytest.approx(-0.5)
    assert project(VIEW) == pytest.approx((0.0, 0.0))
    assert project((0, 0, 1))[1] > 0  # up is up


def _random_boxes(rng: random.Random, n_cells: int = 3) -> list[tuple[tuple, tuple]]:
    """Non-overlapping boxes: guillotine pieces of a cube, some dropped, some shrunk."""
    pieces = [((0.0, 0.0, 0.0), (6.0, 6.0, 6.0))]
    while len(pieces) < 14:
        lo, hi = pieces.pop(rng.randrange(len(pieces)))
        k = rng.randrange(3)
        if hi[k] - lo[k] < 1.0:
            pieces.append((lo, hi))
            continue
        cut = rng.uniform(lo[k] + 0.3, hi[k] - 0.3)
        a_hi, b_lo = list(hi), list(lo)
        a_hi[k] = b_lo[k] = cut
        pieces += [(lo, tuple(a_hi)), (tuple(b_lo), hi)]
    out = []
    for lo, hi in pieces:
        if rng.random() < 0.3:
            continue
        lo = tuple(l + (rng.uniform(0, 0.3) * (h - l) if rng.random() < 0.3 else 0) for l, h in zip(lo, hi))
        out.append((lo, hi))
    return out


def _outline(lo, hi):
    return MultiPoint([project((x, y, z)) for x in (lo[0], hi[0]) for y in (lo[1], hi[1]) for z in (lo[2], hi[2])]).convex_hull


def _nearest_hit(lo, hi, u, v) -> float:
    """Largest t at which the ray p0 + t * VIEW (through screen point (u, v)) is inside the box."""
    p0 = ((u * math.sqrt(2) - v * math.sqrt(6)) / 2, (u * math.sqrt(2) + v * math.sqrt(6)) / 2, 0.0)
    tmin, tmax = -math.inf, math.inf
    for k in range(3):
        a, b = (lo[k] - p0[k]) / VIEW[k], (hi[k] - p0[k]) / VIEW[k]
        tmin, tmax = max(tmin, min(a, b)), min(tmax, max(a, b))
    assert tmin <= tmax, "the common point lies inside both outlines"
    return tmax


@pytest.mark.parametrize("seed", range(25))
def test_depth_order_agrees_with_ray_casting(seed):
    boxes = _random_boxes(random.Random(seed))
    order = depth_order(boxes)
    assert sorted(order) == list(range(len(boxes)))
    rank = {b: r for r, b in enumerate(order)}
    checked = 0
    for a in range(len(boxes)):
        for b in range(a + 1, len(boxes)):
            common = _outline(*boxes[a]).intersection(_outline(*boxes[b]))
            if common.area < 1e-6:
                continue
            p = common.representative_point()
            ta, tb = _nearest_hit(*boxes[a], p.x, p.y), _nearest_hit(*boxes[b], p.x, p.y)
            front, back = (a, b) if ta > tb else (b, a)
            assert rank[front] > rank[back], f"box {front} is nearer the viewer but drawn first"
            checked += 1
    assert checked > 0


def test_3d_picture_has_one_shape_per_box_and_side():
    inst = random_instance(3, 10, 2)
    plan = drop_plan(inst)
    assert plan is not None
    root = parse(render(inst, plan, "svg").decode("utf-8"))
    for b in inst.boxes:
        for side in ("source", "target"):
            found = groups(root, "box", side=side, box=b.id)
            assert len(found) == 1
            faces = [p for p in found[0].findall(NS + "polygon") if p.get("class") in ("body", "face")]
            assert len(faces) == 3  # front, right, top: shaded differently
            assert len({p.get("fill") for p in faces}) == 3
    # step numbers sit on top faces: every shown "#k" label belongs to the box moved at k
    for g in groups(root, "label", side="target"):
        for t in g.findall(NS + "text"):
            if t.text.startswith("#"):
                assert t.text == "#" + g.get("data-step")


def test_3d_without_plan_and_without_source():
    inst = random_instance(3, 6, 4)
    root = parse(render(inst, None, "svg").decode("utf-8"))
    assert len(groups(root, "box", side="source")) == 6
    assert groups(root, "edge") or inst.source is None
