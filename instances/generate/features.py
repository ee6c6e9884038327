"""Plain measures of how hard an instance's source makes it, for manifests and for tests.

They read the precedence graph (`instances.precedence`) and the box data only: how deep the
stacks are, how many faces start blocked, how many boxes fit their targets only tipped.
"""
from __future__ import annotations

import networkx as nx

from ..model import FACES, Instance, is_upright, oriented_size
from ..precedence import lift_graph, precedence_graph


def source_features(instance: Instance) -> dict[str, float]:
    """Measures of the source: `stack_depth` (boxes on the longest chain of lift edges),
    `lift_edges`, `blocked_faces` (share of side faces blocked at the start by a wall or a
    neighbour), `only_tipped` and `upright_only` (shares of boxes), `source_ratio` (source floor
    over the widest target floor, along x).

    Example: two boxes, one resting on the other, in a source as wide as both: stack_depth 2,
    lift_edges 1, and every face blocked by a wall.
    """
    n = len(instance.boxes)
    faces = FACES[instance.dim]
    out: dict[str, float] = {"boxes": n}
    if instance.source is not None:
        graph = precedence_graph(instance)
        lifts = lift_graph(graph)
        out["stack_depth"] = nx.dag_longest_path_length(lifts) + 1 if n else 0
        out["lift_edges"] = lifts.number_of_edges()
        blocked = 0
        for b in instance.boxes:
            kinds = {d["kind"] for _, _, d in graph.in_edges(b.id, data=True)} | set(graph.nodes[b.id]["wall_blocked"])
            blocked += len(kinds & set(faces))
        out["blocked_faces"] = blocked / (len(faces) * n) if n else 0.0
        out["source_ratio"] = instance.source.size[0] / max(c.size[0] for c in instance.containers)
    out["only_tipped"] = sum(1 for b in instance.boxes if _fits_only_tipped(instance, b)) / n if n else 0.0
    out["upright_only"] = sum(1 for b in instance.boxes if all(is_upright(o) for o in b.orientations)) / n if n else 0.0
    return out


def _fits_only_tipped(instance: Instance, box) -> bool:
    """True when no upright orientation fits any allowed container but some tipped one does."""
    def fits(o: str) -> bool:
        e = oriented_size(box.size, o)
        return any(all(x <= c for x, c in zip(e, t.size) if c is not None) for t in instance.allowed_types(box))

    upright = [o for o in box.orientations if is_upright(o)]
    tipped = [o for o in box.orientations if not is_upright(o)]
    return not any(fits(o) for o in upright) and any(fits(o) for o in tipped)
