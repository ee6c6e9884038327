"""Position-indexed feasibility model for the classic 2D strip case on integer data.

When no rule looks at the sequence (no source, loading `any`, support `none`) and the data are
integers, "is there a packing of height <= H?" is a pure placement question. This module asks it
with one binary per (box, orientation, position) and one row per unit cell of the W x H strip
(the discretised formulation of Beasley 1985), with positions restricted to normal patterns: sums
of the extents of other boxes (Herz 1972; Christofides & Whitlock 1977). Every packing can be
pushed left and down onto such positions without changing anything else, so the restriction is
exact. It is used only for a perfect-packing step (the boxes' area fills W x H, so every cell row
is an equality): measured there it beats the relative-position model (Hopper & Turton C1_3:
22 s against 51 s), while on other steps it proves infeasibility more slowly (ngcut1, H = 22:
15.9 s against 1.7 s), so it is not used for them.
"""
from __future__ import annotations

from dataclasses import dataclass

import pulp

from instances.model import Move, Plan

from .problem import Problem

MAX_NONZEROS = 1_500_000  # beyond this the relative-position model is used instead


def applies(p: Problem) -> bool:
    """The classic integer strip case: 2D, no order, no support, one open-top container, height."""
    inst = p.instance
    return (
        p.dim == 2
        and p.integral
        and not p.orders_matter()
        and inst.rules.loading == "any"
        and inst.rules.support.rule == "none"
        and inst.objective.minimise == "height"
        and len(p.slots) == 1
        and p.slots[0].size[-1] is None
    )


def is_perfect(p: Problem, height: int) -> bool:
    """True when the boxes fill the strip of this height exactly (every cell covered)."""
    area = sum(int(b.size[0]) * int(b.size[1]) for b in p.instance.boxes)
    return area == int(p.slots[0].size[0]) * height


def normal_positions(p: Problem, i: int, axis: int, limit: int) -> list[int]:
    """Sums of the extents of other boxes along `axis` (any allowed orientation) up to `limit`."""
    reach = 1  # bit s set: s is a sum of a subset of the other boxes' extents
    mask = (1 << (limit + 1)) - 1
    for j in range(p.n):
        if j == i:
            continue
        step = 0
        for e in {int(e[axis]) for e in p.ext[j].values()}:
            step |= reach << e
        reach = (reach | step) & mask
    return [s for s in range(limit + 1) if reach >> s & 1]


@dataclass
class GridModel:
    lp: pulp.LpProblem
    place: dict  # (i, orientation, x, y) -> binary


def size_estimate(p: Problem, height: int) -> int:
    """Non-zeros of the cell rows (placements times their areas), to decide whether to build it."""
    width = int(p.slots[0].size[0])
    total = 0
    for i in range(p.n):
        for o, (w, h) in p.ext[i].items():
            w, h = int(w), int(h)
            if w > width or h > height:
                continue
            total += len(normal_positions(p, i, 0, width - w)) * len(normal_positions(p, i, 1, height - h)) * w * h
    return total


def build_grid(p: Problem, height: int) -> GridModel:
    """The feasibility model "all boxes inside width x height, no two sharing a unit cell"."""
    width = int(p.slots[0].size[0])
    lp = pulp.LpProblem("strip_cells", pulp.LpMinimize)
    place = {}
    cells: dict = {}
    for i in range(p.n):
        mine = []
        for o, (w, h) in p.ext[i].items():
            w, h = int(w), int(h)
            if w > width or h > height:
                continue
            for x in normal_positions(p, i, 0, width - w):
                for y in normal_positions(p, i, 1, height - h):
                    v = lp.add_variable(f"z_{i}_{o}_{x}_{y}", 0, 1, cat="Binary")
                    place[i, o, x, y] = v
                    mine.append(v)
                    for cx in range(x, x + w):
                        for cy in range(y, y + h):
                            cells.setdefault((cx, cy), []).append(v)
        lp += pulp.lpSum(mine) == 1, f"placed_{i}"
    perfect = is_perfect(p, height)  # then every cell is covered exactly once
    for cx in range(width):
        for cy in range(height):
            vs = cells.get((cx, cy), [])
            if perfect:
                lp += pulp.lpSum(vs) == 1, f"cell_{cx}_{cy}"
            elif len(vs) > 1:
                lp += pulp.lpSum(vs) <= 1, f"cell_{cx}_{cy}"
    lp += pulp.lpSum([])
    return GridModel(lp, place)


def grid_plan(p: Problem, g: GridModel) -> Plan:
    """The chosen placements as a plan, bottom-up (any order is valid in this case)."""
    chosen = []
    for (i, o, x, y), v in g.place.items():
        if (v.varValue or 0.0) > 0.5:
            chosen.append((y, x, i, o))
    chosen.sort()
    slot = p.slots[0]
    moves = tuple(Move(p.ids[i], (slot.type_id, slot.index), o, (float(x), float(y))) for y, x, i, o in chosen)
    return Plan(instance=p.instance.name, moves=moves)
