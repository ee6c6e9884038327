"""A simple constructive plan: take boxes in a precedence-respecting order, drop each at its best spot.

Each box is lowered from above onto the highest box under its footprint (or the floor), at
candidate corner points (bottom-left style), in the allowed orientation, container and position
that grows the objective least. Used as a first incumbent and to make feasible plans in tests.
The result is a candidate: callers must still run the checker on it.
"""
from __future__ import annotations

import math
from itertools import product
from typing import Iterable, Optional, Sequence

import networkx as nx

from .checker import supporters, support_holds
from .geometry import Placed, footprints_overlap
from .model import Instance, Move, Plan, grip_needed
from .precedence import grip_free, lift_graph, precedence_graph


def drop_plan(instance: Instance, order: Optional[Sequence[str]] = None, graph: Optional[nx.DiGraph] = None) -> Optional[Plan]:
    """A feasible-by-construction plan, or None when the greedy gets stuck.

    `order` fixes the sequence (it must respect the lift edges); by default the next box is the
    free one (all lift predecessors gone) with the largest base that can be placed now.
    """
    graph = precedence_graph(instance) if graph is None else graph
    lifts = lift_graph(graph)
    containers: dict[tuple[str, int], list[Placed]] = {}
    moved: set[str] = set()
    moves: list[Move] = []
    pending = list(order) if order is not None else None
    while len(moves) < len(instance.boxes):
        if pending is not None:
            box_id = pending[len(moves)]
            if any(j not in moved for j in lifts.predecessors(box_id)):
                return None
            choices = [box_id]
        else:
            free = [b for b in instance.boxes if b.id not in moved and all(j in moved for j in lifts.predecessors(b.id))]
            free.sort(key=lambda b: (-_base(b.size), -b.size[-1], b.id))
            choices = [b.id for b in free]
        move = next((m for m in (_best_move(instance, graph, c, moved, containers) for c in choices) if m), None)
        if move is None:
            return None
        box_id = move.box
        ext = instance.box(box_id).extents(move.orientation)
        containers.setdefault(move.container, []).append(Placed(box_id, move.at, ext))
        moved.add(box_id)
        moves.append(move)
    return Plan(instance=instance.name, moves=tuple(moves))


def _base(size: Sequence[float]) -> float:
    return math.prod(size[:-1])


def _best_move(instance: Instance, graph: nx.DiGraph, box_id: str, moved: set[str], containers: dict) -> Optional[Move]:
    box = instance.box(box_id)
    tol = instance.rules.tolerance
    heights = {k: max(p.top for p in v) for k, v in containers.items() if v}
    best_key, best = None, None
    for orientation in box.orientations:
        grip = grip_needed(orientation)
        if grip is not None and instance.source is not None and instance.rules.access == "side-face":
            if not grip_free(graph, box_id, grip, moved):
                continue
        ext = box.extents(orientation)
        for ctype in instance.allowed_types(box):
            for slot in range(ctype.count):
                here = containers.get((ctype.id, slot), [])
                for pos in candidate_positions(instance, ext, ctype.footprint, here):
                    placed = landing(pos, ext, here)
                    if ctype.height is not None and placed.top > ctype.height + tol:
                        continue
                    key = _score(instance, heights, (ctype.id, slot), placed, grip is not None)
                    if best_key is not None and key >= best_key:
                        continue
                    if placed.bottom > tol and instance.rules.support.rule != "none":
                        ok, _ = support_holds(placed, supporters(placed, here, tol), instance.rules.support.rule, instance.rules.support.min_fraction, tol)
                        if not ok:
                            continue
                    best_key = key
                    best = Move(box_id, (ctype.id, slot), orientation, placed.pos, grip)
    return best


def landing(foot: Sequence[float], ext: Sequence[float], here: Iterable[Placed]) -> Placed:
    """The box lowered from above at horizontal position `foot`: it sits on the highest top below.

    Nothing packed can then overlap it: any box under its footprint has its top at or below it.
    """
    probe = Placed("", tuple(foot) + (0.0,), tuple(ext))
    z = max((q.top for q in here if footprints_overlap(probe, q, 0.0)), default=0.0)
    return Placed("", tuple(foot) + (z,), tuple(ext))


def candidate_positions(instance: Instance, ext: Sequence[float], footprint: Sequence[float], here: list[Placed]) -> list[tuple[float, ...]]:
    """Corner points per horizontal axis: the wall, the far wall, and the edges of packed boxes."""
    axes = []
    for k, width in enumerate(footprint):
        w = ext[k]
        if w > width + instance.rules.tolerance:
            return []
        pts = {0.0, width - w}
        for q in here:
            pts.update((q.hi(k), q.lo(k) - w))
        if instance.rules.integer_positions:
            pts = {float(math.ceil(p - 1e-9)) for p in pts} | {float(math.floor(width - w + 1e-9))}
        axes.append(sorted(p for p in pts if -1e-9 <= p <= width - w + instance.rules.tolerance))
    return [tuple(max(0.0, p) for p in c) for c in product(*axes)]


def _score(instance: Instance, heights: dict, key: tuple[str, int], placed: Placed, tipped: bool) -> tuple:
    """Objective after the move, then the box's top, upright before tipped, lowest-leftmost."""
    new = dict(heights)
    new[key] = max(heights.get(key, 0.0), placed.top)
    kind = instance.objective.minimise
    if kind == "bins":
        main = float(len(new))
    elif kind == "height-sum":
        main = sum(new.values())
    else:
        main = max(new.values())
    return (main, placed.top, tipped, placed.pos[::-1], key)
