"""Cutting containers into boxes (instances/generate/cutting.py).

Outside checks: the 2D tilings and the loading order are re-checked with shapely (areas,
overlaps, covered base length); the order against a networkx DAG of the "carries" relation.
"""
from __future__ import annotations

import networkx as nx
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from shapely.geometry import LineString, box as rect
from shapely.ops import unary_union

from instances.generate.cutting import cut_container, loading_order, supports


def _poly(piece):
    (x, y), (w, h) = piece
    return rect(x, y, x + w, y + h)


def _is_guillotine(rects):
    """Independent recogniser: some straight cut splits the set in two, each again guillotine."""
    if len(rects) == 1:
        return True
    for axis in (0, 1):
        lo = min(r[axis] for r in rects)
        hi = max(r[axis + 2] for r in rects)
        for c in sorted({r[axis] for r in rects} - {lo}):
            left = [r for r in rects if r[axis + 2] <= c]
            right = [r for r in rects if r[axis] >= c]
            if left and right and len(left) + len(right) == len(rects) and c < hi:
                if _is_guillotine(left) and _is_guillotine(right):
                    return True
    return False


def _bounds(piece):
    (x, y), (w, h) = piece
    return (x, y, x + w, y + h)


@settings(max_examples=40, deadline=None)
@given(w=st.integers(1, 12), h=st.integers(1, 12), n=st.integers(1, 30), seed=st.integers(0, 2**32 - 1), pin=st.floats(0, 1))
def test_2d_cuts_tile_the_container_exactly(w, h, n, seed, pin):
    n = min(n, w * h)
    pieces = cut_container(np.random.default_rng(seed), (w, h), n, pinwheel=pin)
    assert len(pieces) == n
    polys = [_poly(p) for p in pieces]
    assert sum(p.area for p in polys) == w * h
    assert unary_union(polys).equals(rect(0, 0, w, h))
    for i in range(n):
        for j in range(i + 1, n):
            assert polys[i].intersection(polys[j]).area == 0
    assert all(isinstance(v, int) for p in pieces for v in p[0] + p[1])


@settings(max_examples=20, deadline=None)
@given(ext=st.tuples(st.integers(1, 6), st.integers(1, 6), st.integers(1, 6)), n=st.integers(1, 40), seed=st.integers(0, 2**32 - 1))
def test_3d_cuts_cover_every_cell_once(ext, n, seed):
    n = min(n, int(np.prod(ext)))
    pieces = cut_container(np.random.default_rng(seed), ext, n, pinwheel=0.5)
    cells = np.zeros(ext, dtype=int)
    for pos, e in pieces:
        cells[tuple(slice(p, p + d) for p, d in zip(pos, e))] += 1
    assert len(pieces) == n and (cells == 1).all()


@settings(max_examples=30, deadline=None)
@given(n=st.integers(2, 15), seed=st.integers(0, 2**32 - 1))
def test_without_pinwheels_every_pattern_is_guillotine(n, seed):
    pieces = cut_container(np.random.default_rng(seed), (9, 7), n, pinwheel=0.0)
    assert _is_guillotine([_bounds(p) for p in pieces])


@pytest.mark.parametrize("seed", range(10))
def test_a_pinwheel_is_not_guillotine(seed):
    pieces = cut_container(np.random.default_rng(seed), (8, 6), 5, pinwheel=1.0)
    assert not _is_guillotine([_bounds(p) for p in pieces])


def test_recogniser_sanity():
    """The test's own recogniser: a two-column split is guillotine (a hand-made case)."""
    assert _is_guillotine([(0, 0, 2, 3), (2, 0, 4, 1), (2, 1, 4, 3)])


@settings(max_examples=30, deadline=None)
@given(n=st.integers(1, 20), seed=st.integers(0, 2**32 - 1), pin=st.floats(0, 1))
def test_loading_order_is_from_above_with_full_support(n, seed, pin):
    rng = np.random.default_rng(seed)
    pieces = cut_container(rng, (8, 8), n, pinwheel=pin)
    order = loading_order(rng, pieces)
    assert sorted(order) == list(range(n))
    loaded = []
    for k in order:
        (x, y), (w, h) = pieces[k]
        base = LineString([(x, y), (x + w, y)])
        if y > 0:
            tops = unary_union([LineString([(p[0][0], p[0][1] + p[1][1]), (p[0][0] + p[1][0], p[0][1] + p[1][1])]) for p in loaded])
            assert base.intersection(tops).length == w  # full support
        column = rect(x, y, x + w, 1000)
        assert all(_poly(p).intersection(column).area == 0 for p in loaded)  # nothing above yet
        loaded.append(pieces[k])

    graph = nx.DiGraph()
    graph.add_nodes_from(range(n))
    graph.add_edges_from((a, b) for a in range(n) for b in range(n) if supports(pieces[a], pieces[b]))
    assert nx.is_directed_acyclic_graph(graph)
    where = {k: i for i, k in enumerate(order)}
    assert all(where[a] < where[b] for a, b in graph.edges)


def test_too_many_pieces_is_refused():
    with pytest.raises(ValueError, match="at most 6"):
        cut_container(np.random.default_rng(0), (2, 3), 7)
