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
plan still has to pass the checker before it counts. When the parts' own plans admit no common
sequence (each waits for a box of the other), `following` fixes the orders one plan sets, and the
other parts are planned again on them, strict (`part`), which always merges.

Decomposition by a shared resource is common practice in exact methods for multi-container
loading; the part relaxation and the merge below are this project's own.
"""
from __future__ import annotations

import dataclasses
from typing import Optional

import networkx as nx

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


def part(p: Problem, k: int, strict: frozenset = frozenset()) -> Part:
    """The relaxation of `p` to slot `k` and the boxes that can only go there (see the module text).

    For the boxes in `strict` (indices in `p`) it is a restriction instead, used to find plans that
    merge: a grip face of theirs touched by a box of another container counts as blocked unless
    that box surely leaves first (see `following`)."""
    members = tuple(i for i in range(p.n) if p.slots_of[i] == [k])
    inside = set(members)
    new = {i: n for n, i in enumerate(members)}
    before = {(new[j], new[i]) for j, i in p.before if j in inside and i in inside}
    touching = []
    blocked = []
    for i in members:
        faces = {}
        walls = set(p.blocked[i])
        for f, touch in p.touching[i].items():
            outside = touch - inside
            if i in strict and any((t, i) not in p.before for t in outside):
                walls.add(f)
            need = {new[j] for j in touch & inside}
            need |= {new[s] for s in members if any((s, t) in p.before for t in outside)}
            need.discard(new[i])
            faces[f] = frozenset(need)
        touching.append(faces)
        blocked.append(frozenset(walls))
    slot = p.slots[k]
    inst = p.instance
    kind = inst.container(slot.type_id)
    sub = dataclasses.replace(
        inst, boxes=tuple(inst.boxes[i] for i in members), containers=(dataclasses.replace(kind, count=1),),
        name=f"{inst.name or 'instance'} / {slot.type_id}[{slot.index}]")
    problem = Problem(
        instance=sub, ids=[p.ids[i] for i in members], ext=[p.ext[i] for i in members],
        slots=[dataclasses.replace(slot, index=0)], slots_of=[[0] for _ in members], before=before,
        touching=touching, blocked=blocked, integral=p.integral,
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


def following(p: Problem, piece: Part, plan: Plan) -> Optional[Problem]:
    """`p` with the orders one part's plan fixes: its sequence, and for each tip the other containers'
    boxes touching the face it uses (one no source order keeps blocked). Closed transitively;
    None when they contradict the source orders. Planning the other parts on the result, strict
    (`part`), gives plans that `merge` always joins."""
    index = {b: i for i, b in enumerate(p.ids)}
    mine = set(piece.boxes)
    seq = [index[mv.box] for mv in plan.moves]
    edges = set(p.before) | set(zip(seq, seq[1:]))
    for i, mv in zip(seq, plan.moves):
        if grip_needed(mv.orientation) is None:
            continue
        faces = p.grip_faces(i, mv.orientation)
        outside = {f: {t for t in p.touching[i].get(f, ()) if t not in mine} for f in faces}
        usable = [f for f in faces if not any((i, t) in p.before for t in outside[f])]
        if not usable:
            return None
        face = min(usable, key=lambda f: sum((t, i) not in p.before for t in outside[f]))
        edges |= {(t, i) for t in outside[face]}
    graph = nx.DiGraph(list(edges))
    if not nx.is_directed_acyclic_graph(graph):
        return None
    return dataclasses.replace(p, before=set(nx.transitive_closure_dag(graph).edges()))


def _grip_free(p: Problem, i: int, move: Move, gone: set[int]) -> bool:
    """True when the move keeps the box upright, or one face of the grip its tip needs is free now."""
    if grip_needed(move.orientation) is None:
        return True
    return any(p.touching[i].get(f, frozenset()) <= gone for f in p.grip_faces(i, move.orientation))
