"""Random instances (instances/generate/arrangement.py): valid, reproducible, controls obeyed.

Outside checks: resting sources are cross-checked with shapely (independent geometry library);
the size-class mixtures against the published class definitions (see test_generate_classes.py).
"""
from __future__ import annotations

import pytest
from hypothesis import given, settings, strategies as st
from shapely.geometry import LineString, box as rect

from instances.checker import check_plan
from instances.drop import drop_plan
from instances.generate.features import source_features
from instances.generate import random_instance
from instances.io import dumps, instance_from_dict, instance_to_dict
from instances.model import is_upright, oriented_size


def _roundtrip(inst):
    return instance_from_dict(instance_to_dict(inst), file=inst.name)


@settings(max_examples=25, deadline=None)
@given(
    dim=st.sampled_from([2, 3]),
    n=st.integers(1, 25),
    seed=st.integers(0, 2**31),
    cls=st.sampled_from(["uniform", "wide", "tall", "large", "small", "mixed"]),
    targets=st.integers(1, 3),
    must_tip=st.sampled_from([0.0, 0.3]),
    upright=st.sampled_from([0.0, 0.5]),
    flush=st.floats(0, 1),
    order=st.sampled_from(["random", "large-first", "small-first"]),
    support=st.sampled_from(["none", "center", "corners"]),
)
def test_every_random_instance_validates(dim, n, seed, cls, targets, must_tip, upright, flush, order, support):
    inst = random_instance(dim, n, seed, size_class=cls, targets=targets, must_tip=must_tip, upright=upright,
                           flush=flush, drop_order=order, support=support, source_ratio=1.6, feasible=False)
    back = _roundtrip(inst)  # schema + meaning checks, including "every box rests"
    assert back == inst
    assert len(inst.boxes) == n


@pytest.mark.parametrize("dim, support", [(2, "center"), (3, "center"), (2, "none"), (3, "base-fraction")])
def test_feasible_draws_carry_a_checked_plan(dim, support):
    """The default redraws until the constructive plan passes the checker: the instance is feasible."""
    frac = 0.5 if support == "base-fraction" else None
    for seed in range(3):
        inst = random_instance(dim, 12, seed, must_tip=0.2, targets=2, source_ratio=1.6, flush=0.8,
                               support=support, min_fraction=frac)
        plan = drop_plan(inst)
        assert plan is not None and check_plan(inst, plan).feasible


def test_infeasible_settings_are_refused_clearly():
    """Corner support with one narrow strip and many widths: no draw has a plan the heuristic finds."""
    with pytest.raises(ValueError, match="feasible=False"):
        random_instance(2, 25, 0, size_class="mixed", support="corners", must_tip=0.3, source_ratio=2.0, flush=1.0)


def test_same_arguments_give_identical_bytes():
    kw = dict(size_class="mixed", targets=2, shares=[2, 1], must_tip=0.2, upright=0.3, source_ratio=2.0)
    a = dumps(instance_to_dict(random_instance(3, 20, 7, **kw)))
    b = dumps(instance_to_dict(random_instance(3, 20, 7, **kw)))
    c = dumps(instance_to_dict(random_instance(3, 20, 8, **kw)))
    assert a == b
    assert a != c


@pytest.mark.parametrize("seed", range(6))
def test_2d_sources_rest_by_shapely(seed):
    """Independent geometry: inside the source, no overlap of positive area, every box rests."""
    inst = random_instance(2, 30, seed, size_class="mixed", flush=0.7, must_tip=0.2, source_ratio=1.8)
    width = inst.source.size[0]
    polys = {b.id: rect(b.at[0], b.at[1], b.at[0] + b.size[0], b.at[1] + b.size[1]) for b in inst.boxes}
    tall = max(p.bounds[3] for p in polys.values()) + 1
    bay = rect(0, 0, width, tall)
    ids = list(polys)
    for i, a in enumerate(ids):
        assert bay.contains(polys[a])
        for b in ids[i + 1:]:
            assert polys[a].intersection(polys[b]).area == 0
    for b in inst.boxes:
        x0, y0, x1, _ = polys[b.id].bounds
        if y0 == 0:
            continue
        base = LineString([(x0, y0), (x1, y0)])
        tops = [LineString([(p.bounds[0], p.bounds[3]), (p.bounds[2], p.bounds[3])]) for q, p in polys.items() if q != b.id]
        assert any(base.intersection(t).length > 0 for t in tops), f"{b.id} floats"


def test_exact_shares_of_targets_upright_and_must_tip():
    n = 40
    inst = random_instance(2, n, 3, targets=3, shares=[0.5, 0.3, 0.2], upright=0.25, must_tip=0.2, source_ratio=2.0)
    per = {c.id: sum(1 for b in inst.boxes if b.target == c.id) for c in inst.containers}
    assert per == {"dest-1": 20, "dest-2": 12, "dest-3": 8}
    assert sum(1 for b in inst.boxes if all(is_upright(o) for o in b.orientations)) == 10
    width = inst.containers[0].size[0]
    # a must-tip box: no upright orientation fits the target width
    only_tipped = [b for b in inst.boxes if all(oriented_size(b.size, o)[0] > width for o in b.orientations if is_upright(o))]
    assert len(only_tipped) == 8
    for b in only_tipped:
        assert any(oriented_size(b.size, o)[0] <= width for o in b.orientations if not is_upright(o))


def test_3d_must_tip_boxes_fit_only_tipped():
    inst = random_instance(3, 20, 5, must_tip=0.5, size_class="small", source_ratio=2.0, width=8, depth=6)
    w, d, _ = inst.containers[0].size

    def fits(b, o):
        e = oriented_size(b.size, o)
        return e[0] <= w and e[1] <= d

    forced = [b for b in inst.boxes if not any(fits(b, o) for o in b.orientations if is_upright(o))]
    assert len(forced) == 10
    assert all(any(fits(b, o) for o in b.orientations) for b in inst.boxes)


def test_large_first_puts_big_boxes_low():
    """Drop order large-first: the volume of the boxes on the floor exceeds that of small-first."""
    def floor_volume(order):
        total = 0
        for seed in range(10):
            inst = random_instance(2, 20, seed, size_class="mixed", drop_order=order, source_ratio=1.0)
            total += sum(b.size[0] * b.size[1] for b in inst.boxes if b.at[1] == 0)
        return total

    assert floor_volume("large-first") > floor_volume("small-first")


def test_narrow_source_stacks_higher():
    def mean_height(ratio):
        tops = [max(b.at[1] + b.size[1] for b in random_instance(2, 20, s, source_ratio=ratio).boxes) for s in range(10)]
        return sum(tops) / len(tops)

    assert mean_height(1.0) > 1.5 * mean_height(3.0)


@pytest.mark.parametrize(
    "kw, word",
    [
        (dict(size_class="nope"), "size class"),
        (dict(must_tip=0.2, source_ratio=1.0), "source"),
        (dict(must_tip=0.2, source_ratio=2.0, objective="bins"), "taller"),
        (dict(targets=2, shares=[1.0]), "shares"),
        (dict(upright=1.5), "upright"),
        (dict(drop_order="sideways"), "drop_order"),
        (dict(support="base-fraction"), "min_fraction"),
        (dict(width=0), "width"),
    ],
)
def test_bad_parameters_are_named(kw, word):
    with pytest.raises(ValueError, match=word):
        random_instance(2, 5, 0, **kw)


def test_bins_objective_gets_heights_and_enough_bins():
    inst = random_instance(2, 9, 1, objective="bins", targets=2, shares=[2, 1])
    assert all(c.height == 10 for c in inst.containers)
    assert [c.count for c in inst.containers] == [6, 3]


def test_sizes_follow_the_size_class():
    """Martello & Vigo (1998) class I at W = 100: about 70 % of boxes are wide items
    (w >= 67, h <= 50; the other types reach that region with probability ~0.0013).
    Tolerance: 5 standard deviations of a binomial share over 1000 boxes (about 0.072)."""
    n = 0
    hits = 0
    for seed in range(20):
        inst = random_instance(2, 50, seed, size_class="mv1", width=100, feasible=False)
        n += len(inst.boxes)
        hits += sum(1 for b in inst.boxes if b.size[0] >= 67 and b.size[1] <= 50)
    p = 0.7 + 0.1 * (34 / 51) * (1 / 51)
    sd = (p * (1 - p) / n) ** 0.5
    assert abs(hits / n - p) < 5 * sd


def test_flush_blocks_more_faces():
    """Mean share of side faces blocked at the start, over 8 seeds: flush 1 beats flush 0 by 0.15."""
    def blocked_share(flush):
        return sum(source_features(random_instance(2, 20, seed, flush=flush, source_ratio=2.0, feasible=False))["blocked_faces"] for seed in range(8)) / 8

    assert blocked_share(1.0) > blocked_share(0.0) + 0.15


@pytest.mark.parametrize("seed", range(4))
def test_exhaustive_search_confirms_feasible_draws(seed):
    """The independent exhaustive oracle finds the default (feasible) draws feasible, with an
    optimum no worse than the constructive plan that vouched for them."""
    from tests.oracles.exhaustive import solve_exhaustive

    inst = random_instance(2, 4, seed, width=4, size_class="small" if seed % 2 else "uniform", must_tip=0.25,
                           source_ratio=1.5, integer_positions=True, flush=1.0)
    answer = solve_exhaustive(inst)
    assert answer.status == "optimal"
    assert answer.objective <= check_plan(inst, drop_plan(inst)).objective
