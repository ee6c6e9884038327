"""Perfect packings of a 2D strip or closed container: an exact bottom-left-fill search.

A packing of width W and height H is *perfect* when the boxes fill the W x H rectangle with no
waste (their areas sum to W * H). In a perfect packing the lowest, leftmost point of the empty
region is always the bottom-left corner of some box, so branching on which box goes there (and
in which orientation) reaches every perfect packing: the classic bottom-left-fill branching for
perfect rectangle packing (Lesh, Marks, McMahon & Mitzenmacher 2004, "Exhaustive approaches to
2D rectangular perfect packings", Information Processing Letters 90).

The filled region is kept as a skyline (segments of the top edge). Every test below holds in
every perfect packing that completes the state, so pruning never loses one:

* any *well* (a segment whose neighbours are higher, or walls) may be branched on, since its
  bottom-left corner is a box corner in every completion; the well with the fewest fitting
  boxes is taken (most constrained first);
* at every skyline level each maximal empty run is tiled by the remaining boxes crossing that
  height, so its width is a sum of widths of distinct remaining boxes; above every segment the
  column up to H is stacked without gaps, so its headroom is a sum of their heights;
* zero wasted space (after Korf's wasted-space bound): a cell whose empty run is a wide takes
  only boxes at most a wide, so for every a the area of such cells is at most the area of those
  boxes; likewise up the columns;
* a state (skyline, boxes left) that failed once, or whose mirror image did, fails again
  (a dead-state table, kept across restarts);
* identical boxes are one kind with a count, so no two symmetric orders are both tried.

Sums are bitsets in Python integers (bit s set when s is reachable; common practice for
subset-sum tests). Rotation counts as one more allowed extent pair per box. Runs restart with
other value orderings on the Luby schedule; the search stays complete, so "none" means no
perfect packing exists.

`perfect_plans` is a plan finder for `milp.special`: it recognises a single 2D container (a
strip or a closed one) with no source, integer sizes and a proved height bound the boxes fill
exactly, and yields the plan in bottom-up order. It claims nothing: the pipeline checks the plan
and only a checked plan meeting a proved bound is optimal.
"""
from __future__ import annotations

import gc
import itertools
import random
import time
from dataclasses import dataclass
from typing import Iterator, Optional, Sequence

from instances.model import Instance, Move, Plan, grip_needed

from .problem import Problem

Extents = tuple[int, int]
#: search outcomes: a packing was found, none exists, or the deadline / node limit stopped it
STATUSES = ("found", "none", "stopped")
_CHECK_EVERY = 512  # nodes between two looks at the clock
_TABLE_LIMIT = 2_000_000  # most dead states remembered (memory stays well under 1 GiB)


@dataclass(frozen=True)
class Placement:
    """One box of a packing: its index in the input, its extents as packed, its bottom-left corner."""

    item: int
    extents: Extents
    at: Extents


@dataclass(frozen=True)
class PerfectSearch:
    """What `perfect_packing` returns.

    status: "found" (`placements` fill the rectangle, sorted bottom-up then left to right),
    "none" (the search was exhausted: no perfect packing exists), "stopped" (deadline or node
    limit reached first). `nodes` counts the states entered.
    """

    status: str
    placements: tuple[Placement, ...]
    nodes: int


class _Stop(Exception):
    """Raised inside the search when the deadline is reached."""


class _Restart(Exception):
    """Raised inside the search when the current run has used its nodes."""


#: Value orderings tried in turn, then at random (key parts for a box of extents w x h in a well of
#: width g; `flush` when its top meets a neighbour's). Satisfiable searches have heavy-tailed run
#: times under any one ordering, so restarts with other orderings pay (Gomes, Selman & Kautz 1998).
_ORDERINGS = (
    lambda w, h, g, flush: (w != g, not flush, -w * h, -h),
    lambda w, h, g, flush: (not flush, w != g, -w * h, -h),
    lambda w, h, g, flush: (w != g, not flush, -h, -w),
    lambda w, h, g, flush: (w != g, not flush, -w, -h),
    lambda w, h, g, flush: (not (flush or w == g), -w * h),
    lambda w, h, g, flush: (-w * h, -h),
)
#: Well choices, in the same way (key parts for a well with `options` fitting boxes, level y, width g):
#: most constrained first, or lowest first (the plain bottom-left-fill order), with other ties.
_WELL_CHOICES = (
    lambda options, y, g: (options, g, y),
    lambda options, y, g: (y,),
    lambda options, y, g: (options, y),
    lambda options, y, g: (min(options, 2), y),
)
_RESTART_BASE = 1000  # nodes of the shortest run; runs follow the Luby sequence


def perfect_packing(width: int, height: int, items: Sequence[Sequence[Extents]], *,
                    deadline: Optional[float] = None, node_limit: Optional[int] = None,
                    seed: int = 0) -> PerfectSearch:
    """Search for a perfect packing of `items` into a `width` x `height` rectangle.

    `items[i]` lists the extents (w, h) box i may take (one pair, or two when it may turn); all
    of one item's extents have one area. `deadline` is a `time.perf_counter()` value;
    `node_limit` caps the states entered over all restarts; `seed` fixes the random orderings
    of the later restarts (a run is reproducible up to where the clock stops it). Raises
    ValueError on non-positive or non-integer sizes.

    Example:
        >>> perfect_packing(3, 2, [[(1, 2)], [(2, 1)], [(2, 1)]]).status
        'found'
        >>> perfect_packing(2, 2, [[(1, 2)], [(2, 1)]]).status  # areas fill it, shapes do not
        'none'
    """
    kinds, members = _kinds(width, height, items)
    if sum(w * h for w, h in (opts[0] for opts in items)) != width * height:
        return PerfectSearch("none", (), 0)
    counts = tuple(len(m) for m in members)
    search = _Search(width, height, kinds, deadline)
    rng = random.Random(seed)
    collecting = gc.isenabled()
    gc.disable()  # the dead-state table holds many objects; collector passes over it stall the clock
    try:
        for run in itertools.count():
            limit = _RESTART_BASE * _luby(run + 1)
            if node_limit is not None:
                limit = min(limit, node_limit - search.nodes)
                if limit <= 0:
                    return PerfectSearch("stopped", (), search.nodes)
            search.key, search.well_key = _ordering(run, rng, len(kinds))
            outcome = search.attempt(counts, limit)
            if outcome is not None:
                break
            if deadline is not None and time.perf_counter() >= deadline:
                return PerfectSearch("stopped", (), search.nodes)
    except _Stop:
        return PerfectSearch("stopped", (), search.nodes)
    finally:
        if collecting:
            gc.enable()
    if not outcome:
        return PerfectSearch("none", (), search.nodes)
    left = [list(m) for m in members]
    out = [Placement(left[k].pop(0), ext, at) for k, ext, at in search.chosen]
    out.sort(key=lambda p: (p.at[1], p.at[0]))
    return PerfectSearch("found", tuple(out), search.nodes)


def _luby(i: int) -> int:
    """The i-th term (from 1) of the Luby restart sequence 1, 1, 2, 1, 1, 2, 4, ... (Luby, Sinclair & Zuckerman 1993)."""
    k = 1
    while (1 << k) - 1 < i:
        k += 1
    while i != (1 << k) - 1:
        i -= (1 << (k - 1)) - 1
        k = 1
        while (1 << k) - 1 < i:
            k += 1
    return 1 << (k - 1)


def _ordering(run: int, rng: random.Random, kinds: int):
    """Value ordering and well choice of restart `run`: fixed pairs first, then random ones with random ties."""
    well = _WELL_CHOICES[run % len(_WELL_CHOICES)]
    if run < 2 * len(_ORDERINGS):
        fixed = _ORDERINGS[run % len(_ORDERINGS)]
        return (lambda k, w, h, g, flush: fixed(w, h, g, flush) + (k,)), well
    base = _ORDERINGS[rng.randrange(len(_ORDERINGS))]
    depth = rng.randint(1, 4)
    rank = list(range(kinds))
    rng.shuffle(rank)
    return (lambda k, w, h, g, flush: base(w, h, g, flush)[:depth] + (rank[k],)), _WELL_CHOICES[rng.randrange(len(_WELL_CHOICES))]


def _kinds(width: int, height: int, items: Sequence[Sequence[Extents]]) -> tuple[list[tuple[Extents, ...]], list[list[int]]]:
    """Group interchangeable items (same set of usable extents) into kinds; validate sizes."""
    for v, what in ((width, "width"), (height, "height")):
        if not isinstance(v, int) or v <= 0:
            raise ValueError(f"{what} must be a positive integer, got {v!r}")
    index: dict[tuple[Extents, ...], int] = {}
    kinds: list[tuple[Extents, ...]] = []
    members: list[list[int]] = []
    for i, opts in enumerate(items):
        if not opts:
            raise ValueError(f"item {i} has no extents")
        for w, h in opts:
            if not (isinstance(w, int) and isinstance(h, int)) or w <= 0 or h <= 0:
                raise ValueError(f"item {i}: extents must be positive integers, got {(w, h)!r}")
        usable = tuple(sorted({(w, h) for w, h in opts if w <= width and h <= height}, key=lambda e: (-e[0], -e[1])))
        if len({w * h for w, h in opts}) != 1:
            raise ValueError(f"item {i}: its extents {list(opts)} do not have one area")
        if usable not in index:
            index[usable] = len(kinds)
            kinds.append(usable)
            members.append([])
        members[index[usable]].append(i)
    return kinds, members


class _Search:
    """Depth-first bottom-left-fill over skylines; `chosen` holds the placements of a success.

    The dead-state table outlives a restart: a state is recorded only once its whole subtree
    failed, which no ordering can change.
    """

    def __init__(self, width: int, height: int, kinds: list[tuple[Extents, ...]], deadline: Optional[float]):
        self.W, self.H = width, height
        self.kinds = kinds
        self.deadline = deadline
        self.nodes = 0
        self.stop_at = 0
        self.key = None
        self.well_key = None
        self.dead: set = set()
        self.chosen: list[tuple[int, Extents, Extents]] = []
        self.widths = [tuple(sorted({w for w, _ in opts})) for opts in kinds]
        self.heights = [tuple(sorted({h for _, h in opts})) for opts in kinds]
        self.mask_w = (1 << (width + 1)) - 1
        self.mask_h = (1 << (height + 1)) - 1
        self.area = [opts[0][0] * opts[0][1] if opts else 0 for opts in kinds]
        self.by_width = sorted((min(self.widths[k], default=0), k) for k in range(len(kinds)))
        self.by_height = sorted((min(self.heights[k], default=0), k) for k in range(len(kinds)))

    def attempt(self, counts: tuple[int, ...], limit: int) -> Optional[bool]:
        """One run of at most `limit` nodes: True (found), False (exhausted), None (limit hit)."""
        if any(not opts for opts in self.kinds):
            return False  # an item fits in no orientation
        self.stop_at = self.nodes + limit
        self.chosen = []
        try:
            return self._node(((0, self.W, 0),), counts)
        except _Restart:
            return None

    def _sums(self, counts: tuple[int, ...], lengths: list[tuple[int, ...]], mask: int) -> int:
        """Bitset of every sum of one length per distinct remaining box (any subset of them)."""
        reach = 1
        for k, c in enumerate(counts):
            ls = lengths[k]
            for _ in range(c):
                nxt = reach
                for v in ls:
                    nxt |= reach << v
                reach = nxt & mask
        return reach

    def _tick(self) -> None:
        self.nodes += 1
        if self.nodes >= self.stop_at:
            raise _Restart
        if self.nodes % _CHECK_EVERY == 0 and self.deadline is not None and time.perf_counter() >= self.deadline:
            raise _Stop

    def _node(self, segs: tuple[tuple[int, int, int], ...], counts: tuple[int, ...]) -> bool:
        self._tick()
        if not any(counts):
            return True  # the areas add up, so the skyline is flat at H
        key = _state_key(segs, counts)
        if key in self.dead:
            return False
        reach_w = self._sums(counts, self.widths, self.mask_w)
        reach_h = self._sums(counts, self.heights, self.mask_h)
        fits = self._room_fits(segs, counts, reach_w, reach_h)
        well = self._branch_well(segs, counts, reach_w, reach_h) if fits else None
        if well is None:
            self._remember(key)
            return False
        i, options, _ = well
        x, _, y = segs[i]
        for k, (w, h) in options:
            child = list(counts)
            child[k] -= 1
            self.chosen.append((k, (w, h), (x, y)))
            if self._node(_place(segs, i, w, h), tuple(child)):
                return True
            self.chosen.pop()
        self._remember(key)
        return False

    def _remember(self, key) -> None:
        if len(self.dead) < _TABLE_LIMIT:
            self.dead.add(key)

    def _branch_well(self, segs, counts, reach_w: int, reach_h: int):
        """(segment, fitting (kind, extents) best first, rank) of the well to branch on; None when one has none.

        A fitting box leaves a remainder of the well's width that remaining widths can fill, and
        headroom above it that remaining heights can fill. Any well may be branched
        on (its bottom-left corner is a box corner in every completion); the run's well choice
        picks one (ties: leftmost).
        """
        n = len(segs)
        best = None
        for j, (_, g, y) in enumerate(segs):
            left = segs[j - 1][2] if j > 0 else None
            right = segs[j + 1][2] if j + 1 < n else None
            if (left is not None and left < y) or (right is not None and right < y):
                continue
            options = self._candidates(counts, g, y, left, right, reach_w, reach_h)
            if not options:
                return None
            rank = self.well_key(len(options), y, g)
            if best is None or rank < best[2]:
                best = (j, options, rank)
        return best

    def _room_fits(self, segs, counts, reach_w: int, reach_h: int) -> bool:
        """Zero-waste tests on the empty region above the skyline, across and up.

        At any height, each maximal empty run is tiled by the remaining boxes crossing that
        height, so its width is a sum of remaining widths; each column's headroom is a sum of
        remaining heights. Then Korf-style wasted space with no waste allowed: an empty cell whose
        run at its height is a wide can only be covered by a box at most a wide; so for every a, the cells with runs of at most a need no more area than the
        boxes at most a wide hold. Likewise up: a column with headroom b takes boxes at most b tall.
        """
        H = self.H
        levels = sorted({y for _, _, y in segs})
        across = []
        for idx, level in enumerate(levels):
            band = (levels[idx + 1] if idx + 1 < len(levels) else H) - level
            if band <= 0:
                continue  # the top is reached: nothing left to fill at this level
            run = 0
            for _, g, y in segs:
                if y <= level:
                    run += g
                elif run:
                    across.append((run, run * band))
                    run = 0
            if run:
                across.append((run, run * band))
        for run, _ in across:
            if not (reach_w >> run) & 1:
                return False
        up = [(H - y, g * (H - y)) for _, g, y in segs if y < H]
        for b, _ in up:
            if not (reach_h >> b) & 1:
                return False
        return _hall(across, self.by_width, self.area, counts) and _hall(up, self.by_height, self.area, counts)

    def _candidates(self, counts, g: int, y: int, left: Optional[int], right: Optional[int], reach_w: int,
                    reach_h: int):
        """(kind, extents) that fit at the well's corner, best first: exact width fits, flush tops, big areas."""
        room = self.H - y
        out = []
        for k, c in enumerate(counts):
            if not c:
                continue
            for w, h in self.kinds[k]:
                if w > g or h > room or not (reach_w >> (g - w)) & 1 or not (reach_h >> (room - h)) & 1:
                    continue
                flush = (y + h == left) or (w == g and y + h == right)
                out.append((self.key(k, w, h, g, flush), k, (w, h)))
        out.sort()
        return [(k, ext) for _, k, ext in out]


def _hall(cells: list[tuple[int, int]], boxes: list[tuple[int, int]], area: list[int], counts) -> bool:
    """For every limit a: area of cells needing boxes at most a long <= area of the boxes that short."""
    cells.sort()
    need = have = b = 0
    for a, cell_area in cells:
        need += cell_area
        while b < len(boxes) and boxes[b][0] <= a:
            k = boxes[b][1]
            have += area[k] * counts[k]
            b += 1
        if have < need:
            return False
    return True


def _state_key(segs, counts) -> tuple:
    """A state and its mirror image have the same fate: key on the smaller of the two skylines."""
    profile = tuple(v for _, g, y in segs for v in (g, y))
    mirror = tuple(v for _, g, y in reversed(segs) for v in (g, y))
    return (min(profile, mirror), counts)


def _place(segs, i: int, w: int, h: int):
    """The skyline after a w x h box goes at the left end of segment i (neighbours merged)."""
    x, g, y = segs[i]
    top = y + h
    new = list(segs[:i])
    if new and new[-1][2] == top:
        px, pg, _ = new.pop()
        placed = (px, pg + w, top)
    else:
        placed = (x, w, top)
    rest = list(segs[i + 1:])
    if w < g:
        tail = [placed, (x + w, g - w, y)]
    elif rest and rest[0][2] == top:
        nx, ng, _ = rest.pop(0)
        tail = [(placed[0], placed[1] + ng, top)]
    else:
        tail = [placed]
    return tuple(new + tail + rest)


# ---------------------------------------------------------------- the plan finder


def perfect_plans(instance: Instance, problem: Problem, lower: float, deadline: float) -> Iterator[Plan]:
    """Plan finder (`milp.special`): a perfect packing at the proved height bound, when one is found.

    Recognised strictly: 2D, no source, one container in all (a strip or a closed one), every
    box allowed in it, integer sizes, objective `height` or `height-sum` (target: the bound) or
    `bins` (target: the container's height), and box areas summing to width x target.
    Yields at most one plan, moves bottom-up (so loading from above holds and every base is
    fully covered). Anything else yields nothing.
    """
    spec = perfect_case(instance, problem, lower)
    if spec is None:
        return
    width, height, items = spec
    result = perfect_packing(width, height, [list(opts.values()) for opts in items], deadline=deadline)
    if result.status != "found":
        return
    yield _plan(problem, items, result.placements)


def perfect_case(instance: Instance, problem: Problem, lower: float):
    """(width, target height, per box {orientation: (w, h)}) when the finder applies, else None.

    When `perfect_packing` on this case reports "none", no plan reaches the target height
    (integer sizes: the search enumerates every perfect packing).
    """
    if instance.dim != 2 or instance.source is not None or problem.infeasible_reason or len(problem.slots) != 1:
        return None
    slot = problem.slots[0]
    width, top = slot.size
    kind = instance.objective.minimise
    if kind in ("height", "height-sum"):
        target = lower
    elif kind == "bins" and top is not None:
        target = top
    else:
        return None
    if not _integer(width) or not _integer(target) or target <= 0 or (top is not None and target > top):
        return None
    items = []
    for i in range(problem.n):
        if problem.slots_of[i] != [0] or not problem.ext[i]:
            return None
        opts = {}
        for o, e in problem.ext[i].items():
            if not all(_integer(v) for v in e):
                return None
            opts[o] = (int(e[0]), int(e[1]))
        items.append(opts)
    width, target = int(width), int(target)
    area = sum(next(iter(opts.values()))[0] * next(iter(opts.values()))[1] for opts in items)
    if area != width * target:
        return None
    return width, target, items


def _integer(v) -> bool:
    return v is not None and float(v).is_integer()


def _plan(problem: Problem, items: list[dict[str, Extents]], placements: Sequence[Placement]) -> Plan:
    """Moves in the search's bottom-up order, each with the orientation giving its packed extents."""
    slot = problem.slots[0]
    moves = []
    for p in placements:
        o = next(o for o, e in items[p.item].items() if e == p.extents)
        moves.append(Move(problem.ids[p.item], (slot.type_id, slot.index), o, (float(p.at[0]), float(p.at[1])),
                          grip_needed(o)))
    return Plan(instance=problem.instance.name, moves=tuple(moves))
