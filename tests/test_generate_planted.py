"""Planted instances (instances/generate/planted.py): the planted plan is feasible and optimal.

Every planted plan must pass the project's checker and reach the volume ("area") bound, so its
value is the optimum. Outside checks: resting sources in 2D with shapely, the plan order against
the lift relation with networkx, and the planted-value rule (volume / footprint) against the
perfect packings of Hopper & Turton (2001), Table 1 (category C1: 20 x 20, optimal height 20).
"""
from __future__ import annotations

import networkx as nx
import pytest
from hypothesis import given, settings, strategies as st
from shapely.geometry import LineString, box as rect

import bounds
from instances.checker import check_plan
from instances.generate.features import source_features
from instances.generate import planted_instance
from instances.io import dumps, instance_from_dict, instance_to_dict, plan_from_dict, plan_to_dict
from instances.model import grip_needed, is_upright, oriented_size
from instances.precedence import lift_graph, precedence_graph


def _volume_bound(inst):
    """Independent of `bounds`: per type, volume / (footprint * containers) for height; sum and bins alike."""
    per_type = {}
    for b in inst.boxes:
        t = b.target or inst.containers[0].id
        per_type[t] = per_type.get(t, 0) + b.volume
    values = []
    for c in inst.containers:
        area = 1
        for s in c.footprint:
            area *= s
        values.append((per_type.get(c.id, 0) / area, c))
    kind = inst.objective.minimise
    if kind == "height":
        return max(v / c.count for v, c in values)
    if kind == "height-sum":
        return sum(v for v, _ in values)
    return sum(-(-round(v) // c.height) for v, c in values)


@settings(max_examples=30, deadline=None)
@given(
    dim=st.sampled_from([2, 3]),
    n=st.integers(1, 24),
    seed=st.integers(0, 2**31),
    targets=st.integers(1, 2),
    count=st.integers(1, 2),
    objective=st.sampled_from(["height", "height-sum", "bins"]),
    support=st.sampled_from(["none", "center", "corners", "base-fraction"]),
    loading=st.sampled_from(["from-above", "any"]),
    clearance=st.sampled_from([0, 1]),
    tipped=st.sampled_from([0.0, 0.5, 1.0]),
    upright=st.sampled_from([0.0, 0.3]),
    flush=st.floats(0, 1),
    pinwheel=st.floats(0, 1),
)
def test_planted_plan_is_feasible_and_reaches_the_volume_bound(dim, n, seed, targets, count, objective, support, loading,
                                                               clearance, tipped, upright, flush, pinwheel):
    n = max(n, targets * count)
    inst, plan = planted_instance(dim, n, seed, targets=targets, count=count, objective=objective, support=support,
                                  min_fraction=1.0 if support == "base-fraction" else None, loading=loading,
                                  side_clearance=clearance, tipped=tipped, upright=upright, flush=flush,
                                  pinwheel=pinwheel, integer_positions=True, then="tips")
    inst = instance_from_dict(instance_to_dict(inst), file=inst.name)  # schema + meaning, sources rest
    plan = plan_from_dict(plan_to_dict(plan))
    report = check_plan(inst, plan)
    assert report.feasible, [str(v) for v in report.violations]
    assert report.objective == inst.known.optimum
    assert _volume_bound(inst) == pytest.approx(inst.known.optimum)
    value, named = bounds.best(inst)
    assert value <= inst.known.optimum + 1e-6  # a bound never exceeds the optimum
    assert named["area"] == pytest.approx(inst.known.optimum, rel=1e-4)  # the planted plan meets it


def test_same_arguments_give_identical_bytes():
    kw = dict(targets=2, count=2, tipped=0.5, upright=0.2, pinwheel=0.5)
    a = planted_instance(3, 20, 4, **kw)
    b = planted_instance(3, 20, 4, **kw)
    assert dumps(instance_to_dict(a[0])) == dumps(instance_to_dict(b[0]))
    assert dumps(plan_to_dict(a[1])) == dumps(plan_to_dict(b[1]))
    assert dumps(instance_to_dict(planted_instance(3, 20, 5, **kw)[0])) != dumps(instance_to_dict(a[0]))


@pytest.mark.parametrize("seed", range(5))
def test_2d_planted_sources_rest_by_shapely(seed):
    inst, _ = planted_instance(2, 25, seed, tipped=0.5, flush=0.8, source_ratio=1.0)
    polys = {b.id: rect(b.at[0], b.at[1], b.at[0] + b.size[0], b.at[1] + b.size[1]) for b in inst.boxes}
    for i, a in enumerate(inst.boxes):
        assert rect(0, 0, inst.source.size[0], 10_000).contains(polys[a.id])
        for b in inst.boxes[i + 1:]:
            assert polys[a.id].intersection(polys[b.id]).area == 0
        if a.at[1] > 0:
            base = LineString([(a.at[0], a.at[1]), (a.at[0] + a.size[0], a.at[1])])
            assert any(base.intersection(LineString([(p.bounds[0], p.bounds[3]), (p.bounds[2], p.bounds[3])])).length > 0
                       for q, p in polys.items() if q != a.id)


@pytest.mark.parametrize("dim", [2, 3])
def test_plan_order_respects_every_lift_edge(dim):
    """networkx: the planted order is a topological order of the lift relation."""
    for seed in range(4):
        inst, plan = planted_instance(dim, 20, seed, source_ratio=1.0)
        lifts = lift_graph(precedence_graph(inst))
        order = [m.box for m in plan.moves]
        where = {b: k for k, b in enumerate(order)}
        assert all(where[j] < where[i] for j, i in lifts.edges)
        assert nx.is_directed_acyclic_graph(lifts)
        assert lifts.number_of_edges() > 0  # narrow source: boxes do stack


def test_tipped_share_and_moves():
    n = 20
    inst, plan = planted_instance(3, n, 2, tipped=0.4, upright=0.25)
    tipped = [m for m in plan.moves if not is_upright(m.orientation)]
    assert len(tipped) == 8  # round(0.4 * 20): a grip face was free for each here
    assert all(m.grip == grip_needed(m.orientation) for m in plan.moves)
    up_only = [b for b in inst.boxes if all(is_upright(o) for o in b.orientations)]
    assert len(up_only) == 5
    for m in plan.moves:  # the planted orientation reproduces the cut piece's shape
        box = inst.box(m.box)
        assert m.orientation in box.orientations
        assert oriented_size(box.size, m.orientation) != box.size or is_upright(m.orientation)


def test_crowded_sources_fall_back_to_upright():
    """No clear face, no tip: with a clearance wider than the source, every box is stored upright."""
    inst, plan = planted_instance(2, 10, 0, tipped=1.0, side_clearance=50)
    assert all(is_upright(m.orientation) for m in plan.moves)
    assert check_plan(inst, plan).feasible


def test_flush_blocks_more_faces():
    """Mean share of side faces blocked at the start, over 8 seeds: flush 1 beats flush 0 by 0.15."""
    def blocked_share(flush):
        return sum(source_features(planted_instance(2, 20, seed, flush=flush, tipped=0.0, source_ratio=2.0)[0])["blocked_faces"] for seed in range(8)) / 8

    assert blocked_share(1.0) > blocked_share(0.0) + 0.15


def test_known_values_per_objective():
    assert planted_instance(2, 12, 1, height=7, objective="height")[0].known.optimum == 7
    assert planted_instance(2, 12, 1, height=7, count=3, objective="height-sum")[0].known.optimum == 21
    inst, _ = planted_instance(2, 12, 1, height=7, targets=2, count=2, objective="bins")
    assert inst.known.optimum == 4 and all(c.height == 7 for c in inst.containers)
    assert all(b.target in ("dest-1", "dest-2") for b in inst.boxes)


def test_planted_value_rule_matches_published_perfect_packings():
    """Hopper & Turton (2001), Table 1: the C instances are perfect packings, so their optimal
    height equals total item area / strip width: the rule `known` follows for planted instances."""
    from benchmarks.published import load_published, published_folder

    folder = published_folder()
    if folder is None:
        pytest.skip("shared benchmarks folder absent")
    entries = [e for e in load_published(folder) if e.set == "hopper_turton_2001_C"]
    assert len(entries) == 9
    for e in entries:
        inst = e.instance
        area = sum(b.volume for b in inst.boxes)
        assert area / inst.containers[0].size[0] == inst.known.optimum == {"C1": 20, "C2": 15, "C3": 30}[e.name[:2]]


@pytest.mark.parametrize(
    "kw, word",
    [(dict(targets=3, count=2), "at least the number of containers"), (dict(width=2, height=2), "unit cells"),
     (dict(tipped=2.0), "tipped"), (dict(depth=4), "3D"), (dict(objective="fastest"), "objective")],
)
def test_bad_parameters_are_named(kw, word):
    with pytest.raises(ValueError, match=word):
        planted_instance(2, 5, 0, **kw)


def _classic(inst):
    """The same boxes as a classic strip instance: no source, loading any, support none."""
    from dataclasses import replace

    from instances.model import Rules

    return replace(inst, source=None, boxes=tuple(replace(b, at=None) for b in inst.boxes),
                   rules=Rules(support=replace(inst.rules.support, rule="none"), loading="any", integer_positions=True),
                   known=None)


@pytest.mark.parametrize("dim, seed", [(2, 0), (2, 1), (2, 2), (3, 0), (3, 1)])
def test_cpsat_finds_no_lower_strip_than_the_planted_height(dim, seed):
    """OR-Tools CP-SAT (an independent general-purpose solver) on the planted boxes without the
    source: the strip packing optimum equals the planted height."""
    from tests.oracles.cpsat import strip_height_cpsat

    inst, _ = planted_instance(dim, 7, seed, width=5, height=4, tipped=0.5)
    answer = strip_height_cpsat(_classic(inst), time_limit=20)
    assert answer.status == "optimal" and answer.height == inst.known.optimum == 4


@pytest.mark.parametrize("seed", range(4))
def test_exhaustive_search_agrees_with_the_planted_optimum(seed):
    """The independent exhaustive oracle (its own precedence and support code) over every plan of a
    tiny planted instance, source and rules included: its optimum is the planted one."""
    from tests.oracles.exhaustive import solve_exhaustive

    inst, _ = planted_instance(2, 4, seed, width=3, height=3, tipped=0.5, integer_positions=True, source_ratio=1.0,
                               flush=1.0, targets=1 + seed % 2)
    answer = solve_exhaustive(inst)
    assert answer.status == "optimal" and answer.objective == inst.known.optimum


def test_default_height_grows_with_the_box_count():
    """10 wide, 100 boxes over 2 containers: 50 pieces of about 3.33 x 3.33 need height 56."""
    inst, plan = planted_instance(2, 100, 0, targets=2)
    assert inst.known.optimum == 56 and len(inst.boxes) == 100
    assert check_plan(inst, plan).feasible
    assert planted_instance(2, 8, 0)[0].known.optimum == 10  # few boxes: as tall as wide
