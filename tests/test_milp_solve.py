"""milp.solve on hand-built instances whose optimum is argued in the comments, one rule at a time.

Every optimal/feasible result must carry a plan that `instances.checker.check_plan` accepts
with the reported objective; the tests re-run the checker themselves.
"""
from __future__ import annotations

import pytest

from instances.checker import check_plan
from instances.errors import InputError
from instances.io import instance_from_dict
from instances.model import Box, ContainerType, Instance, Objective, Rules, Source, Support
from milp import solve
from tests.worked_examples import FORMATS_INSTANCE

TL = 30.0


def checked(instance, result):
    """Re-check the reported plan independently of the solver and return the report."""
    assert result.status in ("optimal", "feasible"), (result.status, result.notes)
    assert result.checked and result.plan is not None
    report = check_plan(instance, result.plan)
    assert report.feasible, report.violations
    assert report.objective == pytest.approx(result.objective)
    assert result.bound <= result.objective + 1e-9
    return report


def order(result):
    return [m.box for m in result.plan.moves]


def strip2d(boxes, width, *, source=None, support="center", loading="from-above", then="none",
            minimise="height", containers=None, integer=True, access="side-face"):
    rules = Rules(support=Support(support, 0.5 if support == "base-fraction" else None), loading=loading,
                  access=access, integer_positions=integer)
    containers = containers or (ContainerType("strip", (width, None), 1),)
    return Instance(2, tuple(boxes), tuple(containers), Source(source) if source else None, rules,
                    Objective(minimise, then), name="hand")


def test_formats_worked_example_optimum_5_with_one_tip():
    # FORMATS.md "Instance" example: optimum 5 needs crate-a tipped (argued by hand there).
    inst = instance_from_dict(FORMATS_INSTANCE)
    r = solve(inst, time_limit=TL)
    rep = checked(inst, r)
    assert r.status == "optimal" and r.objective == 5 and r.gap == 0
    assert r.tiebreak.name == "tips" and r.tiebreak.value == 1 and r.tiebreak.proved
    assert rep.tips == 1
    assert order(r).index("crate-c") < order(r).index("crate-a")  # crate-c rests on crate-a: lift edge


def test_lift_order_reverses_the_stack():
    # Source: wide box A on the floor, B (1x1) on top of it. B must go first. Target 2 wide:
    # B on the floor, A (2x1, upright only) centred over B's top edge: height 2.
    boxes = [Box("A", (2, 1), ("xy",), (0, 0)), Box("B", (1, 1), ("xy",), (0, 1))]
    inst = strip2d(boxes, 2, source=(2, None))
    r = solve(inst, time_limit=TL)
    checked(inst, r)
    assert r.status == "optimal" and r.objective == 2
    assert order(r) == ["B", "A"]


def test_tip_against_both_walls_is_proved_infeasible_with_a_reason():
    # A (3x1) fills the 3-wide source: both side faces against walls, so it can never be gripped;
    # the 1-wide target takes it only tipped.
    boxes = [Box("A", (3, 1), ("xy", "yx"), (0, 0))]
    inst = strip2d(boxes, 1, source=(3, None))
    r = solve(inst, time_limit=TL)
    assert r.status == "infeasible" and r.plan is None
    assert any("walls" in n and "'A'" in n for n in r.notes)


def test_tip_waits_for_the_neighbour_on_its_free_face():
    # Source 4 wide: A (3x1) against the left wall, B (1x1) touching A's right face (at the right wall).
    # The 1-wide target takes A only tipped, so B must leave first: B at the bottom, A on top: 1 + 3.
    boxes = [Box("A", (3, 1), ("xy", "yx"), (0, 0)), Box("B", (1, 1), ("xy",), (3, 0))]
    inst = strip2d(boxes, 1, source=(4, None))
    r = solve(inst, time_limit=TL)
    rep = checked(inst, r)
    assert r.status == "optimal" and r.objective == 4
    assert order(r) == ["B", "A"] and rep.tips == 1
    assert r.plan.moves[1].grip == "left-right"


def test_access_none_lets_the_walled_box_tip():
    boxes = [Box("A", (3, 1), ("xy", "yx"), (0, 0))]
    inst = strip2d(boxes, 1, source=(3, None), access="none")
    r = solve(inst, time_limit=TL)
    checked(inst, r)
    assert r.status == "optimal" and r.objective == 3


def test_tips_tie_break_prefers_upright():
    # Two 1x2 boxes in a 2-wide strip: upright side by side (height 2, no tip) or both tipped and
    # stacked (height 2, two tips). The tie-break must find the upright plan and prove it.
    boxes = [Box("A", (1, 2), ("xy", "yx")), Box("B", (1, 2), ("xy", "yx"))]
    inst = strip2d(boxes, 2, then="tips")
    r = solve(inst, time_limit=TL)
    rep = checked(inst, r)
    assert r.objective == 2 and r.tiebreak.value == 0 and r.tiebreak.proved and rep.tips == 0


@pytest.mark.parametrize("support", ["none", "center", "corners", "base-fraction"])
def test_support_rules_bridge(support):
    # Two 1x1 posts and a 3x1 plank (upright only) in a 3-wide strip. The plank can rest on both
    # posts only if they are apart (0 and 2): every rule allows that, so the optimum is 2.
    boxes = [Box("P", (1, 1), ("xy",)), Box("Q", (1, 1), ("xy",)), Box("L", (3, 1), ("xy",))]
    inst = strip2d(boxes, 3, support=support)
    r = solve(inst, time_limit=TL)
    checked(inst, r)
    assert r.status == "optimal" and r.objective == 2


def test_center_rule_forbids_a_plank_on_an_off_centre_post():
    # One 1x1 post and a 4x1 plank (upright only) in a 4-wide strip with loading from above.
    # Plank on the floor and post on it: 2. Plank on the post needs the plank's centre (x = 2)
    # over the post: post at [1, 2] or [2, 3] works, so 2 either way; with corners the plank
    # cannot rest on the post at all (its corners hang over), so the plank goes first: still 2.
    # The rule that bites: "corners" with a narrower strip forces the plank to the bottom.
    boxes = [Box("P", (1, 1), ("xy",), (0, 1)), Box("L", (4, 1), ("xy",), (0, 0))]
    # source: plank on the floor, post on the plank, so the post leaves first and must stand
    # under the plank, which then needs its corners supported: impossible in a 4-wide strip.
    inst = strip2d(boxes, 4, source=(4, None), support="corners")
    r = solve(inst, time_limit=TL)
    assert r.status == "infeasible"
    inst = strip2d(boxes, 4, source=(4, None), support="center")
    r = solve(inst, time_limit=TL)
    checked(inst, r)
    assert r.status == "optimal" and r.objective == 2 and order(r) == ["P", "L"]


def test_targets_and_height_sum_over_two_containers():
    # Two strips 2 wide; boxes 2x1 each: two must go to "east". Height-sum: every box adds 1.
    containers = (ContainerType("east", (2, None), 1), ContainerType("west", (2, None), 1))
    boxes = [Box(f"b{k}", (2, 1), ("xy",), None, "east" if k < 2 else None) for k in range(4)]
    inst = strip2d(boxes, 2, containers=containers, minimise="height-sum")
    r = solve(inst, time_limit=TL)
    checked(inst, r)
    assert r.status == "optimal" and r.objective == 4
    assert all(m.container[0] == "east" for m in r.plan.moves if m.box in ("b0", "b1"))


def test_bins_objective():
    # Three 2x2 boxes, bins 4x2 (count 3): two fit side by side per bin, so 2 bins.
    containers = (ContainerType("bin", (4, 2), 3),)
    boxes = [Box(f"b{k}", (2, 2), ("xy",)) for k in range(3)]
    inst = strip2d(boxes, 4, containers=containers, minimise="bins", support="none")
    r = solve(inst, time_limit=TL)
    checked(inst, r)
    assert r.status == "optimal" and r.objective == 2


def test_bins_beyond_the_count_is_infeasible():
    containers = (ContainerType("bin", (2, 2), 2),)
    boxes = [Box(f"b{k}", (2, 2), ("xy",)) for k in range(3)]
    inst = strip2d(boxes, 2, containers=containers, minimise="bins", support="none")
    r = solve(inst, time_limit=TL)
    assert r.status == "infeasible" and r.plan is None


def test_3d_stack_and_turn():
    # 3D: four 1x1x1 cubes and a 2x2x1 slab into a 2x2 open-top box: slab on the floor and cubes on
    # it (height 2) or cubes on the floor and slab on them (height 2): optimum 2.
    boxes = [Box(f"c{k}", (1, 1, 1), ("xyz",)) for k in range(4)] + [Box("s", (2, 2, 1), ("xyz", "yxz"))]
    inst = Instance(3, tuple(boxes), (ContainerType("cage", (2, 2, None), 1),),
                    rules=Rules(support=Support("corners"), integer_positions=True), name="cubes")
    r = solve(inst, time_limit=TL)
    checked(inst, r)
    assert r.status == "optimal" and r.objective == 2


def test_3d_base_fraction_uses_the_exact_area():
    # A 2x2x1 slab on one 1x1x1 cube covers a quarter of the slab's base. With f = 0.25 that is
    # enough (cube first, slab on it: height 2, but the floor is free so slab + cube = 2 anyway);
    # with f = 0.3 the slab cannot go on the cube: still height 2 with the cube on the slab.
    # The test is that both solve and the checker agrees with the plan.
    for f in (0.25, 0.3):
        boxes = [Box("c", (1, 1, 1), ("xyz",), (0, 0, 0)), Box("s", (2, 2, 1), ("xyz",), (0, 0, 1))]
        inst = Instance(3, tuple(boxes), (ContainerType("cage", (2, 2, None), 1),), Source((2, 2, None)),
                        rules=Rules(support=Support("base-fraction", f), integer_positions=True), name="slab")
        r = solve(inst, time_limit=TL)
        # the slab leaves first (it lies on the cube), so it is at the bottom whatever f is
        checked(inst, r)
        assert r.status == "optimal" and r.objective == 2 and order(r) == ["s", "c"]


def test_3d_base_fraction_area_decides_feasibility():
    # Source: cube on the floor, slab (2x2x1) on top of... no: cube on top of the slab, so the cube
    # leaves first and the slab must rest on it in a 2x2 cage. It covers 1/4 of the slab's base.
    boxes = [Box("s", (2, 2, 1), ("xyz",), (0, 0, 0)), Box("c", (1, 1, 1), ("xyz",), (0, 0, 1))]
    for f, feasible in ((0.25, True), (0.3, False)):
        inst = Instance(3, tuple(boxes), (ContainerType("cage", (2, 2, None), 1),), Source((2, 2, None)),
                        rules=Rules(support=Support("base-fraction", f), integer_positions=True), name="slab")
        r = solve(inst, time_limit=TL)
        if feasible:
            checked(inst, r)
            assert r.objective == 2 and order(r) == ["c", "s"]
        else:
            assert r.status == "infeasible"


def test_non_integer_sizes_and_positions():
    # Real data: boxes 1.5 wide in a 3-wide strip, upright only: two per row, height 2 * 0.7.
    boxes = [Box(f"b{k}", (1.5, 0.7), ("xy",)) for k in range(4)]
    inst = strip2d(boxes, 3, integer=False)
    r = solve(inst, time_limit=TL)
    checked(inst, r)
    assert r.objective == pytest.approx(1.4)
    assert r.status == "optimal"


def test_cbc_backend_agrees_with_highs():
    inst = instance_from_dict(FORMATS_INSTANCE)
    r = solve(inst, time_limit=TL, backend="cbc")
    checked(inst, r)
    assert r.status == "optimal" and r.objective == 5 and r.solver.backend == "cbc"
    assert "CBC" in r.solver.version


def test_result_solver_record():
    inst = instance_from_dict(FORMATS_INSTANCE)
    r = solve(inst, time_limit=12.5, seed=3, threads=1)
    assert r.solver.backend == "highs" and "HiGHS" in r.solver.version
    assert r.solver.time_limit_s == 12.5 and r.solver.seed == 3 and r.solver.threads == 1
    assert r.seconds is not None and r.seconds >= 0


@pytest.mark.parametrize("kwargs, field", [
    ({"time_limit": 0}, "time_limit"),
    ({"backend": "glpk"}, "backend"),
    ({"threads": 0}, "threads"),
    ({"seed": -1}, "seed"),
    ({"export_model": "model.txt"}, "export_model"),
])
def test_bad_options_name_the_option(kwargs, field):
    inst = instance_from_dict(FORMATS_INSTANCE)
    with pytest.raises(InputError) as err:
        solve(inst, **kwargs)
    assert any(path == field for path, _ in err.value.problems)


@pytest.mark.parametrize("suffix, marker", [(".lp", "Subject To"), (".mps", "ROWS")])
def test_export_model(tmp_path, suffix, marker):
    inst = instance_from_dict(FORMATS_INSTANCE)
    path = tmp_path / f"model{suffix}"
    solve(inst, time_limit=TL, export_model=str(path))
    text = path.read_text()
    assert marker in text.upper() or marker in text
    assert "sep_" in text or "SEP_" in text.upper()
    assert list(tmp_path.iterdir()) == [path]  # no temporary left behind


def test_a_plan_the_checker_rejects_is_an_error(monkeypatch):
    import milp.pipeline as pipeline
    from instances.model import Move, Plan

    inst = strip2d([Box("A", (1, 1), ("xy",)), Box("B", (1, 1), ("xy",))], 1)
    # make the greedy useless and the model's plan wrong (both boxes on the floor, overlapping)
    monkeypatch.setattr(pipeline, "best_incumbent", lambda *a, **k: None)
    monkeypatch.setattr(pipeline.special, "FINDERS", [])  # the perfect-packing search would solve it first
    monkeypatch.setattr(pipeline.heightmap, "applies", lambda p: False)  # and so would the height-map searches
    monkeypatch.setattr(pipeline.heightmap, "refutable", lambda p: False)
    bad = Plan("hand", (Move("A", ("strip", 0), "xy", (0, 0)), Move("B", ("strip", 0), "xy", (0, 0))))
    monkeypatch.setattr(pipeline, "extract_plan", lambda m: bad)
    r = solve(inst, time_limit=TL)
    assert r.status == "error" and r.plan is None and not r.checked
    assert any("overlap" in n for n in r.notes)


def test_interrupt_keeps_the_best_checked_plan(monkeypatch):
    import milp.pipeline as pipeline

    def interrupted(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(pipeline.backends, "run", interrupted)
    monkeypatch.setattr(pipeline, "_lower_bounds", lambda run: None)  # so the greedy plan is not proved
    monkeypatch.setattr(pipeline.heightmap, "refutable", lambda p: False)  # nor proved by the exact search
    boxes = [Box("A", (2, 3), ("xy",)), Box("B", (2, 3), ("xy",)), Box("C", (3, 1), ("xy",))]
    inst = strip2d(boxes, 3, support="none")
    r = solve(inst, time_limit=TL)
    checked(inst, r)
    assert any(n.startswith("interrupted") for n in r.notes)


def test_unknown_when_nothing_is_found(monkeypatch):
    import milp.pipeline as pipeline
    from milp.backends import Outcome

    monkeypatch.setattr(pipeline, "best_incumbent", lambda *a, **k: None)
    monkeypatch.setattr(pipeline.special, "FINDERS", [])  # no special-structure plans either
    monkeypatch.setattr(pipeline.heightmap, "applies", lambda p: False)  # nor height-map searches
    monkeypatch.setattr(pipeline.heightmap, "refutable", lambda p: False)
    monkeypatch.setattr(pipeline.backends, "run", lambda *a, **k: Outcome("unknown", None, None, 0, 0.01))
    inst = strip2d([Box("A", (1, 1), ("xy",)), Box("B", (1, 1), ("xy",))], 1)
    r = solve(inst, time_limit=1.0)
    assert r.status == "unknown" and r.plan is None and r.objective is None


@pytest.mark.parametrize("dim, n, seed", [(2, 6, 0), (2, 6, 1), (2, 10, 2), (3, 5, 0), (3, 8, 1)])
def test_planted_optimum_is_reached_and_proved(dim, n, seed):
    # instances.generate.planted_instance: the optimum (area bound) is known by construction.
    from instances.generate import planted_instance

    inst, planted = planted_instance(dim, n, seed, integer_positions=True)
    assert check_plan(inst, planted).objective == inst.known.optimum
    r = solve(inst, time_limit=60)
    checked(inst, r)
    assert r.status == "optimal" and r.objective == inst.known.optimum
