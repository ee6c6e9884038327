"""The bar relaxation of strip packing (2D; relaxed in 3D), by column generation.

Cut a feasible 2D packing at any height: the boxes crossing that level form a *pattern*, a
set of boxes (each at most once, in one orientation) whose widths add up to at most the
container width. Integrating over the height, each box i in orientation o occupies exactly
h_io of pattern height. So with x_p >= 0 the total height at which pattern p is the cross-
section of some container of type k:

    height:      min H   s.t.  sum_{p in P_k} x_p <= count_k * H  (every type k)
    height-sum:  min sum_p x_p
    and for every box i:  sum_p x_p [i in p in orientation o] / h_io >= 1.

This is the bar relaxation of Martello, Monaci & Vigo (2003, "An exact approach to the
strip-packing problem", INFORMS J. on Computing 15:310-319; each item becomes h_j unit-high
items of width w_j, here with at most one slice of an item per bin), generalised to targets,
several containers and rotation. Patterns are priced by an exact multiple-choice knapsack.

The reported value is never the LP's own objective (a float that may be off) but a dual bound
(Farley 1990): for any duals pi >= 0 with V_k the largest pattern value sum pi_i / h_io over
type-k patterns, weak duality gives H >= sum pi / sum_k count_k V_k (height) and
sum of heights >= sum pi / max_k V_k (height-sum). V_k is computed by dynamic programming on
widths rounded down to a grid, which can only overestimate it, so the bound is rigorous at
every iteration, and the best one seen (including the area duals we start from) is returned.

In 3D a cross-section is a 2D packing, which is hard to price exactly; patterns are relaxed
to sets whose footprint areas fit the base and of which no two must stack (`_AreaPricer`).
"""
from __future__ import annotations

import math
import time
from dataclasses import dataclass
from typing import Optional

import numpy as np
from scipy.optimize import linprog

from instances.model import Instance

from .common import View

PRICING_GRID = 4000
MAX_ROUNDS = 400
TIME_LIMIT = 10.0
MAX_BOXES_3D = 40
IMPROVE_EPS = 1e-9


@dataclass(frozen=True)
class _Slice:
    """Box `box` (index) packed in type `ctype` (index) with width `w` (real), grid width `g`, height `h`."""

    box: int
    ctype: int
    w: float
    g: int
    h: float


class _Pricer:
    """Exact multiple-choice knapsack over the slices of one container type, on an integer grid."""

    def __init__(self, slices: list[_Slice], n_boxes: int, capacity: int, real_capacity: float):
        self.capacity = capacity
        self.real_capacity = real_capacity
        self.groups: list[list[_Slice]] = [[] for _ in range(n_boxes)]
        for s in slices:
            self.groups[s.box].append(s)
        self.groups = [g for g in self.groups if g]

    def best(self, pi: np.ndarray) -> tuple[float, list[_Slice], bool]:
        """(value, pattern, exact): the largest sum of pi_i / h over patterns and a best pattern.

        Dynamic programming on the grid gives an upper bound (grid widths are rounded down).
        When its pattern does not fit in real widths, an exact branch and bound on the real
        widths is tried; `exact` says whether the value is the true maximum.
        """
        value, pattern = self._grid_best(pi)
        if sum(s.w for s in pattern) <= self.real_capacity:
            return value, pattern, True
        got = _exact_knapsack(self.groups, pi, self.real_capacity)
        if got is None:
            return value, [], False
        return got[0], got[1], True

    def _grid_best(self, pi: np.ndarray) -> tuple[float, list[_Slice]]:
        C = self.capacity
        best = np.zeros(C + 1)
        choices = np.zeros((len(self.groups), C + 1), dtype=np.int16)
        for gi, group in enumerate(self.groups):
            new = best.copy()
            for si, s in enumerate(group):
                v = pi[s.box] / s.h
                if v <= 0 or s.g > C:
                    continue
                cand = np.full(C + 1, -np.inf)
                cand[s.g:] = best[: C + 1 - s.g] + v
                better = cand > new
                new[better] = cand[better]
                choices[gi][better] = si + 1
            best = new
        pattern: list[_Slice] = []
        c = C
        for gi in range(len(self.groups) - 1, -1, -1):
            ch = choices[gi][c]
            if ch:
                s = self.groups[gi][ch - 1]
                pattern.append(s)
                c -= s.g
        return float(best[C]), pattern


def _exact_knapsack(groups: list[list[_Slice]], pi: np.ndarray, capacity: float,
                    max_nodes: int = 200_000, conflicts: Optional[set[tuple[int, int]]] = None,
                    ) -> Optional[tuple[float, list[_Slice]]]:
    """Exact multiple-choice knapsack on real widths by depth-first branch and bound (None past max_nodes).

    Bound at a node: the smaller of the sum of the remaining groups' best values and the
    remaining capacity times the best value per unit width among them (conflicts ignored).
    `conflicts` holds pairs of boxes (smaller index first) that may not share a pattern.
    """
    opts = []
    for g in groups:
        o = sorted(((pi[s.box] / s.h, s) for s in g if pi[s.box] > 0), key=lambda t: -t[0])
        if o:
            opts.append(o)
    opts.sort(key=lambda o: -max(v / max(s.w, 1e-300) for v, s in o))
    n = len(opts)
    suffix_sum = [0.0] * (n + 1)
    suffix_ratio = [0.0] * (n + 1)
    for k in range(n - 1, -1, -1):
        suffix_sum[k] = suffix_sum[k + 1] + opts[k][0][0]
        suffix_ratio[k] = max(suffix_ratio[k + 1], max(v / max(s.w, 1e-300) for v, s in opts[k]))
    best_val, best_set = 0.0, []
    nodes = 0
    chosen: list[_Slice] = []

    def dfs(k: int, room: float, val: float) -> bool:
        nonlocal best_val, best_set, nodes
        nodes += 1
        if nodes > max_nodes:
            return False
        if val > best_val:
            best_val, best_set = val, list(chosen)
        if k == n or val + min(suffix_sum[k], room * suffix_ratio[k]) <= best_val:
            return True
        for v, s in opts[k]:
            if s.w <= room and not (conflicts and any((min(s.box, c.box), max(s.box, c.box)) in conflicts
                                                      for c in chosen)):
                chosen.append(s)
                ok = dfs(k + 1, room - s.w, val + v)
                chosen.pop()
                if not ok:
                    return False
        return dfs(k + 1, room, val)

    if not dfs(0, capacity, 0.0):
        return None
    return best_val, best_set


def _root_bound(groups: list[list[_Slice]], pi: np.ndarray, capacity: float) -> float:
    """A valid upper bound on any pattern's value: min(sum of best values, capacity x best ratio)."""
    best_values = [max((pi[s.box] / s.h for s in g), default=0.0) for g in groups]
    ratio = max((pi[s.box] / s.h / max(s.w, 1e-300) for g in groups for s in g), default=0.0)
    return min(sum(max(v, 0.0) for v in best_values), capacity * max(ratio, 0.0))


class _AreaPricer:
    """3D patterns relaxed: footprint areas add up to at most the base, no two boxes that cannot
    stand side by side. Every real cross-section is such a set, so the bound stays valid."""

    def __init__(self, slices: list[_Slice], n_boxes: int, capacity: float, conflicts: set[tuple[int, int]],
                 max_nodes: int = 20_000):
        self.real_capacity = capacity
        self.conflicts = conflicts
        self.max_nodes = max_nodes
        groups: list[list[_Slice]] = [[] for _ in range(n_boxes)]
        for s in slices:
            groups[s.box].append(s)
        self.groups = [g for g in groups if g]

    def best(self, pi: np.ndarray) -> tuple[float, list[_Slice], bool]:
        got = _exact_knapsack(self.groups, pi, self.real_capacity, self.max_nodes, self.conflicts)
        if got is None:
            return _root_bound(self.groups, pi, self.real_capacity), [], False
        return got[0], got[1], True


def _grid_widths(widths: list[float], capacity: float, spread: float) -> tuple[list[int], int]:
    if float(capacity).is_integer() and spread < 1 and all(float(w).is_integer() for w in widths):
        return [int(w) for w in widths], int(capacity)
    scale = PRICING_GRID / (capacity + spread)
    return [int(math.floor(w * scale)) for w in widths], PRICING_GRID


def bar_bound(instance: Instance, view: Optional[View] = None, objective: Optional[str] = None,
              time_limit: float = TIME_LIMIT) -> Optional[tuple[float, bool]]:
    """(bound, converged) of the bar relaxation, or None when it does not apply or `time_limit` is 0.

    In 3D the cross-section at a level is a 2D packing; patterns are relaxed to sets of boxes
    whose footprint areas fit the base and of which no two must stack (see `_AreaPricer`),
    for instances of at most MAX_BOXES_3D boxes.

    `objective` is `height` or `height-sum` (default: the instance's). `converged` tells whether
    column generation proved the LP optimum (otherwise the value is still a valid bound).

    Example: boxes 2x3 and 2x1 in a strip of width 3 cannot stand side by side, so every
    pattern holds one box and the bound is 3 + 1 = 4 (the area bound gives only 8/3).
    """
    view = view or View(instance)
    objective = objective or instance.objective.minimise
    if objective not in ("height", "height-sum") or not instance.boxes or time_limit <= 0:
        return None
    if instance.dim == 3 and len(instance.boxes) > MAX_BOXES_3D:
        return None
    if view.unplaceable() is not None:
        return math.inf, True
    start = time.perf_counter()
    types = list(instance.containers)
    n = len(instance.boxes)
    spread = n * view.slack
    slices: list[_Slice] = []
    pricers: list[Optional[_Pricer]] = []
    for k, ctype in enumerate(types):
        raw = [(i, e) for i, b in enumerate(instance.boxes) if ctype in view.types_of(b) for e in view.extents(b, ctype)]
        if instance.dim == 2:
            W = ctype.size[0]
            grid, cap = _grid_widths([e[0] for _, e in raw], W, spread)
            mine = [_Slice(i, k, e[0], g, e[1]) for (i, e), g in zip(raw, grid)]
            pricers.append(_Pricer(mine, n, cap, W + spread) if mine else None)
        else:
            mine = [_Slice(i, k, e[0] * e[1], 0, e[2]) for i, e in raw]
            boxes = instance.boxes
            members = sorted({i for i, _ in raw})
            conflicts = {(a, b) for a in members for b in members
                         if a < b and not view.can_stand_beside(boxes[a], boxes[b], ctype)}
            base = (ctype.size[0] + spread) * (ctype.size[1] + spread)
            pricers.append(_AreaPricer(mine, n, base, conflicts) if mine else None)
        slices += mine
    counts = np.array([t.count for t in types], dtype=float)
    columns: list[list[_Slice]] = [[s] for s in slices]
    seen = {tuple(sorted((s.box, s.ctype, s.w, s.h) for s in col)) for col in columns}

    def price(pi: np.ndarray) -> tuple[float, list]:
        """Rigorous dual bound for `pi`, and each type's (value, pattern, exact) pricing answer."""
        answers = [p.best(pi) if p else (0.0, [], True) for p in pricers]
        values = np.array([a[0] for a in answers])  # upper bounds on the true maxima
        denom = float(values @ counts) if objective == "height" else float(values.max(initial=0.0))
        return (float(pi.sum()) / denom if denom > 0 else 0.0), answers

    areas = np.array([b.volume for b in instance.boxes])
    best_bound = price(areas / max(areas.max(), 1e-300))[0]
    converged = False
    for _ in range(MAX_ROUNDS):
        pi, mu, lp_value = _solve_master(columns, n, len(types), counts, objective)
        if pi is None:
            break
        bound_here, answers = price(pi)
        best_bound = max(best_bound, bound_here)
        if view.integral_heights and view.round_height(best_bound * (1 - 1e-12)) >= view.round_height(lp_value):
            converged = True  # the LP optimum is at most lp_value: rounding up cannot gain more
            break
        added, unsure = 0, False
        for k, (value, pattern, exact) in enumerate(answers):
            threshold = mu[k] if objective == "height" else 1.0
            if pricers[k] is None or value <= threshold + IMPROVE_EPS:
                continue
            if not pattern:
                unsure = unsure or not exact  # the grid says maybe, the exact search gave up
                continue
            key = tuple(sorted((s.box, s.ctype, s.w, s.h) for s in pattern))
            if key not in seen:
                seen.add(key)
                columns.append(pattern)
                added += 1
        if not added:
            converged = not unsure
            break
        if time.perf_counter() - start > time_limit:
            break
    bound = best_bound * (1 - 1e-12)
    return view.round_height(bound), converged


def _solve_master(columns: list[list[_Slice]], n: int, n_types: int, counts: np.ndarray, objective: str):
    """Solve the restricted master LP: (pi per box, mu per type, its value), or Nones."""
    m = len(columns)
    cover = np.zeros((n, m))
    for j, col in enumerate(columns):
        for s in col:
            cover[s.box, j] += 1.0 / s.h
    if objective == "height":
        # variables: x_0..x_{m-1}, H
        c = np.zeros(m + 1)
        c[-1] = 1.0
        use = np.zeros((n_types, m + 1))
        for j, col in enumerate(columns):
            use[col[0].ctype, j] = 1.0
        use[:, -1] = -counts
        A = np.vstack([use, np.hstack([-cover, np.zeros((n, 1))])])
        b = np.concatenate([np.zeros(n_types), -np.ones(n)])
    else:
        c = np.ones(m)
        A = -cover
        b = -np.ones(n)
    res = linprog(c, A_ub=A, b_ub=b, bounds=(0, None), method="highs")
    if res.status != 0:
        return None, None, None
    duals = -np.asarray(res.ineqlin.marginals)
    duals = np.maximum(duals, 0.0)
    if objective == "height":
        return duals[n_types:], duals[:n_types], float(res.fun)
    return duals, np.zeros(n_types), float(res.fun)
