"""What a box can ever do in a plan: the orientations it can be packed in and the containers they fit.

One source of truth for the model (`milp.problem`) and the bounds (`bounds.common`), so the
two cannot drift apart. An orientation is usable when the box allows it and, if it tips the
box, its grip is not walled in on both faces (PROBLEM.md section 3: a face within the side
clearance of a source wall is never free). An extent fits a container when no side exceeds it
by more than `slack`: the model uses the tolerance, the bounds a little more (a relaxation may
only ever allow more).

Example:
    >>> fits((4.0, 2.0), (4.0, None), 1e-6)
    True
"""
from __future__ import annotations

from typing import Optional, Sequence

import networkx as nx

from .model import FACES_OF_GRIP, Box, Instance, grip_needed


def fits(ext: Sequence[float], size: Sequence[Optional[float]], slack: float) -> bool:
    """True when extents `ext` fit a container of `size` (None: open top), each side within `slack`."""
    return all(s is None or e <= s + slack for e, s in zip(ext, size))


def walled_faces(instance: Instance, graph: Optional[nx.DiGraph]) -> dict[str, frozenset[str]]:
    """Per box, its faces against a source wall (empty without a source or with access `none`)."""
    if instance.source is None or instance.rules.access == "none":
        return {b.id: frozenset() for b in instance.boxes}
    if graph is None:
        from .precedence import precedence_graph

        graph = precedence_graph(instance)
    return {b.id: frozenset(graph.nodes[b.id].get("wall_blocked", frozenset())) for b in instance.boxes}


def walled_grips(walls: frozenset[str]) -> frozenset[str]:
    """The grips (`left-right`, `front-back`) both of whose faces are in `walls`: never usable."""
    return frozenset(g for g, faces in FACES_OF_GRIP.items() if all(f in walls for f in faces))


def usable_orientations(box: Box, walls: frozenset[str]) -> tuple[str, ...]:
    """The box's allowed orientations whose tip (if any) can be gripped by some face."""
    blocked = walled_grips(walls)
    return tuple(o for o in box.orientations if grip_needed(o) not in blocked)
