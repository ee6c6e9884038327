"""The position-indexed strip model (milp.grid): normal patterns, perfect packings, agreement with big-M."""
from __future__ import annotations

import pytest

from instances.checker import check_plan
from instances.model import Box, ContainerType, Instance, Objective, Rules, Support
from milp import backends, grid, solve
from milp.model import build
from milp.problem import prepare


def strip(sizes, width, rotate=True):
    orients = ("xy", "yx") if rotate else ("xy",)
    boxes = tuple(Box(f"b{k}", s, orients) for k, s in enumerate(sizes))
    rules = Rules(support=Support("none"), loading="any", integer_positions=True)
    return Instance(2, boxes, (ContainerType("strip", (width, None), 1),), None, rules, Objective("height"),
                    name="grid")


def test_normal_positions_are_subset_sums_of_the_other_extents():
    # others: 2x5 and 3x7 (no rotation): x sums of {2, 3} = {0, 2, 3, 5}; y sums of {5, 7} = {0, 5, 7, 12}
    p = prepare(strip([(1, 1), (2, 5), (3, 7)], 10, rotate=False))
    assert grid.normal_positions(p, 0, 0, 9) == [0, 2, 3, 5]
    assert grid.normal_positions(p, 0, 1, 11) == [0, 5, 7]
    assert grid.normal_positions(p, 0, 1, 20) == [0, 5, 7, 12]


def test_applies_only_to_the_classic_strip_case():
    inst = strip([(1, 1)], 2)
    assert grid.applies(prepare(inst))
    centre = Instance(2, inst.boxes, inst.containers, None, Rules(support=Support("center"), integer_positions=True),
                      Objective("height"))
    assert not grid.applies(prepare(centre))


def test_a_perfect_packing_with_rotation_is_found_and_checked():
    # A 4x4 square cut into 1x4, 3x1 (tipped: 1x3), 3x3: area 4 + 3 + 9 = 16 = 4 x 4.
    inst = strip([(4, 1), (3, 1), (3, 3)], 4)
    p = prepare(inst)
    assert grid.is_perfect(p, 4)
    g = grid.build_grid(p, 4)
    out = backends.run(g.lp, time_limit=20, integral=True)
    assert out.status == "optimal"
    plan = grid.grid_plan(p, g)
    report = check_plan(inst, plan)
    assert report.feasible and report.objective == 4
    r = solve(inst, time_limit=20)
    assert r.status == "optimal" and r.objective == 4


@pytest.mark.parametrize("sizes, width, height", [
    ([(2, 2), (2, 2), (2, 2), (2, 2)], 4, 4),   # feasible: 2 x 2 grid of squares
    ([(3, 3), (3, 3)], 5, 3),                   # infeasible: two 3-squares in 5 wide at height 3
    ([(3, 1), (3, 1), (2, 2), (1, 2)], 3, 4),   # feasible, area 12 = 3 x 4
    ([(3, 2), (3, 2), (1, 1)], 3, 4),           # infeasible, area 13 > 12
])
def test_grid_and_relative_position_models_agree(sizes, width, height):
    inst = strip(sizes, width)
    p = prepare(inst)
    a = backends.run(grid.build_grid(p, height).lp, time_limit=20, integral=True).status
    b = backends.run(build(p, vcap=height, lower=0, upper=height, goal="feasible").lp, time_limit=20,
                     integral=True).status
    assert a == b
