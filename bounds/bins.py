"""Lower bounds on the number of containers used (objective `bins`, closed containers).

Only the geometry of the final packing is used, so the bounds hold under every support,
loading and access rule (a plan that respects the order is in particular a packing). Counts
are integers, so rounding up is always valid here.
"""
from __future__ import annotations

import math

import numpy as np

from instances.model import Box, ContainerType

from . import dff as dffs
from .common import View, ceil_count
from .geometric import _dff_sum, type_subsets


def effective_capacity(view: View, ctype: ContainerType) -> float:
    """Volume of `ctype`, enlarged by what tolerated overlaps could gain."""
    spread = len(view.instance.boxes) * view.slack
    return math.prod(s + spread for s in ctype.size)  # type: ignore[operator]


def closed(view: View) -> bool:
    return all(k.height is not None for k in view.instance.containers)


def area(view: View) -> tuple[float, str]:
    """Continuous bound L0 (Martello & Vigo 1998), per set of types.

    The boxes that must go to types in S need containers of S whose volumes add up to at
    least theirs: at least the smallest number n such that the n largest containers of S do.
    """
    best, why = 0.0, "no boxes"
    for S, boxes in type_subsets(view):
        need = sum(b.volume for b in boxes)
        caps = sorted((effective_capacity(view, k) for k in S for _ in range(k.count)), reverse=True)
        got, n = 0.0, 0
        for c in caps:
            if got >= need * (1 - 1e-12):
                break
            got += c
            n += 1
        value = float(n) if got >= need * (1 - 1e-12) else math.inf
        if value > best:
            best = value
            measure = "area" if view.instance.dim == 2 else "volume"
            why = (f"{measure} {need:g} of {len(boxes)} boxes needs {n} containers of {'+'.join(k.id for k in S)}"
                   if math.isfinite(value) else f"{measure} {need:g} exceeds all containers of {'+'.join(k.id for k in S)}")
    return best, why


def dual_feasible(view: View) -> tuple[float, str]:
    """DFF bound (Fekete & Schepers 2004): with a DFF per axis, sum_i prod_a f_a(ext_ia) <= containers used.

    Applied to the boxes that must go to each type, rounded up per type and summed over types.
    """
    total, parts = 0.0, []
    for k in view.instance.containers:
        boxes = view.forced(k)
        if boxes:
            value, name = _dff_sum(view, boxes, k, axes=range(view.instance.dim))
            if ceil_count(value) > k.count:
                return math.inf, f"DFF {name}: the boxes bound for {k.id} need {ceil_count(value):g} containers, {k.count} exist"
            total += ceil_count(value)
            parts.append(f"{k.id}: {name}")
    return total, "DFF per type (" + "; ".join(parts) + ")"


def half_size(view: View) -> tuple[float, str]:
    """Items larger than half the container on every axis but one must line up along that axis.

    The L1 idea of Martello & Vigo (1998) for 2D and Martello, Pisinger & Vigo (2000) for 3D:
    fix an axis c; the boxes longer than half the container on every other axis in every usable
    orientation cannot be separated along those axes, so those sharing a container lie one
    after another along c. Their extents along c (smallest over orientations) form a 1D bin
    packing instance, bounded with the DFF family (which contains the Martello & Toth L2 bound,
    Fekete & Schepers 2004). Per type, summed over types.
    """
    return _summed_over_types(view, _half_size_type)


def _half_size_type(view: View, boxes: list[Box], ctype: ContainerType) -> tuple[float, str]:
    dim = view.instance.dim
    size = ctype.size
    spread = len(view.instance.boxes) * view.slack
    best, why = 0.0, "no box is larger than half on the other axes"
    for c in range(dim):
        others = [a for a in range(dim) if a != c]
        line = [min(e[c] for e in view.extents(b, ctype)) for b in boxes
                if all(e[a] > size[a] / 2 + view.slack for e in view.extents(b, ctype) for a in others)]
        if not line:
            continue
        grid, C = dffs.to_grid(line, size[c], spread, integral=True)
        x = np.asarray(grid, dtype=np.int64)
        for name, f in dffs.family(grid, C):
            v = ceil_count(float(f(x).sum()))
            if v > best:
                best, why = v, f"{len(line)} boxes line up along axis {'xyz'[c]} (DFF {name})"
    return best, why


def big_items(view: View) -> tuple[float, str]:
    """Large-item bound in the style of Martello & Vigo (1998) L2, with a proof of its own.

    K: boxes larger than half the container on every axis in every usable orientation; no two
    can share a container. For K1 a part of K, let K2 = K - K1 and K3 the other boxes that can
    share a container with no box of K1. Containers holding K1 boxes hold nothing of K2 or
    K3, so K2 and K3 fill other containers, at least |K2| of them, of total volume at least
    vol(K2 + K3):  containers >= |K1| + max(|K2|, ceil(vol(K2 + K3) / V)).
    K1 ranges over the threshold sets of Martello & Vigo (boxes longer than S_a - p_a on every
    axis a, p_a taken from the box sizes) and prefixes of K by volume. Per type, summed.
    """
    return _summed_over_types(view, _big_items_type)


def _big_items_type(view: View, boxes: list[Box], ctype: ContainerType) -> tuple[float, str]:
    dim = view.instance.dim
    size = ctype.size
    n = len(boxes)
    V = effective_capacity(view, ctype)
    vol = np.array([b.volume for b in boxes])
    share = np.zeros((n, n), dtype=bool)
    for i in range(n):
        for j in range(i + 1, n):
            share[i, j] = share[j, i] = view.can_share(boxes[i], boxes[j], ctype)
    # smallest extent of each box on each axis over its usable orientations
    low = np.array([[min(e[a] for e in view.extents(b, ctype)) for a in range(dim)] for b in boxes])
    big = np.all(low > np.array(size) / 2 + view.slack, axis=1)
    K = np.flatnonzero(big)
    best = ceil_count(vol.sum() / V)
    why = "continuous"
    if len(K) == 0:
        return best, why
    cands = [set()]
    order = sorted(K, key=lambda i: -vol[i])
    cands += [set(order[: r + 1]) for r in range(len(order))]
    thresholds = [sorted({float(size[a]) - float(x) for x in low[K, a]} | {0.0}) for a in range(dim)]
    if math.prod(len(t) for t in thresholds) <= 20000:
        for ps in np.array(np.meshgrid(*thresholds)).T.reshape(-1, dim):
            k1 = {int(i) for i in K if np.all(low[i] > np.array(size) - ps)}
            cands.append(k1)
    others = ~big
    seen = set()
    for k1 in cands:
        key = frozenset(k1)
        if key in seen:
            continue
        seen.add(key)
        k2 = [i for i in K if i not in k1]
        if k1:
            ok = ~share[sorted(k1)].any(axis=0) & others
        else:
            ok = others
        v = len(k1) + max(len(k2), ceil_count((vol[k2].sum() + vol[ok].sum()) / V))
        if v > best:
            best, why = float(v), f"{len(k1)}+{len(k2)} large boxes, {int(ok.sum())} boxes that cannot join the first"
    return best, why


def _summed_over_types(view: View, per_type) -> tuple[float, str]:
    """Sum a per-type container bound over the types; infinity when a type needs more than it has."""
    total, parts = 0.0, []
    for k in view.instance.containers:
        boxes = view.forced(k)
        if boxes:
            v, why = per_type(view, boxes, k)
            if v > k.count:
                return math.inf, f"the boxes bound for {k.id} need {v:g} containers ({why}), {k.count} exist"
            total += v
            parts.append(f"{k.id}: {why}")
    return total, "; ".join(parts)
