"""One-dimensional bin packing recognised inside an instance, and solved exactly by arc flow.

When every box, in every orientation it may use, is so long on all axes but one that no two
boxes can ever be beside each other across those axes, two boxes sharing a container must be
separated along the remaining axis: the instance is classic 1D bin packing along that axis
(PROBLEM.md section 5 names the bin packing case). `recognise` returns the 1D data only when
this holds for every rule and container mix, and only when a packing of the 1D answer can
really be carried out (a move sequence that honours the source, supports that hold).

The finder `plans_1d` proposes checked-plan candidates: first-fit and best-fit decreasing
(Johnson 1974), an exhaustive bin-completion search for K = lower-bound bins, and the arc-flow
model of Valério de Carvalho (1999), "Exact solution of bin-packing problems using column
generation and branch-and-bound", Annals of Operations Research 86, on HiGHS. Its graph keeps
only arcs that start at points reachable by larger-or-equal items (the paper's reduction
criteria) and is then compressed by relabelling (Brandão & Pedroso 2016). The finder never
claims a proof: the pipeline checks each plan and proves optimality only by meeting a proved
lower bound. `proved_lower_bound` offers one: Martello-Toth L2, the arc-flow LP bound made exact
with integer item weights, or the arc-flow optimum once an integer search refutes one bin fewer.

Example (Falkenauer 1996, t60_00 from the published set, sizes scaled by 10 on loading):
    >>> data = recognise(instance, prepare(instance))  # doctest: +SKIP
    >>> data.lengths[:3], data.capacity, data.axis      # doctest: +SKIP
    ((366, 268, 366), 1000, 0)
"""
from __future__ import annotations

import bisect
import math
import time
from collections import Counter
from dataclasses import dataclass
from typing import Iterator, Optional, Sequence

import numpy as np

from instances.model import Instance, Move, Plan, grip_needed, is_upright

from .problem import Problem

MAX_SCALE_DIGITS = 4  # sizes with up to 4 decimals are scaled to integers; finer data is not recognised
SEARCH_SHARE = 0.25  # share of the time left given to the bin-completion search before the arc flow
SEARCH_NODES = 1_000_000  # node limit of the bin-completion search (about a second)
MAX_ARCS = 400_000  # larger arc-flow graphs are not built (about a second of Python to build this many)
MAX_MILP_ITEMS = 150  # HiGHS overran a 3 s limit (5.6-11 s, in its root node; interrupt callbacks too) at 200-1000 items
WEIGHT_SCALE = 1_000_000  # LP duals are rounded down to multiples of 1/WEIGHT_SCALE for the exact bound


@dataclass(frozen=True)
class OneD:
    """A recognised 1D bin packing instance and how to map a packing back to moves.

    `lengths[i]` is box i's length (instance order) in units of 1/`scale` along `axis`;
    a container holds any boxes whose lengths sum to at most `capacity`. `slots` are the
    (type id, index) containers usable by every box, `orientation[i]` the orientation box i
    is packed in, `order` a move sequence that every rule accepts whatever the bins.
    """

    lengths: tuple[int, ...]
    capacity: int
    scale: int
    axis: int
    slots: tuple[tuple[str, int], ...]
    orientation: tuple[str, ...]
    order: tuple[int, ...]


# ---------------------------------------------------------------- recognition


def recognise(instance: Instance, problem: Problem) -> Optional[OneD]:
    """The 1D data when the instance is exactly 1D bin packing under every rule; None otherwise.

    Exact means both ways: every feasible plan packs, per container, boxes whose lengths (the
    shortest along the packing axis over the orientations they may use) fit the capacity, and
    every such assignment to containers can be carried out as a plan.
    """
    p, inst = problem, instance
    if inst.objective.minimise != "bins" or p.infeasible_reason or p.n == 0:
        return None
    slots = _common_slots(p)
    if slots is None:
        return None
    size = p.slots[slots[0]].size
    tol = inst.rules.tolerance
    for axis in range(p.dim):
        if not _crosswise_exclusive(p, size, axis, tol):
            continue
        choice = _shortest_orientations(p, axis, tol)
        if axis == p.dim - 1 and not _stack_supported(inst, p, choice, tol):
            return None
        scaled = _scaled(p, choice, axis, size[axis], tol, inst.rules.integer_positions)
        if scaled is None:
            return None
        lengths, capacity, scale = scaled
        picked = _sequence(inst, p, choice)
        if picked is None:
            return None
        order, orientation = picked
        return OneD(lengths, capacity, scale, axis, tuple((p.slots[k].type_id, p.slots[k].index) for k in slots),
                    orientation, order)
    return None


def _common_slots(p: Problem) -> Optional[list[int]]:
    """The containers open to every box, when all boxes share the same ones and they are alike."""
    first = sorted(p.slots_of[0])
    if not first or any(sorted(s) != first for s in p.slots_of):
        return None
    sizes = {p.slots[k].size for k in first}
    if len(sizes) != 1 or any(s is None for s in next(iter(sizes))):
        return None
    return first


def _crosswise_exclusive(p: Problem, size: tuple, axis: int, tol: float) -> bool:
    """True when no two boxes fit beside each other along any axis but `axis`, in any orientations."""
    if p.n < 2:
        return True
    for b in range(p.dim):
        if b == axis:
            continue
        shortest = sorted(p.min_extent(i, b) for i in range(p.n))
        # two boxes can be separated along b only if their extents add up to at most the container's
        # (plus containment and overlap tolerances); a margin of 3 tol keeps the test on the safe side
        if shortest[0] + shortest[1] <= size[b] + 3 * tol:
            return False
    return True


def _shortest_orientations(p: Problem, axis: int, tol: float) -> list[list[str]]:
    """Per box, the orientations of least extent along `axis`, upright ones first."""
    out = []
    for i in range(p.n):
        least = p.min_extent(i, axis)
        shortest = [o for o, e in p.ext[i].items() if e[axis] <= least + tol * 1e-3]
        out.append(sorted(shortest, key=lambda o: not is_upright(o)))
    return out


def _stack_supported(inst: Instance, p: Problem, choice: list[list[str]], tol: float) -> bool:
    """Packing along the vertical axis stacks boxes at the origin corner: the support rule must
    hold for any two of them (rule `none`, or `center` with every half-extent on the lower box)."""
    rule = inst.rules.support.rule
    if rule == "none":
        return True
    if rule != "center":
        return False
    for b in range(p.dim - 1):
        ext = [p.ext[i][o][b] for i in range(p.n) for o in choice[i]]
        if max(ext) / 2 > min(ext) + tol:
            return False
    return True


def _scaled(p: Problem, choice: list[list[str]], axis: int, cap: float, tol: float,
            integer_positions: bool) -> Optional[tuple[tuple[int, ...], int, int]]:
    """Integer lengths and capacity in units of 1/scale, or None when no small scale is exact or
    the tolerance could change which sets fit."""
    reals = [p.ext[i][choice[i][0]][axis] for i in range(p.n)]
    for digits in range(MAX_SCALE_DIGITS + 1):
        scale = 10 ** digits
        if integer_positions and scale != 1:
            return None  # cumulative positions would not be integers
        ints = [round(r * scale) for r in reals]
        if all(abs(r * scale - k) <= 1e-9 * max(1.0, abs(r * scale)) for r, k in zip(reals, ints)):
            break
    else:
        return None
    if any(k <= 0 for k in ints):
        return None
    capacity = math.floor((cap + tol) * scale + 1e-9)
    # neighbours may overlap by less than tol each: the fitting sets must not depend on it
    if math.floor((cap + (p.n + 1) * tol) * scale + 1e-9) != capacity:
        return None
    return tuple(ints), capacity, scale


def _sequence(inst: Instance, p: Problem, choice: list[list[str]]) -> Optional[tuple[tuple[int, ...], tuple[str, ...]]]:
    """A move order and orientations that honour the source (lift order, grips), whatever the bins.

    Greedy list scheduling is exact here: a box that may move stays movable as others leave
    (lift predecessors stay gone, a free face stays free), so if any order exists the greedy
    one never gets stuck. None when it does.
    """
    if inst.source is None:
        return tuple(range(p.n)), tuple(c[0] for c in choice)
    from instances.precedence import grip_free, precedence_graph

    graph = precedence_graph(inst)
    side = inst.rules.access == "side-face"
    lifts = [[j for j, _, k in graph.in_edges(p.ids[i], data="kind") if k == "lift"] for i in range(p.n)]
    gone: set[str] = set()
    order: list[int] = []
    orientation: list[Optional[str]] = [None] * p.n
    left = list(range(p.n))
    while left:
        for pos, i in enumerate(left):
            if any(j not in gone for j in lifts[i]):
                continue
            usable = [o for o in choice[i] if is_upright(o) or not side or grip_free(graph, p.ids[i], grip_needed(o), gone)]
            if usable:
                orientation[i] = usable[0]
                order.append(i)
                gone.add(p.ids[i])
                del left[pos]
                break
        else:
            return None
    return tuple(order), tuple(orientation)  # type: ignore[arg-type]


# ---------------------------------------------------------------- plans


def to_plan(instance: Instance, data: OneD, bins: Sequence[Sequence[int]]) -> Plan:
    """Moves in `data.order`; each box beside (or, vertically, on) the earlier ones in its bin."""
    where = {i: k for k, members in enumerate(bins) for i in members}
    fill = [0.0] * len(bins)
    moves = []
    for i in data.order:
        box = instance.boxes[i]
        o = data.orientation[i]
        k = where[i]
        at = [0.0] * instance.dim
        at[data.axis] = fill[k]
        fill[k] += box.extents(o)[data.axis]
        moves.append(Move(box.id, data.slots[k], o, tuple(at), grip_needed(o)))
    return Plan(instance.name, tuple(moves))


def fit_decreasing(lengths: Sequence[int], capacity: int, best: bool) -> list[list[int]]:
    """First-fit (best=False) or best-fit decreasing (Johnson 1974): bins as lists of item indices."""
    bins: list[list[int]] = []
    room: list[int] = []
    for i in sorted(range(len(lengths)), key=lambda i: -lengths[i]):
        w = lengths[i]
        fits = [k for k, r in enumerate(room) if r >= w]
        if not fits:
            bins.append([i])
            room.append(capacity - w)
            continue
        k = min(fits, key=lambda k: room[k]) if best else fits[0]
        bins[k].append(i)
        room[k] -= w
    return bins


def lower_bound_l2(lengths: Sequence[int], capacity: int) -> int:
    """Martello & Toth (1990) bound L2 ("Knapsack problems", Wiley, section 8.3.1), with L1 = ceil(sum/C)."""
    if not lengths:
        return 0
    best = math.ceil(sum(lengths) / capacity)
    half = capacity / 2
    for alpha in sorted({w for w in lengths if w <= half}) or [0]:
        big = [w for w in lengths if w > capacity - alpha]
        mid = [w for w in lengths if capacity - alpha >= w > half]
        small = [w for w in lengths if half >= w >= alpha]
        spare = len(mid) * capacity - sum(mid)
        best = max(best, len(big) + len(mid) + max(0, math.ceil((sum(small) - spare) / capacity)))
    return best


# ---------------------------------------------------------------- bin completion for K bins


class _OutOfBudget(Exception):
    """The bin-completion search ran out of nodes or time."""


def complete_bins(lengths: Sequence[int], capacity: int, k: int, deadline: float,
                  node_limit: int = SEARCH_NODES) -> Optional[list[list[int]]]:
    """A packing into at most `k` bins by depth-first bin completion, or None (none found in budget)."""
    status, packed = bin_completion(lengths, capacity, k, deadline, node_limit)
    return packed if status == "found" else None


def bin_completion(lengths: Sequence[int], capacity: int, k: int, deadline: float,
                   node_limit: int = SEARCH_NODES) -> tuple[str, Optional[list[list[int]]]]:
    """Exhaustive search for a packing into at most `k` bins: ("found", bins), ("none", None) when
    the search ran to its end (a proof that k bins do not suffice), or ("budget", None).

    Each bin is opened with the longest item left (some bin holds it in every packing) and filled
    with every set of the other items that fits, fuller sets first; the waste of the bins together
    may not exceed k * C - sum. A set of items left that failed with some slack fails with any
    smaller one (fewer bins left, less waste allowed), so it is not searched again. Integer
    arithmetic throughout: nothing here depends on a floating-point solver.
    """
    slack = k * capacity - sum(lengths)
    if slack < 0 or (lengths and max(lengths) > capacity):
        return "none", None
    sizes = sorted(set(lengths), reverse=True)
    descending = [-w for w in sizes]  # ascending keys for bisect: first size <= room
    left = [0] * len(sizes)
    at = {w: t for t, w in enumerate(sizes)}
    for w in lengths:
        left[at[w]] += 1
    nodes = [0]

    def fill(t: int, room: int, slack: int, chosen: list[int]) -> Iterator[list[int]]:
        # every set of items of size index >= t that fits `room` wasting <= slack, fuller sets first
        nodes[0] += 1
        if nodes[0] > node_limit or (nodes[0] & 1023 == 0 and time.perf_counter() > deadline):
            raise _OutOfBudget
        for j in range(bisect.bisect_left(descending, -room, lo=t), len(sizes)):
            if left[j]:
                left[j] -= 1
                yield from fill(j, room - sizes[j], slack, chosen + [j])
                left[j] += 1
        if room <= slack:
            yield chosen

    failed: dict[tuple[int, ...], int] = {}  # items left -> largest slack with which they failed

    def pack(bins_left: int, slack: int) -> Optional[list[list[int]]]:
        first = next((t for t in range(len(sizes)) if left[t]), None)
        if first is None:
            return []
        key = tuple(left)
        if bins_left == 0 or failed.get(key, -1) >= slack:
            return None
        left[first] -= 1
        try:
            for chosen in fill(first, capacity - sizes[first], slack, [first]):
                waste = capacity - sum(sizes[t] for t in chosen)
                rest = pack(bins_left - 1, slack - waste)
                if rest is not None:
                    return [chosen] + rest
        finally:
            left[first] += 1
        failed[key] = slack  # the bins left follow from the slack: same items, same slack, same answer
        return None

    try:
        packed = pack(k, slack)
    except _OutOfBudget:
        return "budget", None
    if packed is None:
        return "none", None
    return "found", _assign(lengths, [[sizes[t] for t in b] for b in packed])


def _assign(lengths: Sequence[int], bins_of_sizes: list[list[int]]) -> list[list[int]]:
    """Concrete item indices for bins given as lists of sizes (each item used once)."""
    pool: dict[int, list[int]] = {}
    for i, w in enumerate(lengths):
        pool.setdefault(w, []).append(i)
    return [[pool[w].pop() for w in b] for b in bins_of_sizes]


# ---------------------------------------------------------------- arc flow


@dataclass(frozen=True)
class ArcFlowResult:
    """What the arc-flow MILP found: bins (item indices) or None, and HiGHS's proved bound."""

    bins: Optional[list[list[int]]]
    bound: float
    proved: bool
    arcs: int
    nodes: int


def arc_graph(lengths: Sequence[int], capacity: int,
              max_arcs: int = MAX_ARCS) -> Optional[tuple[list[int], list[tuple[int, int, int]]]]:
    """Nodes and item arcs (tail, head, size index) of the reduced arc-flow graph; None past `max_arcs`.

    Sizes are taken in decreasing order; an arc of size w starts only at a point reachable by
    larger sizes plus fewer than d_w copies of w (Valério de Carvalho 1999, section 3).
    """
    demand = Counter(lengths)
    sizes = sorted(demand, reverse=True)
    reach = {0}
    arcs: list[tuple[int, int, int]] = []
    for t, w in enumerate(sizes):
        level = set(reach)
        seen: set[int] = set()
        for _ in range(demand[w]):
            level = {u for u in level if u + w <= capacity and u not in seen}
            if not level:
                break
            seen |= level
            arcs.extend((u, u + w, t) for u in level)
            if len(arcs) > max_arcs:
                return None
            level = {u + w for u in level}
            reach |= level
    return compress(arcs, sizes, capacity)


def compress(arcs: list[tuple[int, int, int]], sizes: Sequence[int],
             capacity: int) -> tuple[list[int], list[tuple[int, int, int]]]:
    """Merge points of an arc-flow graph by relabelling (Brandão & Pedroso 2016, "Bin packing and
    related problems: general arc-flow formulation with graph compression", C&OR 69, steps 3-4).

    First each point moves up to the latest it could be (the least over its arcs of the head's
    label minus the item), then down to the earliest (the most over arcs into it of the tail's
    label plus the item); points with one label become one. Every arc still spans at least its
    item, so every path still holds items of total length at most C, and every path of the
    original graph survives: the model stays exact. Returns the points (source first, sink last)
    and the distinct arcs.
    """
    out: dict[int, list[tuple[int, int]]] = {}
    points = {capacity}
    for u, v, t in arcs:
        out.setdefault(u, []).append((v, t))
        points.update((u, v))
    late = {}
    for u in sorted(points, reverse=True):
        late[u] = min((late[v] - sizes[t] for v, t in out.get(u, ())), default=capacity)
    moved = {(late[u], late[v], t) for u, v, t in arcs}
    into: dict[int, list[tuple[int, int]]] = {}
    for u, v, t in moved:
        into.setdefault(v, []).append((u, t))
    early = {}
    for v in sorted({late[p] for p in points}):
        early[v] = max((early[u] + sizes[t] for u, t in into.get(v, ())), default=0)
    merged = sorted({(early[u], early[v], t) for u, v, t in moved})
    return sorted(set(early.values())), merged


@dataclass
class _ArcModel:
    """The arc-flow model as HiGHS data: arcs (tail, head, size index; -1 for loss), rows in order
    flow conservation, demand per size, number of bins."""

    lp: object
    arcs: list[tuple[int, int, int]]
    sizes: list[int]
    source: int
    sink: int
    demand_rows: slice
    points: int


def _arc_model(lengths: Sequence[int], capacity: int, lower: int, upper: int, integral: bool) -> Optional[_ArcModel]:
    """Build the model (None when the graph passes MAX_ARCS): minimise the flow out of the source."""
    import highspy
    from scipy.sparse import coo_matrix

    demand = Counter(lengths)
    sizes = sorted(demand, reverse=True)
    graph = arc_graph(lengths, capacity)
    if graph is None:
        return None
    nodes, arcs = graph
    source, sink = nodes[0], nodes[-1]
    row_of = {v: r for r, v in enumerate(v for v in nodes if v not in (source, sink))}
    n_flow = len(row_of)
    # loss arcs: from every inner point straight to the end (the bin's unused room)
    arcs = arcs + [(v, sink, -1) for v in row_of]
    m = len(arcs)
    rows: list[int] = []
    cols: list[int] = []
    vals: list[float] = []
    for k, (u, v, t) in enumerate(arcs):
        if u in row_of:
            rows.append(row_of[u]), cols.append(k), vals.append(-1.0)
        if v in row_of:
            rows.append(row_of[v]), cols.append(k), vals.append(1.0)
        if t >= 0:
            rows.append(n_flow + t), cols.append(k), vals.append(1.0)
        if u == source:
            rows.append(n_flow + len(sizes)), cols.append(k), vals.append(1.0)
    n_rows = n_flow + len(sizes) + 1
    A = coo_matrix((vals, (rows, cols)), shape=(n_rows, m)).tocsc()
    need = [float(demand[w]) for w in sizes]
    lp = highspy.HighsLp()
    lp.num_col_, lp.num_row_ = m, n_rows
    lp.col_cost_ = np.array([1.0 if u == source else 0.0 for u, _, _ in arcs])
    lp.col_lower_, lp.col_upper_ = np.zeros(m), np.full(m, float(upper))  # never binding in the LP: duals sit on rows
    lp.row_lower_ = np.concatenate([np.zeros(n_flow), need, [float(lower)]])
    lp.row_upper_ = np.concatenate([np.zeros(n_flow), need, [float(upper)]])
    lp.a_matrix_.format_ = highspy.MatrixFormat.kColwise
    lp.a_matrix_.start_, lp.a_matrix_.index_, lp.a_matrix_.value_ = A.indptr, A.indices, A.data
    if integral:
        lp.integrality_ = [highspy.HighsVarType.kInteger] * m
    return _ArcModel(lp, arcs, sizes, source, sink, slice(n_flow, n_flow + len(sizes)), len(nodes))


def _run(model: _ArcModel, deadline: float):
    """Solve quietly on one thread within the deadline; the Highs object, for its answers."""
    from bounds.contiguous import _quiet_highs

    h = _quiet_highs()
    h.setOptionValue("time_limit", max(0.05, deadline - time.perf_counter()))
    h.setOptionValue("threads", 1)
    h.setOptionValue("mip_rel_gap", 0.0)
    h.passModel(model.lp)
    h.run()
    return h


def arc_flow(lengths: Sequence[int], capacity: int, lower: int, upper: int, deadline: float) -> ArcFlowResult:
    """Minimise the bins of the arc-flow model (at most `upper`, at least the proved `lower`).

    Past MAX_MILP_ITEMS items or MAX_ARCS arcs nothing is built: the result then has no bins and
    proves nothing.
    """
    import highspy

    if len(lengths) > MAX_MILP_ITEMS:
        return ArcFlowResult(None, float(lower), False, 0, 0)
    model = _arc_model(lengths, capacity, lower, upper, integral=True)
    if model is None or time.perf_counter() >= deadline:
        return ArcFlowResult(None, float(lower), False, 0 if model is None else len(model.arcs), 0)
    h = _run(model, deadline)
    status = h.getModelStatus()
    info = h.getInfo()
    proved = status in (highspy.HighsModelStatus.kOptimal, highspy.HighsModelStatus.kInfeasible)
    bound = math.inf if status == highspy.HighsModelStatus.kInfeasible else float(info.mip_dual_bound)
    bins = None
    if info.primal_solution_status == highspy.SolutionStatus.kSolutionStatusFeasible:
        flow = np.rint(np.asarray(h.getSolution().col_value)).astype(int)
        bins = _assign(lengths, _decompose(model.arcs, flow, model.sizes, model.source, model.sink))
    return ArcFlowResult(bins, bound, proved, len(model.arcs), model.points)


def lp_weight_bound(lengths: Sequence[int], capacity: int, deadline: float) -> Optional[int]:
    """The arc-flow LP bound, made exact: item weights from the LP's demand duals, then
    ceil(total weight / heaviest bin) in integer arithmetic; None without an LP answer.

    Any weights p >= 0 give a valid bound, because a bin of K bins holds weight at most
    V = max { sum of p over a set of items that fits } (a 0/1 knapsack, solved exactly by dynamic
    programming over the integer capacity), so K >= sum(p) / V. The duals of the LP (Valério de
    Carvalho 1999; equal to the Gilmore-Gomory bound) only choose the weights, so a floating-point
    error can weaken the bound, never make it wrong.
    """
    import highspy

    model = _arc_model(lengths, capacity, 0, len(lengths), integral=False)
    if model is None or time.perf_counter() >= deadline:
        return None
    h = _run(model, deadline)
    if h.getModelStatus() != highspy.HighsModelStatus.kOptimal:
        return None
    duals = np.asarray(h.getSolution().row_dual)[model.demand_rows]
    found = []
    for sign in (1.0, -1.0):  # whichever sign convention the solver uses: both weightings are valid
        weight = {w: int(math.floor(min(1.0, max(0.0, sign * d)) * WEIGHT_SCALE)) for w, d in zip(model.sizes, duals)}
        found.append(weight_bound(lengths, capacity, weight))
    return max((b for b in found if b is not None), default=None)


def weight_bound(lengths: Sequence[int], capacity: int, weight: dict[int, int]) -> Optional[int]:
    """ceil(sum of the items' integer weights / the heaviest set that fits one bin); None if all weigh 0."""
    best = np.zeros(capacity + 1, dtype=np.int64)  # best[c]: heaviest set of the items so far within c
    for w in lengths:
        p = weight.get(w, 0)
        if p > 0 and w <= capacity:
            best[w:] = np.maximum(best[w:], best[: capacity + 1 - w] + p)
    heaviest = int(best[-1])
    if heaviest <= 0:
        return None
    total = sum(weight.get(w, 0) for w in lengths)
    return -(-total // heaviest)


def _decompose(arcs: list[tuple[int, int, int]], flow: np.ndarray, sizes: list[int], source: int,
               sink: int) -> list[list[int]]:
    """Split an integer flow into paths source -> sink, one bin each, as lists of sizes."""
    out: dict[int, list[int]] = {}
    for k, (u, _, _) in enumerate(arcs):
        if flow[k] > 0:
            out.setdefault(u, []).append(k)
    flow = flow.copy()
    bins: list[list[int]] = []
    while True:
        start = next((k for k in out.get(source, []) if flow[k] > 0), None)
        if start is None:
            return bins
        path, k = [], start
        while True:
            flow[k] -= 1
            u, v, t = arcs[k]
            if t >= 0:
                path.append(sizes[t])
            if v == sink:
                break
            k = next(k for k in out[v] if flow[k] > 0)
        bins.append(path)


# ---------------------------------------------------------------- the finder


def plans_1d(instance: Instance, problem: Problem, lower: float, deadline: float) -> Iterator[Plan]:
    """Checked-plan candidates for a recognised 1D bin packing instance, best last; nothing otherwise."""
    data = recognise(instance, problem)
    if data is None:
        return
    lengths, cap, count = list(data.lengths), data.capacity, len(data.slots)
    target = max(lower_bound_l2(lengths, cap), math.ceil(lower - 1e-6) if math.isfinite(lower) else 0)
    best = min((fit_decreasing(lengths, cap, b) for b in (False, True)), key=len)
    if len(best) <= count:
        yield to_plan(instance, data, best)
    if len(best) <= target or time.perf_counter() >= deadline:
        return
    share = time.perf_counter() + SEARCH_SHARE * (deadline - time.perf_counter())
    if target <= count:
        found = complete_bins(lengths, cap, target, share, SEARCH_NODES)
        if found is not None:
            yield to_plan(instance, data, found)
            return
    target = max(target, lp_weight_bound(lengths, cap, deadline) or 0)  # a tighter floor for the arc flow
    if len(best) <= target:
        return
    upper = min(len(best) - 1, count)
    if upper < target or time.perf_counter() >= deadline:
        return
    result = arc_flow(lengths, cap, target, upper, deadline)
    if result.bins is not None:
        yield to_plan(instance, data, result.bins)


# ---------------------------------------------------------------- a proved bound (for the pipeline)


def proved_lower_bound(instance: Instance, problem: Problem, deadline: float, upper: Optional[float] = None,
                       node_limit: int = SEARCH_NODES) -> Optional[tuple[float, str]]:
    """A lower bound on the bins of a recognised 1D instance, with its reason; None if not 1D.

    `upper` is the bins of the best checked plan known, if any: the search then only tries to
    prove that no plan with fewer bins exists.

    The largest of: Martello-Toth L2; the arc-flow LP bound made exact (`lp_weight_bound`); and
    the optimum K the arc-flow MILP names (HiGHS, floating point), which stands only when the
    integer bin completion shows that K - 1 bins cannot hold the items (inf when the containers
    available cannot). A wrong solver answer can cost the bound, never make it unsound. Sound
    because recognition is exact: every feasible plan packs each container within the capacity.
    """
    data = recognise(instance, problem)
    if data is None:
        return None
    lengths, cap, count = list(data.lengths), data.capacity, len(data.slots)
    lower, reason = lower_bound_l2(lengths, cap), "Martello-Toth L2"
    best = min(len(fit_decreasing(lengths, cap, b)) for b in (False, True))
    if upper is not None and math.isfinite(upper):
        best = min(best, int(math.floor(upper + 1e-9)))
    if best > lower and lower <= count and time.perf_counter() < deadline:
        lp = lp_weight_bound(lengths, cap, deadline)
        if lp is not None and lp > lower:
            lower, reason = lp, "arc-flow LP with exact integer weights"
    if lower > count:
        return math.inf, f"1D bin packing: {reason} = {lower} bins, more than the {count} containers"
    claim = lower
    if best > lower and time.perf_counter() < deadline:
        top = min(best, count + 1)  # the optimum, or count + 1 for "the containers cannot hold them"
        flow = arc_flow(lengths, cap, lower, min(best - 1, count), deadline)  # anything better than the fit?
        if flow.proved:
            claim = top if flow.bins is None else len(flow.bins)
    if claim > lower and bin_completion(lengths, cap, claim - 1, deadline, node_limit)[0] == "none":
        if claim > count:
            return math.inf, f"1D bin packing: {count} containers cannot hold the items (exhaustive bin completion)"
        return float(claim), (f"1D bin packing: {claim} bins (arc flow, Valério de Carvalho 1999; "
                              f"{claim - 1} bins refuted by exhaustive bin completion)")
    return float(lower), f"1D bin packing: {reason} = {lower} bins"
