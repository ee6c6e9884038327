"""Container decomposition: when every box has its one container, each container's load is a part.

A *part* is the problem restricted to one container and the boxes that can only go there. It
keeps every rule that involves only those boxes, and from the rules that involve other boxes it
keeps what they imply for the part:

- source orders between two boxes of the part (`Problem.before` is already closed transitively,
  so an order that runs through boxes packed elsewhere is kept);
- for each grip face of a box of the part, the boxes of the part that must have left the source
  before that face is free: those touching it, and those ordered before a box touching it that
  is packed elsewhere (that box leaves before the face is free, and they leave before it).

Everything else about the other boxes is dropped, so every plan of the whole instance restricted
to the part is a plan of the part: a part with no plan of height <= H proves that no plan of the
whole instance has height <= H (objective `height`), and the parts' least heights sum to a lower
bound on `height-sum`. The parts' plans are then merged into one sequence (`merge`); the merged
plan still has to pass the checker before it counts.

Decomposition by a shared resource is common practice in exact methods for multi-container
loading; the part relaxation and the merge below are this project's own.
"""
from __future__ import annotations

import dataclasses
from typing import Optional

from instances.geometry import Placed, footprints_overlap
from instances.model import Move, Plan, grip_needed

from .problem import Problem


@dataclasses.dataclass(frozen=True)
class Part:
    """One container's share: its problem, and the index in the whole problem of each of its boxes."""

    slot: int
    problem: Problem
    boxes: tuple[int, ...]


def applies(p: Problem) -> bool:
    """True when every box has exactly one container it may go to (the objective being a height)."""
    if p.n == 0 or any(len(ks) != 1 for ks in p.slots_of):
        return False
    return p.instance.objective.minimise in ("height", "height-sum")


def parts(p: Problem) -> list[Part]:
    """The part of every container in use, in slot order."""
    slots = sorted({ks[0] for ks in p.slots_of})
    return [part(p, k) for k in slots]


def part(p: Problem, k: int) -> Part:
    """The relaxation of `p` to slot `k` and the boxes that can only go there (see the module text)."""
    members = tuple(i for i in range(p.n) if p.slots_of[i] == [k])
    inside = set(members)
    new = {i: n for n, i in enumerate(members)}
    before = {(new[j], new[i]) for j, i in p.before if j in inside and i in inside}
    touching = []
    for i in members:
        faces = {}
        for f, touch in p.touching[i].items():
            outside = touch - inside
            need = {new[j] for j in touch & inside}
            need |= {new[s] for s in members if any((s, t) in p.before for t in outside)}
            need.discard(new[i])
            faces[f] = frozenset(need)
        touching.append(faces)
    slot = p.slots[k]
    inst = p.instance
    kind = inst.container(slot.type_id)
    sub = dataclasses.replace(
        inst, boxes=tuple(inst.boxes[i] for i in members), containers=(dataclasses.replace(kind, count=1),),
        name=f"{inst.name or 'instance'} / {slot.type_id}[{slot.index}]")
    problem = Problem(
        instance=sub, ids=[p.ids[i] for i in members], ext=[p.ext[i] for i in members],
        slots=[dataclasses.replace(slot, index=0)], slots_of=[[0] for _ in members], before=before,
        touching=touching, blocked=[p.blocked[i] for i in members], integral=p.integral,
        integral_objective=p.integral_objective)
    return Part(k, problem, members)


def merge(p: Problem, pieces: list[tuple[Part, Plan]]) -> Optional[Plan]:
    """One sequence that takes every part's placements in turn, or None when none exists.

    Inside a container, of two boxes whose footprints overlap the lower goes first: then every
    box is lowered past nothing and finds its supporters in place, as in its part's plan. Across
    containers the source decides: a box goes when its source predecessors have gone, and a tip
    when one of its grip faces is free. The greedy takes any box that may go; a box that may go
    still may after more boxes have gone, so the greedy gets stuck only when no sequence exists.
    """
    tol = p.instance.rules.tolerance
    index = {b: i for i, b in enumerate(p.ids)}
    placed: dict[int, Move] = {}
    below: dict[int, set[int]] = {}  # box -> boxes of its container that must go in before it
    for piece, plan in pieces:
        slot = p.slots[piece.slot]
        boxes = []
        for mv in plan.moves:
            i = index[mv.box]
            placed[i] = Move(mv.box, (slot.type_id, slot.index), mv.orientation, mv.at, mv.grip)
            boxes.append((i, Placed(mv.box, mv.at, p.ext[i][mv.orientation])))
        for i, a in boxes:
            below[i] = {j for j, b in boxes if j != i and b.pos[-1] < a.pos[-1] and footprints_overlap(a, b, tol)}
    if len(placed) != p.n:
        return None
    preds = {i: {j for j, t in p.before if t == i} | below[i] for i in range(p.n)}
    gone: set[int] = set()
    order: list[int] = []
    while len(order) < p.n:
        ready = next((i for i in range(p.n) if i not in gone and preds[i] <= gone and _grip_free(p, i, placed[i], gone)),
                     None)
        if ready is None:
            return None
        gone.add(ready)
        order.append(ready)
    return Plan(instance=p.instance.name, moves=tuple(placed[i] for i in order))


def _grip_free(p: Problem, i: int, move: Move, gone: set[int]) -> bool:
    """True when the move keeps the box upright, or one face of the grip its tip needs is free now."""
    if grip_needed(move.orientation) is None:
        return True
    return any(p.touching[i].get(f, frozenset()) <= gone for f in p.grip_faces(i, move.orientation))
