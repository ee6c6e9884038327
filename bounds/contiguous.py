"""The contiguous one-dimensional relaxation of 2D strip packing, solved exactly by a small MILP.

Forget where boxes stand across the width and keep only which levels they occupy: each box
takes h consecutive unit levels, and at every level the widths of the boxes there add up to at
most the container width. This is the one-dimensional contiguous bin packing relaxation of
Martello, Monaci & Vigo (2003, INFORMS J. on Computing 15:310-319), stronger than the bar LP
because a box's slices must stay together. We also keep the "must lie below" pairs of
`bounds.order` (valid under loading `from-above` with a source), which bind here as
start(i) >= start(j) + h_j.

Needs integral packed heights (integer sizes, see `View.integral_heights`) so that levels are
integers, and one container: a type of count 1 and the boxes that can only go there. Model:
binary s[i,o,t] = box i in orientation o starts at level t; minimise H with
H >= t + h_io for the chosen start. HiGHS (via scipy.optimize.milp) is stopped at a time limit
and its proved dual bound, rounded up, is the value: valid whether or not it finished (on a
slow machine a hard instance may get a weaker value; tiny ones always finish). The model is
solved twice, with presolve on and off, and the weaker bound is kept (a solver's proof counts
only when an independent second solve confirms it).

Example: three 1x2 boxes in a strip of width 2. The bar LP and the area bound say 3, but
three levels full with two boxes each would need two boxes starting at level 0 and two
ending at level 3: the contiguous relaxation gives 4, the optimum.
"""
from __future__ import annotations

import math
import time
from typing import Optional

import networkx as nx
import numpy as np
import highspy
from scipy.sparse import coo_matrix

from instances.model import Box, ContainerType

from .common import View

TIME_LIMIT = 1.0  # seconds per container; the dual bound at the limit is still valid
MAX_NODES = 200
MAX_CELLS = 3000  # boxes x orientations x levels above which the model is not built


def contiguous_bound(view: View, lower: float = 0.0, time_limit: float = TIME_LIMIT) -> Optional[tuple[float, str]]:
    """(value, reason) of the contiguous relaxation, or None when it does not apply or is too big."""
    inst = view.instance
    if inst.dim != 2 or inst.objective.minimise != "height" or not view.integral_heights:
        return None
    best: Optional[tuple[float, str]] = None
    deadline = time.perf_counter() + time_limit
    todo = [(ctype, [b for b in inst.boxes if view.single_container(b) is ctype])
            for ctype in inst.containers if ctype.count == 1]
    todo = [(ctype, boxes) for ctype, boxes in todo if len(boxes) >= 2]
    for k, (ctype, boxes) in enumerate(todo):
        share = (deadline - time.perf_counter()) / (len(todo) - k)  # the time left, shared by the containers left
        if share <= 0.01:
            break
        got = _one_container(view, ctype, boxes, lower, share)
        if got is not None and (best is None or got[0] > best[0]):
            best = got
    return best


def _below_pairs(view: View, ctype: ContainerType, boxes: list[Box]) -> list[tuple[int, int]]:
    """Pairs (j, i) of indices into `boxes` with j surely below i (`View.must_lie_below`)."""
    index = {b.id: k for k, b in enumerate(boxes)}
    return [(index[j], index[i]) for j, i in view.must_lie_below(ctype, boxes).edges()]


def _greedy_levels(options: list[list[tuple[int, int]]], W: int, pairs: list[tuple[int, int]], horizon: int) -> int:
    """Height of a feasible contiguous packing: boxes in an order respecting `pairs`, each at its lowest level."""
    g = nx.DiGraph()
    g.add_nodes_from(range(len(options)))
    g.add_edges_from(pairs)
    used = np.zeros(horizon + 1, dtype=np.int64)
    end = [0] * len(options)
    top = 0
    for i in nx.lexicographical_topological_sort(g, key=lambda k: -max(h for _, h in options[k])):
        earliest = max([end[j] for j in g.predecessors(i)], default=0)
        best = None
        for w, h in options[i]:
            t = earliest
            while t + h <= horizon and np.any(used[t:t + h] + w > W):
                t += 1
            if t + h <= horizon and (best is None or t + h < best[0] + best[2]):
                best = (t, w, h)
        if best is None:
            return horizon
        t, w, h = best
        used[t:t + h] += w
        end[i] = t + h
        top = max(top, t + h)
    return top


def _one_container(view: View, ctype: ContainerType, boxes: list[Box], lower: float,
                   time_limit: float) -> Optional[tuple[float, str]]:
    W = ctype.size[0]
    if not float(W).is_integer():
        return None  # real widths: levels stay integral, but keep the model to integer data
    W = int(W)
    options = [sorted({(int(e[0]), int(e[1])) for e in view.extents(b, ctype)}) for b in boxes]
    pairs = _below_pairs(view, ctype, boxes)
    horizon = sum(max(h for _, h in o) for o in options)
    upper = _greedy_levels(options, W, pairs, horizon)
    lo = int(math.ceil(lower - 1e-9))
    if upper <= lo:
        return float(upper), f"contiguous relaxation of the boxes bound for {ctype.id}: met by a greedy level packing"
    T = upper
    cols = []  # (box, w, h, t)
    for i, opts in enumerate(options):
        for w, h in opts:
            cols += [(i, w, h, t) for t in range(0, T - h + 1)]
    if len(cols) > MAX_CELLS:
        return None
    n, m = len(boxes), len(cols)
    H = m  # index of the height variable
    rows, cidx, vals, lb, ub = [], [], [], [], []
    r = 0
    # each box starts once
    for k, (i, w, h, t) in enumerate(cols):
        rows.append(i), cidx.append(k), vals.append(1.0)
    lb += [1.0] * n
    ub += [1.0] * n
    r = n
    # level capacities
    for k, (i, w, h, t) in enumerate(cols):
        for level in range(t, t + h):
            rows.append(r + level), cidx.append(k), vals.append(float(w))
    lb += [-np.inf] * T
    ub += [float(W)] * T
    r += T
    # H >= end of every box
    for k, (i, w, h, t) in enumerate(cols):
        rows.append(r + i), cidx.append(k), vals.append(float(t + h))
    for i in range(n):
        rows.append(r + i), cidx.append(H), vals.append(-1.0)
    lb += [-np.inf] * n
    ub += [0.0] * n
    r += n
    # start(i) - end(j) >= 0 for every must-lie-below pair
    for q, (j, i) in enumerate(pairs):
        for k, (b, w, h, t) in enumerate(cols):
            if b == i:
                rows.append(r + q), cidx.append(k), vals.append(float(t))
            elif b == j:
                rows.append(r + q), cidx.append(k), vals.append(-float(t + h))
    lb += [0.0] * len(pairs)
    ub += [np.inf] * len(pairs)
    r += len(pairs)
    A = coo_matrix((vals, (rows, cidx)), shape=(r, m + 1)).tocsc()
    cost = np.zeros(m + 1)
    cost[H] = 1.0
    var_lb = np.zeros(m + 1)
    var_ub = np.ones(m + 1)
    var_lb[H], var_ub[H] = max(0.0, lo), float(T)
    status, dual = _solve(A, cost, var_lb, var_ub, np.array(lb), np.array(ub), H, time_limit)
    if dual is None or not math.isfinite(dual):
        return None
    value, proved = dual, ("solved" if status == "optimal" else "dual bound at the time limit")
    value = float(math.ceil(value - 1e-6))
    extra = f", {len(pairs)} must-lie-below pairs" if pairs else ""
    return value, f"contiguous 1D relaxation of {len(boxes)} boxes in {ctype.id} ({proved}{extra})"


def _solve(A, cost, var_lb, var_ub, row_lb, row_ub, continuous: int, time_limit: float) -> tuple[str, Optional[float]]:
    """(status, proved dual bound) on which HiGHS with presolve on AND with presolve off agree.

    A solver's bound counts only when an independent second solve confirms it: the weaker of
    the two dual bounds is kept, and none when either run ends without one.
    """
    first = _solve_once(A, cost, var_lb, var_ub, row_lb, row_ub, continuous, time_limit / 2, presolve=True)
    second = _solve_once(A, cost, var_lb, var_ub, row_lb, row_ub, continuous, time_limit / 2, presolve=False)
    if first[1] is None or second[1] is None:
        return "limit", None
    status = "optimal" if first[0] == second[0] == "optimal" else "limit"
    return status, min(first[1], second[1])


def _solve_once(A, cost, var_lb, var_ub, row_lb, row_ub, continuous: int, time_limit: float,
                presolve: bool) -> tuple[str, Optional[float]]:
    """Run HiGHS quietly on the MILP; return (status, proved dual bound)."""
    h = _quiet_highs()
    if not presolve:
        h.setOptionValue("presolve", "off")
    h.setOptionValue("time_limit", float(time_limit))
    h.setOptionValue("mip_max_nodes", MAX_NODES)
    h.setOptionValue("threads", 1)
    lp = highspy.HighsLp()
    lp.num_col_, lp.num_row_ = A.shape[1], A.shape[0]
    lp.col_cost_, lp.col_lower_, lp.col_upper_ = cost, var_lb, var_ub
    lp.row_lower_, lp.row_upper_ = row_lb, row_ub
    lp.a_matrix_.format_ = highspy.MatrixFormat.kColwise
    lp.a_matrix_.start_, lp.a_matrix_.index_, lp.a_matrix_.value_ = A.indptr, A.indices, A.data
    kinds = [highspy.HighsVarType.kInteger] * A.shape[1]
    kinds[continuous] = highspy.HighsVarType.kContinuous
    lp.integrality_ = kinds
    h.passModel(lp)
    h.run()
    status = h.getModelStatus()
    if status in (highspy.HighsModelStatus.kInfeasible, highspy.HighsModelStatus.kUnboundedOrInfeasible):
        return "infeasible", None  # impossible (the greedy packing fits), so no bound is taken from it
    dual = h.getInfo().mip_dual_bound
    if status == highspy.HighsModelStatus.kOptimal:
        return "optimal", float(h.getInfo().objective_function_value if dual is None else dual)
    return "limit", float(dual) if dual is not None else None


def _quiet_highs() -> "highspy.Highs":
    """A Highs object made with stdout muted (HiGHS prints a banner when the first one is made)."""
    import os
    import sys

    sys.stdout.flush()
    saved = os.dup(1)
    devnull = os.open(os.devnull, os.O_WRONLY)
    try:
        os.dup2(devnull, 1)
        h = highspy.Highs()
        h.setOptionValue("output_flag", False)
    finally:
        os.dup2(saved, 1)
        os.close(saved)
        os.close(devnull)
    return h
