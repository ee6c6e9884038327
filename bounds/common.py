"""What every bound needs: the result record, what fits where, who can stand beside whom, rounding.

All bounds here are relaxations of the geometry: a feasible plan gives a packing of every box,
in an allowed orientation, inside a container of an allowed type, without overlaps. Nothing in
this module is specific to one bound.
"""
from __future__ import annotations

import math
import time
from dataclasses import dataclass
from functools import cached_property
from typing import Optional

import networkx as nx

from instances.model import Box, ContainerType, Instance
from instances.precedence import lift_graph, precedence_graph
from instances.usable import fits, usable_orientations, walled_faces

# Slack used wherever a packing might use the tolerance: overlaps shorter than `tol` do not count,
# so two boxes may share up to `tol` along an axis, and a box may stick out by up to `tol`.
SLACK_FACTOR = 3.0
# Relative slack before rounding up: a float sum like 20.000000000004 must not round up to 21.
ROUND_EPS = 1e-9


@dataclass(frozen=True)
class BoundValue:
    """One lower bound: its stable `name`, its `value` (math.inf = proved infeasible), why, and its cost."""

    name: str
    value: float
    reason: str
    seconds: float = 0.0


class View:
    """Cached facts about one instance that several bounds share (usable orientations, fits, rounding)."""

    def __init__(self, instance: Instance, time_limit: float = math.inf):
        self.instance = instance
        self.tol = instance.rules.tolerance
        self.slack = SLACK_FACTOR * self.tol
        self.deadline = time.perf_counter() + time_limit

    def time_left(self) -> float:
        """Seconds left for the bounds that iterate or solve (bar, contiguous); never negative."""
        return max(0.0, self.deadline - time.perf_counter())

    @cached_property
    def walls(self) -> dict[str, frozenset[str]]:
        """Per box, its faces against a source wall (`instances.usable`, shared with the model)."""
        inst = self.instance
        needed = inst.source is not None and inst.rules.access != "none"
        return walled_faces(inst, self.graph if needed else None)

    @cached_property
    def graph(self):
        """The precedence graph (computed once)."""
        return precedence_graph(self.instance)

    def orientations(self, box: Box) -> tuple[str, ...]:
        """The orientations `box` can ever be packed in: allowed, and a tip's grip not walled in on both faces."""
        return usable_orientations(box, self.walls[box.id])

    def fits(self, ext: tuple[float, ...], ctype: ContainerType) -> bool:
        """True when extents `ext` fit inside a container of type `ctype` (its height too, if closed)."""
        return fits(ext, ctype.size, self.slack)

    @cached_property
    def lift_before(self) -> dict[str, set[str]]:
        """Per box, every box in its transitive lift column (they must leave the source before it)."""
        inst = self.instance
        if inst.source is None:
            return {b.id: set() for b in inst.boxes}
        lifts = lift_graph(self.graph)
        return {b.id: nx.ancestors(lifts, b.id) for b in inst.boxes}

    def must_lie_below(self, ctype: ContainerType, boxes: list[Box]) -> nx.DiGraph:
        """Edges j -> i (transitively closed) where box j surely lies under box i in `ctype`.

        Valid for boxes that can only go to the one container of type `ctype`, under loading
        `from-above` with a source: j leaves the source before i (lift column), the two can
        never stand side by side, so their footprints overlap and j, packed first, lies below
        i's bottom (proof in `bounds.order`). Empty for loading `any` or without a source.
        """
        below = nx.DiGraph()
        below.add_nodes_from(b.id for b in boxes)
        inst = self.instance
        if inst.source is None or inst.rules.loading != "from-above":
            return below
        mine = {b.id: b for b in boxes}
        for b in boxes:
            for j in self.lift_before[b.id]:
                if j in mine and not self.can_stand_beside(mine[j], b, ctype):
                    below.add_edge(j, b.id)
        return nx.transitive_closure_dag(below)

    def extents(self, box: Box, ctype: ContainerType) -> list[tuple[float, ...]]:
        """Distinct extents of `box` over its usable orientations that fit in `ctype` (empty: it never fits)."""
        key = (box.id, ctype.id)
        cache = self.__dict__.setdefault("_ext", {})
        if key not in cache:
            seen = []
            for o in self.orientations(box):
                e = box.extents(o)
                if self.fits(e, ctype) and e not in seen:
                    seen.append(e)
            cache[key] = seen
        return cache[key]

    def types_of(self, box: Box) -> tuple[ContainerType, ...]:
        """Allowed container types of `box` in which it fits in some usable orientation."""
        return tuple(k for k in self.instance.allowed_types(box) if self.extents(box, k))

    def unplaceable(self) -> Optional[Box]:
        """A box that fits no allowed container in any usable orientation (then the instance is infeasible)."""
        return next((b for b in self.instance.boxes if not self.types_of(b)), None)

    def min_height(self, box: Box, ctype: ContainerType) -> float:
        """Smallest vertical extent of `box` over the orientations that fit `ctype` (inf if none)."""
        return min((e[-1] for e in self.extents(box, ctype)), default=math.inf)

    def forced(self, ctype: ContainerType) -> list[Box]:
        """Boxes that can only go to containers of type `ctype`."""
        return [b for b in self.instance.boxes if [k.id for k in self.types_of(b)] == [ctype.id]]

    def single_container(self, box: Box) -> Optional[ContainerType]:
        """The container type of `box` when exactly one container in total can take it (type count 1)."""
        types = self.types_of(box)
        if len(types) == 1 and types[0].count == 1:
            return types[0]
        return None

    def can_stand_beside(self, a: Box, b: Box, ctype: ContainerType) -> bool:
        """True when a and b, in some usable orientations fitting `ctype`, have footprints placeable disjointly.

        Two axis-parallel rectangles (intervals in 2D) inside a footprint are disjoint only if
        they are separated along some horizontal axis, so the pair fits iff for some orientations
        and some horizontal axis their extents add up to at most the container's.
        """
        return self._separable(a, b, ctype, range(self.instance.dim - 1))

    def can_share(self, a: Box, b: Box, ctype: ContainerType) -> bool:
        """True when a and b can be packed together in one closed container of type `ctype` (any axis)."""
        return self._separable(a, b, ctype, range(self.instance.dim))

    def _separable(self, a: Box, b: Box, ctype: ContainerType, axes) -> bool:
        axes = list(axes)
        for ea in self.extents(a, ctype):
            for eb in self.extents(b, ctype):
                for k in axes:
                    s = ctype.size[k]
                    if s is None or ea[k] + eb[k] <= s + self.slack:
                        return True
        return False

    @cached_property
    def integral_heights(self) -> bool:
        """True when every plan can be matched by one with integer packed heights, so height bounds round up.

        Needs integer box sizes (every extent of every box). Then, by cases of the rules:
        - support other than `none`: every box stands on the floor or on a supporter's top
          (PROBLEM.md 4.6), placed earlier, so by induction every bottom is a sum of box heights;
        - support `none`, loading `any`: push boxes down one by one until each rests on the
          floor or a box; nothing is violated and nothing grows, and then every bottom is a sum
          of box heights (the normal-pattern argument, Herz 1972; Christofides & Whitlock 1977);
        - support `none`, loading `from-above`: the same push-down, lowest bottom first, keeps
          the vertical order of every pair of boxes with overlapping footprints, so each box can
          still be lowered from above.
        Integer positions are not needed. Caveat: a plan that uses the tolerance to sink a box
        into its supporter can beat a rounded bound by at most (boxes x tolerance).
        """
        return all(float(s).is_integer() for b in self.instance.boxes for s in b.size)

    def round_height(self, value: float) -> float:
        """`value` rounded up when integral heights are implied (with a float-safe margin)."""
        if self.integral_heights and math.isfinite(value):
            return float(math.ceil(value - ROUND_EPS * max(1.0, abs(value))))
        return value


def ceil_count(value: float) -> float:
    """Round a bound on a number of containers up (counts are integers), float-safe."""
    if not math.isfinite(value):
        return value
    return float(max(0, math.ceil(value - ROUND_EPS * max(1.0, abs(value)))))


def capacity(ctype: ContainerType) -> float:
    """Volume (area in 2D) of a closed container."""
    return math.prod(ctype.size)  # type: ignore[arg-type]
