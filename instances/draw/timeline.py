"""What happens at each move of a plan, as the pictures and the step-through page show it.

Built from the instance, the precedence graph and the checker's report (the checker stays the
only judge of feasibility; this module only records where things are and when).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Optional

import networkx as nx

from ..checker import CheckReport, Violation, check_plan
from ..model import FACES, FACES_OF_GRIP, Box, Instance, Move, Plan, grip_needed
from ..precedence import face_blockers, precedence_graph

Key = tuple[str, int]  # a target container: (type id, index)


@dataclass(frozen=True)
class Step:
    """Move `index` (0-based): where the box went, whether it was tipped, what was free, what broke."""

    index: int
    move: Move
    box: Optional[Box]
    extents: Optional[tuple[float, ...]]  # packed extents; None when the move cannot be read
    grip: Optional[str]  # the face pair the tip needs; None for an upright move
    faces: dict[str, str]  # face -> "free", "wall" or "after a, b" (boxes still touching it)
    heights: dict[Key, float]  # packed height of every container after this move
    violations: tuple[Violation, ...]

    @property
    def number(self) -> int:
        """1-based move number, as shown to people."""
        return self.index + 1

    @property
    def tipped(self) -> bool:
        return self.grip is not None

    @property
    def key(self) -> Key:
        return (self.move.container[0], int(self.move.container[1]))


@dataclass(frozen=True)
class Replay:
    instance: Instance
    graph: nx.DiGraph
    plan: Optional[Plan] = None
    report: Optional[CheckReport] = None
    steps: tuple[Step, ...] = ()
    step_of: dict[str, int] = field(default_factory=dict)  # box id -> 1-based move number (first move)
    keys: tuple[Key, ...] = ()  # containers used, in instance order then index

    @property
    def plan_violations(self) -> tuple[Violation, ...]:
        """Violations not tied to one move (e.g. a box never moved)."""
        if self.report is None:
            return ()
        return tuple(v for v in self.report.violations if v.move is None)

    def step_for(self, box_id: str) -> Optional[Step]:
        k = self.step_of.get(box_id)
        return None if k is None else self.steps[k - 1]


def replay(instance: Instance, plan: Optional[Plan] = None, graph: Optional[nx.DiGraph] = None) -> Replay:
    """Replay `plan` (or nothing) on `instance`; see `Replay` and `Step`."""
    graph = precedence_graph(instance) if graph is None else graph
    if plan is None:
        return Replay(instance, graph)
    report = check_plan(instance, plan, graph)
    by_move: dict[int, list[Violation]] = {}
    for v in report.violations:
        if v.move is not None:
            by_move.setdefault(v.move, []).append(v)
    boxes = {b.id: b for b in instance.boxes}
    gone: set[str] = set()
    heights: dict[Key, float] = {}
    steps: list[Step] = []
    step_of: dict[str, int] = {}
    for index, move in enumerate(plan.moves):
        box = boxes.get(move.box)
        extents = packed_extents(instance, box, move)
        grip = grip_needed(move.orientation) if extents is not None else None
        faces = face_states(instance, graph, move.box, gone) if box is not None else {}
        key = (move.container[0], int(move.container[1]))
        if extents is not None:
            top = move.at[-1] + extents[-1]
            heights = {**heights, key: max(heights.get(key, 0.0), top)}
        steps.append(Step(index, move, box, extents, grip, faces, dict(heights), tuple(by_move.get(index, ()))))
        if box is not None and move.box not in step_of:
            step_of[move.box] = index + 1
            gone.add(move.box)
    order = {c.id: n for n, c in enumerate(instance.containers)}
    keys = sorted({s.key for s in steps}, key=lambda k: (order.get(k[0], len(order)), k[0], k[1]))
    return Replay(instance, graph, plan, report, tuple(steps), step_of, tuple(keys))


def packed_extents(instance: Instance, box: Optional[Box], move: Move) -> Optional[tuple[float, ...]]:
    """The box's extents in the move's orientation, or None if the move does not fit the instance."""
    if box is None or len(move.orientation) != instance.dim or len(move.at) != instance.dim:
        return None
    if sorted(move.orientation) != sorted("xyz"[: instance.dim]):
        return None
    return box.extents(move.orientation)


def face_states(instance: Instance, graph: nx.DiGraph, box_id: str, gone: set[str]) -> dict[str, str]:
    """State of each side face of `box_id` once the boxes in `gone` have left the source."""
    if instance.source is None or instance.rules.access == "none" or box_id not in graph:
        return {f: "free" for f in FACES[instance.dim]}
    walls = graph.nodes[box_id]["wall_blocked"]
    blockers = face_blockers(graph, box_id)
    out = {}
    for f in FACES[instance.dim]:
        waiting = sorted(blockers.get(f, set()) - gone)
        out[f] = "wall" if f in walls else ("after " + ", ".join(waiting) if waiting else "free")
    return out


def grip_text(step: Step) -> str:
    """One line on the tip of this move: which face pair it needed and which of those faces were free."""
    if step.grip is None:
        return "upright (no tip)"
    free = [f for f in FACES_OF_GRIP[step.grip] if step.faces.get(f) == "free"]
    return f"tipped: needs the {step.grip} pair, one face free; free then: {', '.join(free) if free else 'none'}"
