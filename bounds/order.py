"""A height bound from the unstacking order, valid under loading `from-above` with a source.

Claim. Let boxes i and j both have to go to the one and only container that can take them,
let j lie in the transitive lift column of i in the source (j must leave before i), and let
the two never be able to stand side by side in that container. Then j lies entirely below
i's bottom.

Proof. There is no buffer, so j is packed before i, into the same container. Their
footprints overlap (they cannot stand side by side). Under `from-above` loading, when i is
lowered no box already in the container may overlap i's footprint above i's bottom, and j is
there; so top(j) <= bottom(i). []

Call this j "must lie below" i; the relation is transitive (top(j) <= bottom(k) < top(k) <=
bottom(i)). Let D(i) be everything that must lie below i and U(i) everything i must lie
below. The boxes of D(i) fill the container below bottom(i), those of U(i) above top(i), so

    bottom(i) >= below(i) = max( vol(D(i)) / base, max_{j in D(i)} below(j) + h_j )
    H - top(i) >= above(i) = max( vol(U(i)) / base, max_{j in U(i)} above(j) + h_j )

with h_j the smallest usable height of j, by induction along the relation. So the packed
height of that container is at least below(i) + h_i + above(i) for every i. With `height` the
bound is the largest over containers; with `height-sum`, the sum over the single-container
types. Nothing is claimed for boxes that may go to several containers, for loading `any`
(a box might slide in under another one), or for side edges (they bind only when tipping).
"""
from __future__ import annotations

from typing import Optional

import networkx as nx

from instances.model import ContainerType

from .common import View
from .geometric import effective_base


def order_bound(view: View, objective: str) -> Optional[tuple[float, str]]:
    """(value, reason) of the "must lie below" bound, or None when it does not apply."""
    per = order_per_container(view)
    if per is None:
        return None
    if objective == "height-sum":
        return view.round_height(sum(v for v, _ in per.values())), "must-lie-below chains per single container, summed"
    best, why = max(per.values(), default=(0.0, "no box must lie below another"), key=lambda t: t[0])
    return view.round_height(best), why or "no box must lie below another"


def order_per_container(view: View) -> Optional[dict[str, tuple[float, str]]]:
    """Per container type of count 1: (bound on its packed height, reason); None when the bound does not apply."""
    inst = view.instance
    if inst.source is None or inst.rules.loading != "from-above":
        return None
    return {k.id: _one_container(view, k) for k in inst.containers if k.count == 1}


def _one_container(view: View, ctype: ContainerType) -> tuple[float, str]:
    boxes = [b for b in view.instance.boxes if view.single_container(b) is ctype]
    if not boxes:
        return 0.0, ""
    mine = {b.id: b for b in boxes}
    below = view.must_lie_below(ctype, boxes)
    base = effective_base(view, ctype)
    h = {i: view.min_height(b, ctype) for i, b in mine.items()}
    vol = {i: b.volume for i, b in mine.items()}
    under: dict[str, float] = {}
    for i in nx.topological_sort(below):
        preds = list(below.predecessors(i))
        under[i] = max([sum(vol[j] for j in preds) / base] + [under[j] + h[j] for j in preds])
    over: dict[str, float] = {}
    for i in reversed(list(nx.topological_sort(below))):
        succs = list(below.successors(i))
        over[i] = max([sum(vol[j] for j in succs) / base] + [over[j] + h[j] for j in succs])
    top = max(mine, key=lambda i: under[i] + h[i] + over[i])
    value = under[top] + h[top] + over[top]
    return value, f"box {top} in {ctype.id}: {below.in_degree(top)} boxes must lie below it, {below.out_degree(top)} above it"
