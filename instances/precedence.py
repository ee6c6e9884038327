"""The precedence graph of a source arrangement (PROBLEM.md section 3).

Nodes are box ids. An edge j -> i means j must have left the source before i can go:
kind "lift" (j lies in i's lift column) always binds; a side kind ("left", "right",
"front", "back") binds only when i is tipped using that face. Each node carries
"wall_blocked": the faces of the box within the side clearance of a source wall.
"""
from __future__ import annotations

from typing import Iterable

import networkx as nx

from .geometry import Placed, footprints_overlap, overlaps_on
from .model import FACES, FACES_OF_GRIP, Instance
from .validate import source_boxes

# face name -> (horizontal axis, side): side -1 is the low face (left/front), +1 the high one.
FACE_AXIS = {"left": (0, -1), "right": (0, +1), "front": (1, -1), "back": (1, +1)}


def precedence_graph(instance: Instance) -> nx.DiGraph:
    """Lift edges, side edges per face and wall-blocked faces of `instance`'s source.

    Without a source the graph has the boxes as nodes and no edges (every face free).
    With `access: "none"` side edges and wall blocks are dropped.

    Example: box b resting on box a gives the edge b -> a of kind "lift".
    """
    graph = nx.DiGraph()
    for b in instance.boxes:
        graph.add_node(b.id, wall_blocked=frozenset())
    if instance.source is None:
        return graph
    tol = instance.rules.tolerance
    placed = source_boxes(instance)
    for i in placed:
        for j in placed:
            if i is not j and j.bottom >= i.top - tol and footprints_overlap(i, j, tol):
                graph.add_edge(j.id, i.id, kind="lift")
    if instance.rules.access == "none":
        return graph
    clearance = instance.rules.side_clearance
    for i in placed:
        graph.nodes[i.id]["wall_blocked"] = frozenset(_wall_blocked_faces(i, instance, clearance, tol))
        for j in placed:
            if i is j or graph.has_edge(j.id, i.id):
                continue
            for face in FACES[instance.dim]:
                if touches(j, i, face, clearance, tol):
                    graph.add_edge(j.id, i.id, kind=face)
                    break
    return graph


def touches(j: Placed, i: Placed, face: str, clearance: float, tol: float) -> bool:
    """True when j lies within the side clearance of face `face` of i, overlapping on every other axis."""
    axis, side = FACE_AXIS[face]
    gap = i.lo(axis) - j.hi(axis) if side < 0 else j.lo(axis) - i.hi(axis)
    if not -tol <= gap <= clearance + tol:
        return False
    return overlaps_on(i, j, (k for k in range(len(i.pos)) if k != axis), tol)


def _wall_blocked_faces(i: Placed, instance: Instance, clearance: float, tol: float) -> Iterable[str]:
    size = instance.source.size  # type: ignore[union-attr]
    for face in FACES[instance.dim]:
        axis, side = FACE_AXIS[face]
        distance = i.lo(axis) if side < 0 else size[axis] - i.hi(axis)
        if distance <= clearance + tol:
            yield face


def lift_graph(graph: nx.DiGraph) -> nx.DiGraph:
    """The subgraph of lift edges only (always acyclic for a resting arrangement)."""
    lifts = nx.DiGraph()
    lifts.add_nodes_from(graph.nodes)
    lifts.add_edges_from((j, i) for j, i, k in graph.edges(data="kind") if k == "lift")
    return lifts


def face_blockers(graph: nx.DiGraph, box_id: str) -> dict[str, set[str]]:
    """For each side face of `box_id`, the boxes touching it (they must leave before it is free)."""
    out: dict[str, set[str]] = {}
    for j, _, kind in graph.in_edges(box_id, data="kind"):
        if kind != "lift":
            out.setdefault(kind, set()).add(j)
    return out


def free_faces(graph: nx.DiGraph, box_id: str, gone: set[str], faces: Iterable[str]) -> list[str]:
    """The faces among `faces` of `box_id` that are free once the boxes in `gone` have left."""
    blocked = graph.nodes[box_id]["wall_blocked"]
    blockers = face_blockers(graph, box_id)
    return [f for f in faces if f not in blocked and blockers.get(f, set()) <= gone]


def grip_free(graph: nx.DiGraph, box_id: str, grip: str, gone: set[str]) -> bool:
    """True when one face of the pair `grip` (e.g. "left-right") of `box_id` is free now."""
    return bool(free_faces(graph, box_id, gone, FACES_OF_GRIP[grip]))


def to_json(graph: nx.DiGraph) -> dict:
    """The `stackproof graph --format json` document."""
    return {
        "edges": [{"from": j, "to": i, "kind": k} for j, i, k in sorted(graph.edges(data="kind"))],
        "wall_blocked": {n: sorted(f) for n, f in sorted(graph.nodes(data="wall_blocked")) if f},
    }


def to_dot(graph: nx.DiGraph) -> str:
    """Graphviz DOT text: lift edges solid, side edges dashed and labelled with the face."""
    lines = ["digraph precedence {", "  rankdir=TB;"]
    for n, faces in sorted(graph.nodes(data="wall_blocked")):
        label = _esc(n) + (f"\\nwall: {', '.join(sorted(faces))}" if faces else "")
        lines.append(f'  "{_esc(n)}" [label="{label}"];')
    for j, i, k in sorted(graph.edges(data="kind")):
        style = "" if k == "lift" else f', style=dashed, label="{k}"'
        lines.append(f'  "{_esc(j)}" -> "{_esc(i)}" [kind="{k}"{style}];')
    lines.append("}")
    return "\n".join(lines) + "\n"


def _esc(s: str) -> str:
    return s.replace("\\", "\\\\").replace('"', '\\"')
