"""The perfect-packing finder (`milp.perfect`): planted tilings, published perfect packings,
instances it must not claim, and CP-SAT as an independent judge of "a perfect packing exists".
"""
from __future__ import annotations

import dataclasses
import time

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from shapely.geometry import box as rectangle
from shapely.ops import unary_union

import milp
from benchmarks.published import load_published
from instances.checker import check_plan
from instances.generate.cutting import cut_container
from instances.generate.planted import planted_instance
from instances.model import Box, ContainerType, Instance, Objective, Rules, Support
from milp import perfect
from milp.perfect import perfect_packing, perfect_plans
from milp.problem import prepare
from tests.oracles.cpsat import strip_height_cpsat

HT2001 = "Hopper & Turton (2001), EJOR 128(1):34-57, Table 1 of the data document (C1 20x20: 20, C2 40x15: 15, C3 60x30: 30); read in a file"
H2000 = "Hopper (2000), PhD thesis, Cardiff University, Tables A.1 (T) and A.2 (N): optimum 200x200; read in a file"

CLASSIC = Rules(support=Support(rule="none"), loading="any", access="none", integer_positions=True)
STRICT = Rules(support=Support(rule="corners"), loading="from-above", access="side-face")


def _strip(sizes, width: int, *, turn: bool = False, rules: Rules = CLASSIC, top=None, objective="height") -> Instance:
    """A sourceless instance: boxes of `sizes` (w, h) in one container `width` wide (open unless `top`)."""
    orientations = ("xy", "yx") if turn else ("xy",)
    boxes = tuple(Box(f"r{k:02d}", (float(w), float(h)), orientations) for k, (w, h) in enumerate(sizes))
    return Instance(dim=2, boxes=boxes, containers=(ContainerType("bay", (float(width), top), 1),), rules=rules,
                    objective=Objective(minimise=objective), name="tiling")


def _finder_plans(instance: Instance, lower: float, seconds: float = 10.0):
    return list(perfect_plans(instance, prepare(instance), lower, time.perf_counter() + seconds))


def _planted_sizes(seed: int, boxes: int, width: int):
    """The packed extents of a planted tiling (guillotine and pinwheel cuts) and its height."""
    inst, plan = planted_instance(2, boxes, seed, width=width, tipped=0.0, pinwheel=0.5)
    extents = {b.id: b.size for b in inst.boxes}
    sizes = [tuple(int(v) for v in extents[m.box]) for m in plan.moves]
    return sizes, int(inst.known.optimum)


# ---------------------------------------------------------------- (1) planted perfect packings


@pytest.mark.parametrize("seed", range(6))
@pytest.mark.parametrize("turn", [False, True])
def test_planted_tiling_is_found_and_checked(seed, turn):
    sizes, height = _planted_sizes(seed, 9 + seed, 12)
    inst = _strip(sizes, 12, turn=turn)
    plans = _finder_plans(inst, height)
    assert len(plans) == 1
    report = check_plan(inst, plans[0])
    assert report.feasible, [str(v) for v in report.violations]
    assert report.objective == height


@pytest.mark.parametrize("seed", range(4))
def test_planted_tiling_meets_strict_rules_in_a_closed_container(seed):
    """Bottom-up moves of a perfect packing hold under loading from above and corner support."""
    sizes, height = _planted_sizes(seed, 10, 10)
    for objective, top in (("height", None), ("bins", float(height))):
        inst = _strip(sizes, 10, rules=STRICT, top=top, objective=objective)
        lower = 1.0 if objective == "bins" else height
        (plan,) = _finder_plans(inst, lower)
        report = check_plan(inst, plan)
        assert report.feasible, [str(v) for v in report.violations]
        assert report.heights[("bay", 0)] == height


@pytest.mark.parametrize("seed", range(4))
def test_placements_tile_the_rectangle_by_shapely(seed):
    """Independent geometry (shapely): pairwise overlaps have zero area and the union is the rectangle."""
    sizes, height = _planted_sizes(seed, 12, 15)
    result = perfect_packing(15, height, [[s, s[::-1]] for s in sizes])
    assert result.status == "found"
    assert sorted(p.item for p in result.placements) == list(range(len(sizes)))
    shapes = [rectangle(p.at[0], p.at[1], p.at[0] + p.extents[0], p.at[1] + p.extents[1]) for p in result.placements]
    for p in result.placements:
        assert p.extents in (sizes[p.item], sizes[p.item][::-1])
    union = unary_union(shapes)
    assert union.area == pytest.approx(15 * height)
    assert union.equals(rectangle(0, 0, 15, height))
    assert sum(s.area for s in shapes) == pytest.approx(union.area)
    ys = [p.at[1] for p in result.placements]
    assert ys == sorted(ys)  # bottom-up order


# ---------------------------------------------------------------- (2) published perfect packings

# Proved quickly by the finder (plans found in well under a second at the time of writing); the
# time limit leaves room for the bounds stage on a loaded machine.
PUBLISHED = {"N1a": H2000, "N1c": H2000, "T1c": H2000, "N2d": H2000, "C1_1": HT2001, "C2_3": HT2001}


@pytest.mark.parametrize("name", sorted(PUBLISHED))
def test_published_perfect_packing_is_proved(name, published_dir):
    (entry,) = load_published(published_dir, names=[name])
    inst = entry.instance
    known = inst.known.optimum
    result = milp.solve(inst, time_limit=20)
    assert result.status == "optimal", (result.status, result.objective, result.bound, result.notes)
    assert result.objective == pytest.approx(known), PUBLISHED[name]
    assert result.bound <= known + 1e-9, PUBLISHED[name]
    report = check_plan(inst, result.plan)
    assert report.feasible and report.objective == pytest.approx(known)


# ---------------------------------------------------------------- (3) never a false claim


def test_area_short_of_the_strip_is_not_claimed():
    sizes, height = _planted_sizes(1, 10, 10)
    inst = _strip(sizes[:-1], 10)  # one box less: the area no longer fills width x height
    assert _finder_plans(inst, height) == []
    assert _finder_plans(inst, height - 1) == []


def test_area_that_fills_but_shapes_that_do_not():
    """A 1x2 and a 2x1 fill 2 x 2 by area but not by shape: no plan, and solve proves 3, not 2."""
    inst = _strip([(1, 2), (2, 1)], 2)
    assert perfect_packing(2, 2, [[(1, 2)], [(2, 1)]]).status == "none"
    assert _finder_plans(inst, 2.0) == []
    result = milp.solve(inst, time_limit=20)
    assert result.status == "optimal" and result.objective == 3.0  # hand-argued: they must stack


def test_structures_outside_the_finder_yield_nothing():
    planted, _ = planted_instance(2, 8, 3, width=8)  # boxes in a source: orders the search ignores
    assert _finder_plans(planted, planted.known.optimum) == []
    sizes, height = _planted_sizes(2, 8, 8)
    two = dataclasses.replace(_strip(sizes, 8), containers=(ContainerType("bay", (8.0, None), 2),))
    assert _finder_plans(two, height / 2) == []
    assert _finder_plans(_strip(sizes, 8, top=float(height - 1)), height) == []  # target above the lid


def test_deadline_is_respected():
    sizes, height = _planted_sizes(5, 40, 60)
    start = time.perf_counter()
    result = perfect_packing(60, height, [[s] for s in sizes], deadline=start + 0.3, node_limit=None)
    assert time.perf_counter() - start < 2.0
    assert result.status in ("found", "stopped")


# ---------------------------------------------------------------- (4) CP-SAT as an independent judge


@st.composite
def _rectangle_sets(draw):
    width = draw(st.integers(2, 6))
    n = draw(st.integers(2, 6))
    sizes = [(draw(st.integers(1, width)), draw(st.integers(1, 4))) for _ in range(n)]
    extra = sum(w * h for w, h in sizes) % width
    if extra:
        sizes.append((width - extra, 1))  # make the area a multiple of the width, so a perfect packing may exist
    return width, sizes, draw(st.booleans())


@settings(max_examples=60, deadline=None)
@given(_rectangle_sets())
def test_perfect_packing_exists_exactly_when_cpsat_reaches_the_area_bound(case):
    width, sizes, turn = case
    height = sum(w * h for w, h in sizes) // width
    items = [[(w, h), (h, w)] if turn else [(w, h)] for w, h in sizes]
    ours = perfect_packing(width, height, items)
    theirs = strip_height_cpsat(_strip(sizes, width, turn=turn), time_limit=20.0)
    assert theirs.status == "optimal"
    assert ours.status == ("found" if theirs.height == height else "none"), (theirs.height, height)


@settings(max_examples=30, deadline=None)
@given(_rectangle_sets())
def test_restarts_keep_the_search_complete(case):
    """Runs of a few nodes each: many restarts with random orderings share the dead-state table,
    and the answer must still agree with CP-SAT."""
    width, sizes, turn = case
    height = sum(w * h for w, h in sizes) // width
    items = [[(w, h), (h, w)] if turn else [(w, h)] for w, h in sizes]
    with pytest.MonkeyPatch.context() as patch:
        patch.setattr(perfect, "_RESTART_BASE", 1)
        ours = perfect_packing(width, height, items)
    theirs = strip_height_cpsat(_strip(sizes, width, turn=turn), time_limit=20.0)
    assert ours.status == ("found" if theirs.height == height else "none"), (theirs.height, height)
    if ours.status == "found":
        assert sum(p.extents[0] * p.extents[1] for p in ours.placements) == width * height


def test_luby_sequence():
    """Luby, Sinclair & Zuckerman (1993): 1, 1, 2, 1, 1, 2, 4, 1, 1, 2, 1, 1, 2, 4, 8 (recalled from memory)."""
    assert [perfect._luby(i) for i in range(1, 16)] == [1, 1, 2, 1, 1, 2, 4, 1, 1, 2, 1, 1, 2, 4, 8]


@pytest.mark.parametrize("seed", range(5))
def test_cut_rectangles_agree_with_cpsat(seed):
    """Tilings cut at random (so a perfect packing exists): CP-SAT reaches the area bound too."""
    import numpy as np

    pieces = cut_container(np.random.default_rng(seed), (7, 6), 7 + seed, pinwheel=0.5)
    sizes = [tuple(int(v) for v in e) for _, e in pieces]
    ours = perfect_packing(7, 6, [[s] for s in sizes])
    theirs = strip_height_cpsat(_strip(sizes, 7), time_limit=20.0)
    assert ours.status == "found" and theirs.height == 6
