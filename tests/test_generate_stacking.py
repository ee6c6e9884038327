"""Dropping boxes into a source (instances/generate/stacking.py).

Outside check: 2D drops are re-checked with shapely (no overlap, every box rests); the face
rules against the project's precedence graph, which is itself tested against the spec.
"""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from shapely.geometry import LineString, box as rect

from instances.model import Box, ContainerType, Instance, Rules, Source, all_orientations
from instances.precedence import precedence_graph
from instances.validate import source_problems
from instances.generate.stacking import Stack, source_floor

sizes2 = st.lists(st.tuples(st.integers(1, 5), st.integers(1, 4)), min_size=1, max_size=15)
sizes3 = st.lists(st.tuples(st.integers(1, 4), st.integers(1, 4), st.integers(1, 3)), min_size=1, max_size=12)


def _instance(stack, clearance=0):
    dim = len(stack.floor) + 1
    boxes = tuple(Box(f"b{k}", p.ext, all_orientations(dim), p.pos) for k, p in enumerate(stack.placed))
    return Instance(dim=dim, boxes=boxes, containers=(ContainerType("t", (9,) * (dim - 1) + (None,)),),
                    source=Source(stack.floor + (None,)), rules=Rules(side_clearance=clearance))


@settings(max_examples=40, deadline=None)
@given(sizes=sizes2, seed=st.integers(0, 2**32 - 1), flush=st.floats(0, 1))
def test_2d_drops_rest_by_shapely(sizes, seed, flush):
    rng = np.random.default_rng(seed)
    stack = Stack((6,))
    for s in sizes:
        assert stack.drop(rng, s, flush=flush) is not None
    polys = [rect(p.pos[0], p.pos[1], p.hi(0), p.top) for p in stack.placed]
    for i, a in enumerate(polys):
        assert rect(0, 0, 6, 1000).contains(a)
        assert all(a.intersection(b).area == 0 for b in polys[i + 1:])
        x0, y0, x1, _ = a.bounds
        if y0 > 0:
            base = LineString([(x0, y0), (x1, y0)])
            assert any(base.intersection(LineString([(b.bounds[0], b.bounds[3]), (b.bounds[2], b.bounds[3])])).length > 0
                       for b in polys if b is not a)


@settings(max_examples=30, deadline=None)
@given(sizes=sizes3, seed=st.integers(0, 2**32 - 1), flush=st.floats(0, 1))
def test_3d_drops_make_a_valid_source(sizes, seed, flush):
    rng = np.random.default_rng(seed)
    stack = Stack((5, 4))
    for s in sizes:
        assert stack.drop(rng, s, flush=flush) is not None
    assert source_problems(_instance(stack)) == []


def test_landing_heights_match_brute_force():
    rng = np.random.default_rng(1)
    stack = Stack((7, 5))
    for _ in range(12):
        stack.drop(rng, (int(rng.integers(1, 4)), int(rng.integers(1, 4)), int(rng.integers(1, 3))))
    land = stack.landing_heights((3, 2, 1))
    for x in range(5):
        for y in range(4):
            under = [p.top for p in stack.placed if p.pos[0] < x + 3 and x < p.hi(0) and p.pos[1] < y + 2 and y < p.hi(1)]
            assert land[x, y] == max(under, default=0)


@pytest.mark.parametrize("clearance", [0, 1])
@pytest.mark.parametrize("seed", range(6))
def test_keep_free_leaves_a_grip_face_free(seed, clearance):
    """The last box asks for a free left or right face: the precedence graph agrees it has one."""
    rng = np.random.default_rng(seed)
    stack = Stack((8,), clearance)
    for _ in range(10):
        stack.drop(rng, (int(rng.integers(1, 4)), int(rng.integers(1, 3))), flush=1.0)
    assert stack.drop(rng, (2, 2), flush=1.0, keep_free="left-right") is not None
    g = precedence_graph(_instance(stack, clearance))
    last = f"b{len(stack.placed) - 1}"
    kinds = {d["kind"] for _, _, d in g.in_edges(last, data=True)} | set(g.nodes[last]["wall_blocked"])
    assert not {"left", "right"} <= kinds


def test_keep_free_refuses_when_no_face_can_be_free():
    stack = Stack((4,))
    assert stack.drop(np.random.default_rng(0), (4, 1), keep_free="left-right") is None  # both walls touch
    assert stack.placed == []


def test_flush_one_makes_every_box_touch_something():
    rng = np.random.default_rng(3)
    stack = Stack((12, 9))
    for _ in range(25):
        s = (int(rng.integers(1, 4)), int(rng.integers(1, 4)), 1)
        pos = stack.drop(rng, s, flush=1.0)
        assert stack.is_flush(pos, s)


def test_source_floor_is_the_ratio_but_never_narrower_than_a_box():
    assert source_floor((10,), 1.5, [(3, 2)]) == (15,)
    assert source_floor((10, 4), 0.5, [(3, 7, 1)]) == (5, 7)
