"""The instance as the model sees it: indexed boxes, container slots, fitting orientations, orders.

Preprocessing lives here (PROBLEM.md sections 2-4), all of it exact:
orientations that fit no allowed container are dropped; a tip whose both grip faces are against
source walls is dropped; lift edges are closed transitively into fixed orders; pairs that can
never stand side by side along an axis are recorded. When no orientation is left for a box, the
instance is proved infeasible with a reason a person can read.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Optional

import networkx as nx

from instances.model import FACES_OF_GRIP, Instance, grip_needed, is_upright
from instances.usable import fits, usable_orientations, walled_faces


@dataclass(frozen=True)
class Slot:
    """One physical target container: the `index`-th container of type `type_id`."""

    type_id: str
    index: int
    size: tuple  # last entry None for an open top


@dataclass
class Problem:
    """Everything the model builder needs, indexed 0..n-1 in instance order."""

    instance: Instance
    ids: list[str]
    ext: list[dict[str, tuple]]  # box -> orientation -> oriented extents (fitting ones only)
    slots: list[Slot]
    slots_of: list[list[int]]  # box -> slot indices it may go to
    before: set[tuple[int, int]]  # (j, i): j must leave the source before i (lift and forced side orders, closed)
    touching: list[dict[str, frozenset]]  # box -> face -> boxes that touch that face
    blocked: list[frozenset]  # box -> wall-blocked faces
    integral: bool  # integer positions and integer sizes: positions on the unit grid
    integral_objective: bool  # every feasible plan has an integer objective (bounds may be rounded up)
    infeasible_reason: Optional[str] = None
    notes: list[str] = field(default_factory=list)

    @property
    def n(self) -> int:
        return len(self.ids)

    @property
    def dim(self) -> int:
        return self.instance.dim

    def orders_matter(self) -> bool:
        """True when the source imposes any order (lift or side edges); else z-order is a valid sequence."""
        return bool(self.before) or any(any(t) for t in self.touching)

    def grip_faces(self, i: int, orientation: str) -> tuple[str, ...]:
        """Faces that could be gripped for this tip (not wall-blocked); () when upright."""
        grip = grip_needed(orientation)
        if grip is None:
            return ()
        return tuple(f for f in FACES_OF_GRIP[grip] if f not in self.blocked[i])

    def always_free(self, i: int, orientation: str) -> bool:
        """True when the tip is possible at any time: upright, or a gripping face nobody touches."""
        if is_upright(orientation):
            return True
        return any(not self.touching[i].get(f) for f in self.grip_faces(i, orientation))

    def can_share(self, i: int, j: int) -> list[int]:
        return [k for k in self.slots_of[i] if k in set(self.slots_of[j])]

    def max_extent(self, i: int, axis: int) -> float:
        return max(e[axis] for e in self.ext[i].values())

    def min_extent(self, i: int, axis: int) -> float:
        return min(e[axis] for e in self.ext[i].values())


def _is_int(v: float) -> bool:
    return float(v).is_integer()


def _precedence(instance: Instance, n: int, index: dict[str, int], graph: Optional[nx.DiGraph]):
    """Lift closure, face contacts and wall blocks from `instances.precedence` (none without a source)."""
    touching: list[dict[str, frozenset]] = [dict() for _ in range(n)]
    blocked: list[frozenset] = [frozenset() for _ in range(n)]
    before: set[tuple[int, int]] = set()
    if instance.source is None:
        return before, touching, blocked
    if graph is None:
        from instances.precedence import precedence_graph

        graph = precedence_graph(instance)
    lift = nx.DiGraph()
    lift.add_nodes_from(range(n))
    faces: list[dict[str, set]] = [dict() for _ in range(n)]
    for u, v, data in graph.edges(data=True):
        j, i = index[u], index[v]
        kind = data.get("kind")
        if kind == "lift":
            lift.add_edge(j, i)
        elif instance.rules.access != "none":
            faces[i].setdefault(kind, set()).add(j)
    for j, i in nx.transitive_closure_dag(lift).edges():
        before.add((j, i))
    if instance.rules.access != "none":
        for box_id, walls in walled_faces(instance, graph).items():
            blocked[index[box_id]] = walls
    touching = [{f: frozenset(s) for f, s in d.items()} for d in faces]
    return before, touching, blocked


def forced_face(orientations: dict, blocked: frozenset) -> Optional[str]:
    """The one face a box must have free in every plan, or None.

    When every usable orientation tips the box and, over all of them, only one grip face is
    not against a wall, every plan grips the box by that face: it must be free when the box
    is moved (PROBLEM.md section 3).
    """
    faces = set()
    for o in orientations:
        grip = grip_needed(o)
        if grip is None:
            return None
        faces.update(f for f in FACES_OF_GRIP[grip] if f not in blocked)
    return next(iter(faces)) if len(faces) == 1 else None


def _close_with_forced_faces(before: set, ext: list, touching: list, blocked: list,
                             ids: list) -> tuple[set, Optional[str]]:
    """Lift orders plus the side orders every plan obeys (`forced_face`), transitively closed.

    A cycle means two boxes must each leave before the other: no plan exists (the reason).
    """
    forced = {(j, i) for i in range(len(ext)) if (f := forced_face(ext[i], blocked[i])) is not None
              for j in touching[i].get(f, ())}
    if forced <= before:
        return before, None
    g = nx.DiGraph()
    g.add_nodes_from(range(len(ext)))
    g.add_edges_from(before | forced)
    try:
        cycle = nx.find_cycle(g)
    except nx.NetworkXNoCycle:
        return set(nx.transitive_closure_dag(g).edges()), None
    names = " -> ".join(repr(ids[u]) for u, _ in cycle) + f" -> {ids[cycle[0][0]]!r}"
    return before, (f"boxes must leave the source in a circle ({names}): each is under the next in the "
                    "lift column or blocks the only face by which the next can be gripped for its tip")


def prepare(instance: Instance, graph: Optional[nx.DiGraph] = None) -> Problem:
    """Index the instance, drop orientations that can never be used, close lift orders.

    `graph` is the instance's precedence graph when the caller already has it.
    """
    tol = instance.rules.tolerance
    ids = [b.id for b in instance.boxes]
    index = {b: i for i, b in enumerate(ids)}
    n = len(ids)
    slots: list[Slot] = []
    slots_of_type: dict[str, list[int]] = {}
    for ct in instance.containers:
        for k in range(ct.count):
            slots_of_type.setdefault(ct.id, []).append(len(slots))
            slots.append(Slot(ct.id, k, tuple(ct.size)))
    before, touching, blocked = _precedence(instance, n, index, graph)

    ext: list[dict[str, tuple]] = []
    slots_of: list[list[int]] = []
    reason = None
    for i, box in enumerate(instance.boxes):
        types = instance.allowed_types(box)
        allowed_slots = [k for t in types for k in slots_of_type[t.id]]
        usable = usable_orientations(box, blocked[i])
        fitting = {}
        walls_only = []
        for o in box.orientations:
            e = box.extents(o)
            if not any(fits(e, t.size, tol) for t in types):
                continue
            if o not in usable:
                walls_only.append((o, grip_needed(o)))
                continue
            fitting[o] = e
        # keep only slots in which at least one remaining orientation fits
        allowed_slots = [k for k in allowed_slots if any(fits(e, slots[k].size, tol) for e in fitting.values())]
        if not fitting and reason is None:
            if walls_only:
                o, grip = walls_only[0]
                a, b = FACES_OF_GRIP[grip]
                reason = (
                    f"box {box.id!r} fits its container only tipped (orientation {o!r}), "
                    f"but both its {a} and {b} faces are against source walls, so it can never be gripped"
                )
            else:
                names = ", ".join(repr(t.id) for t in types)
                reason = f"box {box.id!r} fits no allowed container ({names}) in any allowed orientation"
        ext.append(fitting)
        slots_of.append(allowed_slots)
    if reason is None:
        before, reason = _close_with_forced_faces(before, ext, touching, blocked, ids)

    integral = instance.rules.integer_positions and all(
        _is_int(s) for b in instance.boxes for s in b.size
    ) and all(s is None or _is_int(s) for c in instance.containers for s in c.size)
    # Heights are integer sums when sizes are integers and every box rests on a floor or a supporter.
    int_sizes = all(_is_int(s) for b in instance.boxes for s in b.size)
    integral_objective = int_sizes and (
        instance.rules.integer_positions or instance.rules.support.rule != "none"
    )
    if instance.objective.minimise == "bins":
        integral_objective = True
    return Problem(
        instance, ids, ext, slots, slots_of, before, touching, blocked, integral, integral_objective, reason
    )


def round_bound(value: float, integral: bool, tol: float = 1e-6) -> float:
    """A lower bound on an integer-valued objective may be rounded up (minus a safety tolerance)."""
    if not integral or math.isinf(value):
        return value
    return float(math.ceil(value - tol))
