"""Geometric lower bounds on packed height: continuous (area), tallest box, must-stack boxes, DFFs.

Each function takes a `View` and the objective (`height`: the largest packed height;
`height-sum`: the sum of packed heights) and returns (value, reason). They use only the
geometry of a feasible packing, so they hold under every support, loading and access rule.
"""
from __future__ import annotations

import math
from itertools import combinations
from typing import Iterable

import networkx as nx
import numpy as np

from instances.model import Box, ContainerType

from .common import View
from . import dff as dffs

MAX_SUBSET_TYPES = 10  # enumerate every set of container types up to this many types
CLIQUE_EXACT_NODES = 80
DFF_PAIRS_PER_AXIS = 16  # in 3D, DFF products use this many functions per axis (all of them in 2D)


def type_subsets(view: View) -> Iterable[tuple[tuple[ContainerType, ...], list[Box]]]:
    """Sets S of container types with the boxes that can only go to types in S (nonempty ones)."""
    types = view.instance.containers
    if len(types) <= MAX_SUBSET_TYPES:
        subsets = [c for r in range(1, len(types) + 1) for c in combinations(types, r)]
    else:
        subsets = [types] + sorted({view.types_of(b) for b in view.instance.boxes}, key=len)
    for S in subsets:
        ids = {k.id for k in S}
        boxes = [b for b in view.instance.boxes if {k.id for k in view.types_of(b)} <= ids]
        if boxes:
            yield S, boxes


def effective_base(view: View, ctype: ContainerType) -> float:
    """Footprint measure of `ctype`, enlarged by what tolerated overlaps could gain (never an overestimate)."""
    spread = len(view.instance.boxes) * view.slack
    return math.prod(s + spread for s in ctype.footprint)


def area(view: View, objective: str) -> tuple[float, str]:
    """Continuous bound: volume over base area.

    height: for every set S of types, the boxes that must go to S fill at most
    sum_{k in S} count_k * base_k * H. height-sum: each box adds at least volume / largest
    allowed base to the height of its container.
    """
    if objective == "height":
        best, why = 0.0, "no boxes"
        for S, boxes in type_subsets(view):
            v = sum(b.volume for b in boxes) / sum(k.count * effective_base(view, k) for k in S)
            if v > best:
                best, why = v, f"{_measure(view)} {sum(b.volume for b in boxes):g} of {len(boxes)} boxes over the {_base(view)} of {'+'.join(k.id for k in S)}"
        return view.round_height(best), why
    total = sum(b.volume / max(effective_base(view, k) for k in view.types_of(b)) for b in view.instance.boxes)
    return view.round_height(total), f"each box's {_measure(view)} over its largest allowed {_base(view)}, summed"


def _measure(view: View) -> str:
    """What a box's size multiplies to: area in 2D, volume in 3D (for the reason strings)."""
    return "area" if view.instance.dim == 2 else "volume"


def _base(view: View) -> str:
    """What a container's floor measures: its width in 2D, its base area in 3D."""
    return "width" if view.instance.dim == 2 else "base"


def tallest(view: View, objective: str) -> tuple[float, str]:
    """The tallest box (its smallest height over usable orientations that fit); height-sum: per type, summed."""
    inst = view.instance
    def low(b: Box) -> float:
        return min(view.min_height(b, k) for k in view.types_of(b))
    top = max(inst.boxes, key=low)
    best, why = low(top), f"box {top.id} is at least {low(top):g} tall in every usable orientation"
    if objective == "height-sum":
        per = [max((view.min_height(b, k) for b in view.forced(k)), default=0.0) for k in inst.containers]
        if sum(per) > best:
            best, why = sum(per), "tallest box that must go to each container type, summed over types"
    return view.round_height(best), why


def must_stack(view: View, objective: str) -> tuple[float, str]:
    """Boxes that can never stand side by side in a type must stack in its containers.

    For the boxes that must go to type k, a clique of the "cannot stand beside" graph has
    pairwise overlapping footprints, so in one container their heights add. With m = count_k
    containers the largest height is at least max(h_1, sum/m, h_m + h_(m+1)) (heights sorted
    decreasingly); the sum of heights is at least the clique's sum.
    """
    best, why, total = 0.0, "no two boxes must stack", 0.0
    for k in view.instance.containers:
        boxes = view.forced(k)
        heights = _stack_clique(view, boxes, k)
        if not heights:
            continue
        h = sorted(heights, reverse=True)
        m = k.count
        v = sum(h) if m == 1 else max(h[0], sum(h) / m, h[m - 1] + h[m] if len(h) > m else 0.0)
        # The heaviest clique can miss the tallest box (with m > 1 its spread over m containers may
        # weigh less): that box alone is a clique too, so the bound never falls below it.
        alone = max(view.min_height(b, k) for b in boxes)
        total += sum(h)
        if max(v, alone) > best:
            if v >= alone and len(h) > 1:
                best, why = v, f"{len(h)} boxes bound for {k.id} cannot stand side by side"
            else:
                best, why = max(v, alone), f"the tallest box bound for {k.id} alone (no stack weighs more)"
    if objective == "height-sum":
        return view.round_height(total), "boxes per type that cannot stand side by side, heights summed over types"
    return view.round_height(best), why


def _stack_clique(view: View, boxes: list[Box], ctype: ContainerType) -> list[float]:
    """Heights of a heaviest set of `boxes` that pairwise cannot stand beside each other in `ctype`."""
    if len(boxes) < 2:
        return [view.min_height(b, ctype) for b in boxes]
    g = nx.Graph()
    scale = 1e6 / max(view.min_height(b, ctype) for b in boxes)
    for i, b in enumerate(boxes):
        g.add_node(i, weight=max(1, int(view.min_height(b, ctype) * scale)))
    for (i, a), (j, b) in combinations(enumerate(boxes), 2):
        if not view.can_stand_beside(a, b, ctype):
            g.add_edge(i, j)
    if len(boxes) <= CLIQUE_EXACT_NODES:
        clique, _ = nx.max_weight_clique(g, weight="weight")
    else:
        clique = _greedy_clique(g)
    return [view.min_height(boxes[i], ctype) for i in clique]


def _greedy_clique(g: nx.Graph) -> list[int]:
    order = sorted(g.nodes, key=lambda v: -g.nodes[v]["weight"])
    clique: list[int] = []
    for v in order:
        if all(g.has_edge(v, u) for u in clique):
            clique.append(v)
    return clique


def dual_feasible(view: View, objective: str) -> tuple[float, str]:
    """Dual feasible function bounds (Fekete & Schepers 2004; Carlier, Clautiaux & Moukrim 2007).

    For the boxes that must go to type k: at every level the crossing boxes fit side by side,
    so with a DFF f (per horizontal axis) sum_i f(w_i) [f(d_i)] h_i is at most the sum of the
    type's packed heights, hence at most count_k times the largest. Each box takes its
    smallest value over usable orientations.
    """
    best, why, total = 0.0, "no boxes", 0.0
    for k in view.instance.containers:
        boxes = view.forced(k)
        if not boxes:
            continue
        value, name = _dff_sum(view, boxes, k, axes=range(view.instance.dim - 1))
        total += value
        if value / k.count > best:
            best, why = value / k.count, f"DFF {name} on the {len(boxes)} boxes bound for {k.id}"
    if objective == "height-sum":
        return view.round_height(total), "best DFF per container type, summed over types"
    return view.round_height(best), why


def _dff_sum(view: View, boxes: list[Box], ctype: ContainerType, axes) -> tuple[float, str]:
    """max over DFF combinations of sum_i min_orientation prod_{a in axes} f_a(ext_a) * (other extents).

    `axes` are the axes that get a DFF (normalised by the container); the remaining axes keep
    their plain extent (the vertical one for height bounds).
    """
    axes = list(axes)
    dim = view.instance.dim
    exts = [view.extents(b, ctype) for b in boxes]
    E = max(len(e) for e in exts)
    spread = len(view.instance.boxes) * view.slack
    tables = []  # per DFF axis: (names, values[f, box, orientation])
    for a in axes:
        flat = [e[a] for es in exts for e in es]
        grid, C = dffs.to_grid(flat, ctype.size[a], spread, integral=True)
        lookup = dict(zip(flat, grid))
        fam = dffs.family(grid, C)
        if dim == 3 and len(axes) >= 2:
            fam = _thin(fam, DFF_PAIRS_PER_AXIS)
        vals = np.zeros((len(fam), len(boxes), E))
        for bi, es in enumerate(exts):
            x = np.array([lookup[e[a]] for e in es] + [lookup[es[0][a]]] * (E - len(es)), dtype=np.int64)
            for fi, (_, f) in enumerate(fam):
                vals[fi, bi] = f(x)
        tables.append(([n for n, _ in fam], vals))
    plain = np.ones((len(boxes), E))
    for bi, es in enumerate(exts):
        padded = list(es) + [es[0]] * (E - len(es))
        for ei, e in enumerate(padded):
            plain[bi, ei] = math.prod(e[d] for d in range(dim) if d not in axes)
    # combine: product over DFF axes of all function choices
    prod = plain[None, :, :]
    names = [""]
    for fn, vals in tables:
        prod = (prod[:, None, :, :] * vals[None, :, :, :]).reshape(-1, len(boxes), E)
        names = [f"{a}*{b}" if a else b for a in names for b in fn]
    sums = prod.min(axis=2).sum(axis=1)
    i = int(np.argmax(sums))
    return float(sums[i]), names[i]


def _thin(fam: list, n: int) -> list:
    """Keep the first few functions (identity, u1..u4) and an even spread of the rest, n in all."""
    if len(fam) <= n:
        return fam
    head, rest = fam[:5], fam[5:]
    idx = np.linspace(0, len(rest) - 1, n - 5).round().astype(int)
    return head + [rest[i] for i in sorted(set(idx))]
