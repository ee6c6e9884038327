"""`milp.problem`: preprocessing facts the model relies on, each one true of every feasible plan."""
from __future__ import annotations

import milp
from milp.problem import forced_face, prepare
from tests.oracles.exhaustive import solve_exhaustive
from tests.oracles.handworked import instance2d


def test_forced_face_only_when_every_orientation_tips_and_one_face_can_be_free():
    assert forced_face({"yx": (2, 1)}, frozenset({"left"})) == "right"
    assert forced_face({"yx": (2, 1)}, frozenset()) is None  # two faces could do
    assert forced_face({"xy": (1, 2), "yx": (2, 1)}, frozenset({"left"})) is None  # may stay upright


def test_a_neighbour_on_the_only_grip_face_must_leave_first():
    # a (1x3, tip only) stands against the left wall; b (1x1) touches its right face: b goes first
    inst = instance2d([("a", (1, 3), (0, 0), ("yx",)), ("b", (1, 1), (1, 0), ("xy",))], 3, source=(3, None))
    p = prepare(inst)
    assert (1, 0) in p.before  # b before a
    oracle = solve_exhaustive(inst)
    result = milp.solve(inst, time_limit=30)
    assert result.status == oracle.status == "optimal"
    assert result.objective == oracle.objective
    assert [m.box for m in result.plan.moves].index("b") < [m.box for m in result.plan.moves].index("a")


def test_two_boxes_blocking_each_others_only_face_prove_infeasibility():
    # a and b (1x2, tip only) fill a source 2 wide: each can be gripped only by the face the other touches
    inst = instance2d([("a", (1, 2), (0, 0), ("yx",)), ("b", (1, 2), (1, 0), ("yx",))], 2, source=(2, None))
    p = prepare(inst)
    assert p.infeasible_reason is not None and "circle" in p.infeasible_reason
    assert solve_exhaustive(inst).status == "infeasible"
    result = milp.solve(inst, time_limit=30)
    assert result.status == "infeasible"
    assert any(s.method.startswith("preprocessing") for s in result.provenance.proof)
