"""Exhaustive search over loading sequences of one container on a height map (loading from above).

With loading `from-above`, a support rule other than `none` and integer positions on integer
data, a box's place in a container is fixed by the order of the moves and the box's orientation
and horizontal cell: it sits on the highest box under its footprint (PROBLEM.md section 4).
Everything the rules need later is then in the *height map*, the top of each unit column of the
container: a box lowered onto it passes nothing (its bottom is the highest top under it), and its
supporters are exactly the columns of its footprint at that height. So the state after some moves
is (the boxes moved, the height map), and whether the remaining boxes can still follow depends on
that state alone.

`search` walks the moves depth first from the empty container, remembers every state that failed
(a transposition table: other orders of the same moves reach it again), and cuts a state when the
free space above the lowest level at which some remaining box could still cover each column (a box
never rests lower than it could now: the height map only grows) holds less than the
remaining boxes' volume, or when some remaining box has no move left under the height limit (both only grow worse as more
boxes are moved). It answers a plan, "none" (every sequence was tried: an exact proof, in integer
arithmetic), or nothing when its budget runs out. It is used on one container's part of a problem
(`milp.split`), where the part's source orders and grip faces come from `Problem`.

`refute` proves "none" for a relaxation instead: the rules without support, which are unchanged
when the container is turned upside down and the sequence reversed. Searched that way, from the
last box loaded, the stacks that the source orders force on top come first and the space they
waste is seen after a few moves, where the forward search meets it only after every arrangement
of the boxes below; and without support a lower height map dominates a higher one, so far fewer
states are kept. `hunt` uses the same search to look for plans that also meet the support rule.

Example:
    >>> found = search(part.problem, height=12, deadline=time.perf_counter() + 5)  # doctest: +SKIP
    >>> found.status, found.plan                                                    # doctest: +SKIP
    >>> refute(part.problem, height=11, deadline=time.perf_counter() + 5).status      # doctest: +SKIP
    'none'
"""
from __future__ import annotations

import dataclasses
import math
import sys
import time
from dataclasses import dataclass
from functools import lru_cache
from itertools import product
from operator import itemgetter
from typing import Optional

import numpy as np

from instances.model import FACES_OF_GRIP, Move, Plan, grip_needed

from .problem import Problem


@dataclass(frozen=True)
class Found:
    """`status`: "plan" (a sequence within the height, in `plan`, whose packed height is `height`),
    "none" (proved: no sequence), "relaxed" (`refute` only: the relaxation has a plan, `p` may
    not), or "unknown" (the deadline or the state budget ran out);
    `states`: states expanded."""

    status: str
    plan: Optional[Plan] = None
    states: int = 0
    height: Optional[int] = None


def applies(p: Problem) -> bool:
    """One container, loading from above, a support rule, integer positions on integer data."""
    rules = p.instance.rules
    return (len(p.slots) == 1 and p.integral and rules.integer_positions and rules.loading == "from-above"
            and rules.support.rule != "none")


@dataclass(frozen=True)
class _Place:
    """One possible move: a box, an orientation, a horizontal cell, and the columns it covers."""

    box: int
    orientation: str
    at: tuple[int, ...]
    height: int
    cells: tuple[int, ...]
    centre: tuple[int, ...]  # the columns whose closed top face holds the base's centre point
    corners: tuple[int, ...]  # the columns under the base's corners


@dataclass(frozen=True)
class _Footprint:
    """A horizontal extent in a container: every cell where it fits (row-major order), and per cell
    the columns it covers, its centre columns and its corner columns."""

    extent: tuple[int, ...]
    at: tuple[tuple[int, ...], ...]
    cells: tuple[tuple[int, ...], ...]
    centre: tuple[tuple[int, ...], ...]
    corners: tuple[tuple[int, ...], ...]


@lru_cache(maxsize=4096)
def _footprint(size: tuple[int, ...], e: tuple[int, ...]) -> _Footprint:
    """The cells of extent `e` in a container of horizontal `size` (columns numbered row-major)."""
    d = len(size)

    def col(c: tuple[int, ...]) -> int:
        return c[0] if d == 1 else c[0] * size[1] + c[1]

    ats, cells, centres, corners = [], [], [], []
    for at in product(*(range(size[a] - e[a] + 1) for a in range(d))):
        ats.append(tuple(at))
        cells.append(tuple(col(c) for c in product(*(range(at[a], at[a] + e[a]) for a in range(d)))))
        # the centre point at + e/2: on a cell boundary when e is even, inside a cell when odd
        mid = [(at[a] + e[a] // 2 - 1, at[a] + e[a] // 2) if e[a] % 2 == 0 else (at[a] + e[a] // 2,)
               for a in range(d)]
        centres.append(tuple(sorted({col(c) for c in product(*mid)})))
        ends = [(at[a], at[a] + e[a] - 1) for a in range(d)]
        corners.append(tuple(sorted({col(c) for c in product(*ends)})))
    return _Footprint(e, tuple(ats), tuple(cells), tuple(centres), tuple(corners))


class _Rests:
    """Where a box of each footprint rests on a height map, at every cell where it fits: the highest
    top under it. One numpy gather over all footprints at once (each cell's columns padded with
    its first), far cheaper per state than a loop per footprint."""

    def __init__(self, footprints: list[_Footprint]):
        width = max((len(c) for fp in footprints for c in fp.cells), default=1)
        rows: list[tuple[int, ...]] = []
        self.spans: dict[tuple[int, ...], tuple[int, int]] = {}
        for fp in footprints:
            start = len(rows)
            rows.extend(c + (c[0],) * (width - len(c)) for c in fp.cells)
            self.spans[fp.extent] = (start, len(rows))
        self.index = np.array(rows, dtype=np.intp).reshape(len(rows), width)

    def __call__(self, hm) -> list[int]:
        """The rests of every footprint, concatenated in `spans` order."""
        return np.asarray(hm)[self.index].max(axis=1).tolist()


def _places(p: Problem, size: tuple[int, ...]) -> list[list[tuple[str, _Footprint, list[_Place]]]]:
    """Per box, per fitting orientation: its footprint and its moves in the footprint's cell order."""
    d = len(size)
    out = []
    for i in range(p.n):
        mine = []
        for o, ext in p.ext[i].items():
            e = tuple(int(v) for v in ext)
            if any(e[a] > size[a] for a in range(d)):
                continue
            fp = _footprint(size, e[:d])
            mine.append((o, fp, [_Place(i, o, at, e[-1], c, m, k)
                                 for at, c, m, k in zip(fp.at, fp.cells, fp.centre, fp.corners)]))
        out.append(mine)
    return out


def search(p: Problem, height: int, deadline: float, max_states: int = 2_000_000) -> Found:
    """Every loading sequence of `p`'s one container with packed height <= `height`, until one is found.

    `p` must satisfy `applies`. The answer "none" is exact: every move the rules allow was tried
    from every state not already shown to fail.
    """
    return _walk(p, height, deadline, max_states, relaxed=False)


def refute(p: Problem, height: int, deadline: float, max_states: int = 2_000_000) -> Found:
    """Whether even the support-free relaxation of `p`'s one container packs within `height`, searched top down.

    The relaxation keeps every rule but support: the source orders, the grip faces and loading
    from above (a box lies above every earlier box whose footprint it overlaps). Every plan of
    `p` is a plan of it, so its "none" proves that `p` has no plan of height <= `height`.
    Without support the relaxation is unchanged by turning the container upside down and
    reversing the sequence (y -> height - y - h, and "j before i and under i" becomes "i before j
    and under j"), so it is searched from the last box loaded down to the first: the rigid
    stacks that source orders put on top are placed first and the space they waste shows at once.
    Without support, dropping a box to the highest top under it loses nothing (later boxes need
    only to be above it), so the height-map state is exact; a lower height map does everything a
    higher one does (the same moves rest no higher), so a state whose map lies on or above a
    failed map of the same boxes fails too (dominance); and a column is raised to the lowest level
    any remaining box could occupy in it, which changes no later move. A plan of the relaxation
    is turned back and replayed with each box dropped onto the highest top under it (`_drop`):
    status "plan" when that meets the support rule too (a plan of `p`), else "relaxed".

    `p` must satisfy `refutable`. `tests/test_milp_heightmap.py` holds it to the exhaustive oracle and
    to CP-SAT (on the support-free instances, where the relaxation is exact).
    """
    return _walk(_reversed(p), height, deadline, max_states, relaxed=True)


def hunt(p: Problem, height: int, deadline: float, max_states: int = 2_000_000) -> Found:
    """A plan of `p` within `height` from the top-down search of `refute`, its leaves replayed and kept
    only when they meet the support rule: "plan", "unknown", or "none" when the search ended without
    turning a single leaf down (it then walked exactly as `refute` does, whose "none" is a proof).
    Once a leaf is turned down the tables hold states that failed for support only, which a
    relaxation state of the same key could not be told from: its empty answer then proves nothing."""
    return _walk(_reversed(p), height, deadline, max_states, relaxed=True, hunt=True)


def _reversed(p: Problem) -> Problem:
    """`p` with every source order turned round: the sequence built from its end (see `refute`)."""
    return dataclasses.replace(p, before={(i, j) for j, i in p.before})


def refutable(p: Problem) -> bool:
    """One container, loading from above, integer positions on integer data (any support rule)."""
    rules = p.instance.rules
    return len(p.slots) == 1 and p.integral and rules.integer_positions and rules.loading == "from-above"


def _walk(p: Problem, height: int, deadline: float, max_states: int, *, relaxed: bool, hunt: bool = False) -> Found:
    """The depth-first search of `search` (`relaxed` False) and of `refute` (True: `p` has its orders
    reversed already; no support, grips free while the touching boxes are still to come, dominance).
    `hunt` (relaxed only): a leaf counts only when its plan meets the support rule too; the search
    then looks for plans only, and its "none" proves nothing (answered as "unknown")."""
    slot = p.slots[0]
    size = tuple(int(s) for s in slot.size[:-1])
    top = height if slot.size[-1] is None else min(height, int(slot.size[-1]))
    rules = p.instance.rules
    places = _places(p, size)
    gather = _Rests(list({fp.extent: fp for mine in places for _, fp, _ in mine}.values()))
    spans = gather.spans
    n = p.n
    ncols = 1
    for s in size:
        ncols *= s
    volume = [min(int(math.prod(e)) for e in p.ext[i].values()) for i in range(n)]
    min_height = [min(int(e[-1]) for e in p.ext[i].values()) for i in range(n)]
    preds = [sum(1 << j for j in range(n) if (j, i) in p.before) for i in range(n)]
    grip_masks = _grip_masks(p)
    rule = rules.support.rule
    fraction = rules.support.min_fraction or 0.0
    twin_of = _twins(p, preds, grip_masks)
    under = _must_lie_below(p, size)
    topo = _topological(p)
    images_of = [tuple if ncols == 1 else itemgetter(*m) for m in _mirrors(size)]  # a map -> its mirror images
    failed: set = set()
    lower: dict = {}  # relaxation: gone -> [array of failed canonical maps, rows used]
    counter = [0]
    stop = [False]
    rejected = [0]  # hunt: leaves of the relaxation turned down for support

    def supported(pl: _Place, hm: tuple, rest: int, real: bool = False) -> bool:
        if rest == 0 or (relaxed and not real):
            return True
        if rule == "center":
            return any(hm[c] == rest for c in pl.centre)
        if rule == "corners":
            return all(hm[c] == rest for c in pl.corners)
        covered = sum(1 for c in pl.cells if hm[c] == rest)
        return covered + 1e-6 * len(pl.cells) >= fraction * len(pl.cells)

    def real_support(pl: _Place, hm: tuple, rest: int) -> bool:
        return supported(pl, hm, rest, True)

    def moves(gone: int, hm: tuple) -> Optional[list]:
        """The moves allowed now, or None when a cut shows the state cannot be completed."""
        out = []
        left = 0
        lowest_top = [0] * n  # the lowest top each remaining box can have from here
        lowest_rest = [0] * n
        rests: dict = {}  # footprint extent -> (where a box of that footprint rests per cell, the least)
        flat = gather(hm)
        shortest: dict = {}  # footprint extent -> (footprint, least height of a remaining box on it)
        for i in range(n):
            if gone >> i & 1:
                continue
            left += volume[i]
            least_top = least_rest = top + 1
            ready = preds[i] & ~gone == 0 and (twin_of[i] is None or gone >> twin_of[i] & 1)
            for o, fp, pls in places[i]:
                got = rests.get(fp.extent)
                if got is None:
                    start, end = spans[fp.extent]
                    r = flat[start:end]
                    got = rests[fp.extent] = (r, min(r))
                r, lowest = got
                h = pls[0].height
                if lowest + h > top:
                    continue
                if lowest + h < least_top:
                    least_top = lowest + h
                if lowest < least_rest:
                    least_rest = lowest
                if h < shortest.get(fp.extent, (None, top + 1))[1]:
                    shortest[fp.extent] = (fp, h)
                if ready and _tip_free(grip_masks[i], o, gone, relaxed):
                    limit = top - h
                    if relaxed:
                        out.extend((rest + h, rest, pl) for rest, pl in zip(r, pls) if rest <= limit)
                    else:
                        out.extend((rest + h, rest, pl) for rest, pl in zip(r, pls)
                                   if rest <= limit and supported(pl, hm, rest))
            if least_top > top:
                return None  # this box can no longer go anywhere below the limit
            lowest_top[i], lowest_rest[i] = least_top, least_rest
        low = [top] * ncols  # the lowest level at which any remaining box can still cover each column
        for extent, (fp, h) in shortest.items():
            limit = top - h
            for rest, cells in zip(rests[extent][0], fp.cells):
                if rest <= limit:
                    for c in cells:
                        if rest < low[c]:
                            low[c] = rest
        free = sum(top - v for v in low)
        if free < left:
            return None
        # chains of boxes that must lie one on another (loaded in source order, never side by side)
        for i in topo:
            if gone >> i & 1 or not under[i]:
                continue
            floor = max((lowest_top[j] for j in under[i] if not gone >> j & 1), default=0)
            if floor > lowest_rest[i]:
                lowest_top[i] = max(lowest_top[i], floor + min_height[i])
                if lowest_top[i] > top:
                    return None
        out.sort(key=lambda t: (t[0], t[1], t[2].at))
        if relaxed:
            hm[:] = low  # the relaxation's normal form (see `refute`)
        return out

    path: list = []

    def walk(gone: int, hm: tuple) -> bool:
        if gone == (1 << n) - 1:
            if not hunt or _drop(p, top, [pl for pl, _ in reversed(path)], real_support, 0).status == "plan":
                return True
            rejected[0] += 1
            return False
        key = (gone, min(image(hm) for image in images_of))
        if key in failed:
            return False
        counter[0] += 1
        if counter[0] % 64 == 0 and (time.perf_counter() > deadline or counter[0] > max_states):
            stop[0] = True
        if stop[0]:
            return False
        if relaxed:
            hm = list(hm)
            options = moves(gone, hm)
            if options is not None:
                raw, images = key, [image(hm) for image in images_of]
                key = (gone, min(images))
                if key in failed or dominated(gone, images):
                    failed.add(raw)
                    return False
        else:
            options = moves(gone, hm)
        for _, rest, pl in options or ():
            new = list(hm)
            for c in pl.cells:
                new[c] = rest + pl.height
            path.append((pl, rest))
            if walk(gone | 1 << pl.box, tuple(new)):
                return True
            path.pop()
            if stop[0]:
                return False
        failed.add(key)
        if relaxed:
            remember(gone, key[1])
        return False

    def dominated(gone: int, images: list) -> bool:
        """Some failed map of the same boxes lies on or below one of these mirror images (relaxation only)."""
        table = lower.get(gone)
        if table is None:
            return False
        rows = table[0][:table[1]]
        return bool((rows[None, :, :] <= np.asarray(images)[:, None, :]).all(axis=2).any())

    def remember(gone: int, hm: tuple) -> None:
        table = lower.get(gone)
        if table is None:
            lower[gone] = table = [np.empty((8, ncols), dtype=np.int32), 0]
        if table[1] == len(table[0]):
            table[0] = np.concatenate([table[0], np.empty_like(table[0])])
        table[0][table[1]] = hm
        table[1] += 1

    old = sys.getrecursionlimit()
    sys.setrecursionlimit(max(old, 10 * n + 100))
    try:
        ok = walk(0, (0,) * ncols)
    finally:
        sys.setrecursionlimit(old)
    if ok and relaxed:
        return _drop(p, top, [pl for pl, _ in reversed(path)], real_support, counter[0])
    if hunt:  # no leaf turned down: the walk was refute's own, and its "none" holds
        return Found("none" if not stop[0] and rejected[0] == 0 else "unknown", None, counter[0])
    if ok:
        moves_ = tuple(Move(p.ids[pl.box], (slot.type_id, slot.index), pl.orientation,
                            tuple(float(a) for a in pl.at) + (float(rest),), grip_needed(pl.orientation))
                       for pl, rest in path)
        return Found("plan", Plan(instance=p.instance.name, moves=moves_), counter[0],
                     max((rest + pl.height for pl, rest in path), default=0))
    return Found("unknown" if stop[0] else "none", None, counter[0])


def _drop(p: Problem, top: int, sequence: list[_Place], supported, states: int) -> Found:
    """The relaxation's plan turned back the right way up and loaded in order, each box dropped onto
    the highest top under it: a plan of the relaxation still; a plan of the real part ("plan") when
    every box also meets the support rule, else "relaxed"."""
    slot = p.slots[0]
    hm = [0] * (max((max(pl.cells) for pl in sequence), default=0) + 1)
    moves, ok, height = [], True, 0
    for pl in sequence:
        rest = max(hm[c] for c in pl.cells)
        ok = ok and supported(pl, tuple(hm), rest)
        for c in pl.cells:
            hm[c] = rest + pl.height
        height = max(height, rest + pl.height)
        moves.append(Move(p.ids[pl.box], (slot.type_id, slot.index), pl.orientation,
                          tuple(float(a) for a in pl.at) + (float(rest),), grip_needed(pl.orientation)))
    if not ok or height > top:
        return Found("relaxed", None, states, height)
    return Found("plan", Plan(instance=p.instance.name, moves=tuple(moves)), states, height)


def _beside(p: Problem, size: tuple[int, ...], i: int, j: int) -> bool:
    """Whether boxes i and j can stand side by side in some pair of orientations (footprints apart)."""
    return any(a[k] + b[k] <= size[k] for a in p.ext[i].values() for b in p.ext[j].values()
               for k in range(len(size)))


def _must_lie_below(p: Problem, size: tuple[int, ...]) -> list[list[int]]:
    """For each box, the boxes that lie wholly under it in every plan of this one container.

    Box j leaves the source before box i and the two cannot stand side by side in any pair of
    orientations (their extents along some horizontal axis never sum to at most the container's),
    so their footprints overlap; loaded first, j lies under i's bottom (loading from above).
    """
    return [[j for j in range(p.n) if (j, i) in p.before and not _beside(p, size, i, j)] for i in range(p.n)]


def _topological(p: Problem) -> list[int]:
    """The boxes in an order where every box comes after the boxes that leave the source before it."""
    count = [sum(1 for j in range(p.n) if (j, i) in p.before) for i in range(p.n)]
    return sorted(range(p.n), key=lambda i: (count[i], i))


def _mirrors(size: tuple[int, ...]) -> list[tuple[int, ...]]:
    """The column permutations of the container's mirror images (left-right, and front-back in 3D).

    Every rule inside a container is unchanged by a mirror, and nothing in the source looks at
    positions, so a state and its mirror image can be completed alike: the table keeps one.
    """
    if len(size) == 1:
        w = size[0]
        return [tuple(range(w)), tuple(reversed(range(w)))]
    w, d = size
    out = []
    for fx, fy in product((False, True), repeat=2):
        out.append(tuple((w - 1 - x if fx else x) * d + (d - 1 - y if fy else y) for x in range(w) for y in range(d)))
    return out


def _twins(p: Problem, preds: list[int], grips: list[dict[str, list[int]]]) -> list[Optional[int]]:
    """For each box, an interchangeable box of lower index that must go first, or None.

    Two boxes are interchangeable when they have the same usable orientations and extents, the
    same wall-blocked faces, the same boxes before them and touching them, neither is ordered
    before or touches the other, and every other box sees them alike: swapping their names maps
    plans to plans, so the search keeps the plans where the lower index goes first.
    """
    n = p.n
    out: list[Optional[int]] = [None] * n

    def swap(mask: int, i: int, j: int) -> int:
        bi, bj = mask >> i & 1, mask >> j & 1
        mask &= ~(1 << i | 1 << j)
        return mask | bj << i | bi << j

    for j in range(n):
        for i in reversed(range(j)):
            if p.ext[i] != p.ext[j] or p.blocked[i] != p.blocked[j] or preds[i] != preds[j]:
                continue
            if grips[i] != grips[j] or any(preds[i] >> k & 1 for k in (i, j)):
                continue
            if any(m >> k & 1 for g in grips[i].values() for m in g for k in (i, j)):
                continue
            if all(k in (i, j) or (swap(preds[k], i, j) == preds[k]
                                   and all(swap(m, i, j) == m for g in grips[k].values() for m in g))
                   for k in range(n)):
                out[j] = i
                break
    return out


def _grip_masks(p: Problem) -> list[dict[str, list[int]]]:
    """Per box and grip, the masks of the boxes touching each face that may be gripped."""
    out = []
    for i in range(p.n):
        per = {}
        for grip, faces in FACES_OF_GRIP.items():
            per[grip] = [sum(1 << j for j in p.touching[i].get(f, ())) for f in faces if f not in p.blocked[i]]
        out.append(per)
    return out


def _tip_free(masks: dict[str, list[int]], orientation: str, gone: int, reverse: bool = False) -> bool:
    """Upright, or some grip face of the tip has every touching box gone (`reverse`: none of them
    placed yet, the sequence being built from its end)."""
    grip = grip_needed(orientation)
    if grip is None:
        return True
    if reverse:
        return any(m & gone == 0 for m in masks[grip])
    return any(m & ~gone == 0 for m in masks[grip])
