"""The plan checker: the only judge of feasibility (PROBLEM.md sections 3-6).

`check_plan` replays a plan move by move against the real state (what has left the source,
what stands in each container), records every violated rule with the numbers, and keeps
judging after a violation. It then scores the final packing.

Example:
    >>> report = check_plan(instance, plan)          # doctest: +SKIP
    >>> report.feasible, report.objective, report.tips  # doctest: +SKIP
    (True, 5, 1)
"""
from __future__ import annotations

from dataclasses import dataclass, field
from itertools import product
from typing import Optional

import networkx as nx

from .geometry import Placed, footprints_overlap, point_on_face, union_measure, volumes_overlap
from .model import Instance, Move, Plan, grip_needed, is_upright
from .precedence import grip_free, precedence_graph

# Stable rule names, one per rule of PROBLEM.md section 4 (and the plan-level rules of section 6).
RULES = (
    "unknown-box", "repeated-box", "missing-box", "orientation", "unknown-container",
    "dimension", "lift-order", "side-access", "grip", "containment", "height-limit",
    "overlap", "loading", "support", "target", "integer-position",
)


@dataclass(frozen=True)
class Violation:
    """One broken rule: at which move (None for plan-level), which box, which rule, the numbers."""

    move: Optional[int]
    box: Optional[str]
    rule: str
    detail: str

    def __str__(self) -> str:
        where = "plan" if self.move is None else f"move {self.move + 1}"  # moves count from 1 for people
        if self.box is not None:
            where += f" (box {self.box})"
        return f"{where}: {self.rule}: {self.detail}"


@dataclass
class CheckReport:
    """What the checker found. `objective` is computed from the final packing, feasible or not."""

    feasible: bool
    violations: list[Violation]
    objective: Optional[float]
    tips: int
    heights: dict[tuple[str, int], float]
    metrics: dict[str, float] = field(default_factory=dict)


def check_plan(instance: Instance, plan: Plan, graph: Optional[nx.DiGraph] = None) -> CheckReport:
    """Replay `plan` on `instance`; return every violation and the scores of the final packing."""
    graph = precedence_graph(instance) if graph is None else graph
    state = _State(instance, graph)
    for index, move in enumerate(plan.moves):
        state.apply(index, move)
    for b in instance.boxes:
        if b.id not in state.moved:
            state.violations.append(Violation(None, b.id, "missing-box", "box is never moved"))
    heights = {key: max(p.top for p in boxes) for key, boxes in state.containers.items() if boxes}
    return CheckReport(
        feasible=not state.violations,
        violations=state.violations,
        objective=objective_value(instance, heights),
        tips=state.tips,
        heights=heights,
        metrics=packing_metrics(instance, state.containers, state.tips),
    )


def objective_value(instance: Instance, heights: dict[tuple[str, int], float]) -> float:
    """PROBLEM.md section 5: the main objective from the packed height of each used container."""
    kind = instance.objective.minimise
    if kind == "height":
        return max(heights.values(), default=0.0)
    if kind == "height-sum":
        return sum(heights.values())
    return float(len(heights))


class _State:
    """The world during a replay: what has left the source, what stands in each container."""

    def __init__(self, instance: Instance, graph: nx.DiGraph):
        self.instance = instance
        self.graph = graph
        self.tol = instance.rules.tolerance
        self.moved: set[str] = set()
        self.containers: dict[tuple[str, int], list[Placed]] = {}
        self.violations: list[Violation] = []
        self.tips = 0

    def flag(self, index: int, move: Move, rule: str, detail: str) -> None:
        self.violations.append(Violation(index, move.box, rule, detail))

    def apply(self, index: int, move: Move) -> None:
        inst = self.instance
        try:
            box = inst.box(move.box)
        except KeyError:
            self.flag(index, move, "unknown-box", f"no box with id {move.box!r} in the instance")
            return
        if move.box in self.moved:
            self.flag(index, move, "repeated-box", "box was already moved by an earlier move")
            return
        self.moved_now(index, move)
        if move.orientation not in box.orientations:
            self.flag(index, move, "orientation", f"{move.orientation!r} is not among the allowed {', '.join(box.orientations)}")
        if len(move.at) != inst.dim or len(move.orientation) != inst.dim:
            self.flag(index, move, "dimension", f"position ({', '.join(f'{a:g}' for a in move.at)}) / orientation {move.orientation!r} do not have {inst.dim} axes")
            return
        type_id, slot = move.container
        try:
            ctype = inst.container(type_id)
        except KeyError:
            self.flag(index, move, "unknown-container", f"no container type {type_id!r}")
            return
        if not 0 <= slot < ctype.count:
            self.flag(index, move, "unknown-container", f"container {type_id!r} index {slot} out of range (count {ctype.count})")
            return
        if box.target is not None and box.target != type_id:
            self.flag(index, move, "target", f"box must go to {box.target!r}, went to {type_id!r}")
        placed = Placed(box.id, tuple(move.at), box.extents(move.orientation))
        self.check_position(index, move, placed, ctype.size)
        here = self.containers.setdefault((type_id, slot), [])
        self.check_overlap(index, move, placed, here)
        if inst.rules.loading == "from-above":
            self.check_loading(index, move, placed, here)
        self.check_support(index, move, placed, here)
        here.append(placed)

    def moved_now(self, index: int, move: Move) -> None:
        """Lift order and tipping access are judged at the moment the box leaves the source."""
        lifts = [j for j, _, k in self.graph.in_edges(move.box, data="kind") if k == "lift" and j not in self.moved]
        if lifts:
            self.flag(index, move, "lift-order", f"boxes still on top of it in the source: {', '.join(sorted(lifts))}")
        needed = grip_needed(move.orientation) if len(move.orientation) == self.instance.dim else None
        if move.grip is not None and is_upright(move.orientation):
            self.flag(index, move, "grip", f"grip {move.grip!r} given for an upright move")
        if needed is not None:
            self.tips += 1
            if move.grip is not None and move.grip != needed:
                self.flag(index, move, "grip", f"grip {move.grip!r} given, but this tip needs {needed!r}")
            elif self.instance.source is not None and self.instance.rules.access == "side-face":
                if not grip_free(self.graph, move.box, needed, self.moved):
                    blocked = ", ".join(sorted(self.graph.nodes[move.box]["wall_blocked"])) or "none"
                    self.flag(index, move, "side-access", f"tip needs a free face of {needed!r}; none is free (wall-blocked: {blocked}; touching boxes still in the source)")
        self.moved.add(move.box)

    def check_position(self, index: int, move: Move, p: Placed, csize: tuple) -> None:
        tol, dim = self.tol, self.instance.dim
        if self.instance.rules.integer_positions:
            bad = [a for a in p.pos if abs(a - round(a)) > tol]
            if bad:
                self.flag(index, move, "integer-position", f"positions must be integers, got {list(p.pos)}")
        for k in range(dim):
            if p.lo(k) < -tol:
                self.flag(index, move, "containment", f"axis {'xyz'[k]}: {p.lo(k)} < 0")
            limit = csize[k]
            if limit is not None and p.hi(k) > limit + tol:
                rule = "height-limit" if k == dim - 1 else "containment"
                self.flag(index, move, rule, f"axis {'xyz'[k]}: {p.lo(k)} + {p.ext[k]} = {p.hi(k)} > {limit}")

    def check_overlap(self, index: int, move: Move, p: Placed, here: list[Placed]) -> None:
        for q in here:
            if volumes_overlap(p, q, self.tol):
                self.flag(index, move, "overlap", f"overlaps box {q.id!r} at {list(q.pos)} size {list(q.ext)}")

    def check_loading(self, index: int, move: Move, p: Placed, here: list[Placed]) -> None:
        for q in here:
            if q.top > p.bottom + self.tol and footprints_overlap(p, q, self.tol) and not volumes_overlap(p, q, self.tol):
                self.flag(index, move, "loading", f"cannot be lowered from above: box {q.id!r} (top {q.top}) stands over its footprint above its bottom {p.bottom}")

    def check_support(self, index: int, move: Move, p: Placed, here: list[Placed]) -> None:
        rule = self.instance.rules.support
        if rule.rule == "none" or abs(p.bottom) <= self.tol:
            return
        ok, detail = support_holds(p, supporters(p, here, self.tol), rule.rule, rule.min_fraction, self.tol)
        if not ok:
            self.flag(index, move, "support", detail)


def supporters(p: Placed, here: list[Placed], tol: float) -> list[Placed]:
    """Boxes whose top is at p's bottom (within tol) and whose top face overlaps p's base."""
    return [q for q in here if abs(q.top - p.bottom) <= tol and footprints_overlap(p, q, tol)]


def supported_measure(p: Placed, sup: list[Placed]) -> float:
    """Exact length (2D) or area (3D) of p's base covered by the supporters' top faces."""
    h = len(p.pos) - 1
    pieces = []
    for q in sup:
        lo = tuple(max(p.lo(k), q.lo(k)) for k in range(h))
        hi = tuple(min(p.hi(k), q.hi(k)) for k in range(h))
        pieces.append((lo, hi))
    return union_measure(pieces)


def base_corners(p: Placed) -> list[tuple[float, ...]]:
    h = len(p.pos) - 1
    return [tuple(c) for c in product(*((p.lo(k), p.hi(k)) for k in range(h)))]


def _on_some_top(point: tuple[float, ...], sup: list[Placed], tol: float) -> bool:
    h = len(point)
    return any(point_on_face(point, [q.lo(k) for k in range(h)], [q.hi(k) for k in range(h)], tol) for q in sup)


def support_holds(p: Placed, sup: list[Placed], rule: str, min_fraction: Optional[float], tol: float) -> tuple[bool, str]:
    """Judge one support rule for a box off the floor; (holds, explanation with the numbers)."""
    h = len(p.pos) - 1
    if rule == "none":
        return True, ""
    if not sup:
        return False, f"bottom at {p.bottom} rests on nothing (no box top there under its base)"
    if rule == "base-fraction":
        base = 1.0
        for k in range(h):
            base *= p.ext[k]
        perimeter = 2.0 if h == 1 else 2.0 * (p.ext[0] + p.ext[1])
        covered = supported_measure(p, sup)
        need = (min_fraction or 0.0) * base
        if covered + tol * perimeter >= need:
            return True, ""
        return False, f"supported {covered:g} of base {base:g} ({covered / base:.1%}) < required {min_fraction:.1%}"
    if rule == "center":
        centre = tuple(p.lo(k) + p.ext[k] / 2 for k in range(h))
        if _on_some_top(centre, sup, tol):
            return True, ""
        return False, f"base centre {list(centre)} lies on no supporter's top face"
    if rule == "corners":
        loose = [list(c) for c in base_corners(p) if not _on_some_top(c, sup, tol)]
        if not loose:
            return True, ""
        return False, f"base corners {loose} lie on no supporter's top face"
    raise ValueError(f"unknown support rule {rule!r}")


def packing_metrics(instance: Instance, containers: dict[tuple[str, int], list[Placed]], tips: int) -> dict[str, float]:
    """Descriptive numbers about a final packing (names of this project's own).

    - `fill_ratio`: packed volume over the used containers' volume up to their packed heights;
    - `centre_rest_share`: share of packed boxes whose base centre is on the floor or on a box top
      (a plain stability indicator, whatever support rule applies);
    - `containers_used`, `tipped_boxes`.
    """
    tol = instance.rules.tolerance
    packed = used = 0.0
    resting = count = 0
    for (type_id, _), boxes in containers.items():
        if not boxes:
            continue
        height = max(p.top for p in boxes)
        foot = 1.0
        for s in instance.container(type_id).footprint:
            foot *= s
        used += foot * height
        for p in boxes:
            vol = 1.0
            for s in p.ext:
                vol *= s
            packed += vol
            count += 1
            centre_ok = abs(p.bottom) <= tol or support_holds(p, supporters(p, boxes, tol), "center", None, tol)[0]
            resting += centre_ok
    return {
        "fill_ratio": packed / used if used > 0 else 0.0,
        "centre_rest_share": resting / count if count else 0.0,
        "containers_used": float(sum(1 for b in containers.values() if b)),
        "tipped_boxes": float(tips),
    }
