"""Exhaustive search for tiny unstack-and-pack instances: the reference optimum (n <= 5).

Two searches, tested against each other:
- "sequence": a depth-first search over every move PROBLEM.md allows: which box next (lift
  predecessors gone), its orientation (a tip needs one face of the needed pair free now), its
  container (targets, counts) and its integer position;
- "layout": every final layout (container, orientation, position of each box), then a greedy
  that finds a sequence realising it if one exists (exact because every sequence-dependent
  condition is monotone in the set of boxes already moved; see `_LayoutSearch`).
Both reason about feasibility with their own plain code, independent of the MILP and of
`instances.precedence`; every plan they return goes to `instances.checker.check_plan`, the
judge, and the judge must agree.

Why enumerating integer positions is exact:
- the instance says `integer_positions: true`, so only integer positions are allowed at all; or
- loading `any` with support `none` and integer sizes: every packing can be pushed left, back and
  down until each coordinate is a sum of box sizes ("normal patterns", Herz 1972; Christofides &
  Whitlock 1977), which changes neither the sequence nor the orientations.
The vertical position is a finite choice too:
- support other than `none`: a box stands on the floor or on the top of an earlier box in that
  container whose footprint overlaps its own, so z is 0 or one of those tops; with loading
  `from-above` it must be the highest of them (PROBLEM.md section 4);
- support `none`: dropping boxes one by one, lowest bottom first, as far as they go keeps every
  plan feasible (same sequence and orientations; the vertical order of footprint-overlapping
  pairs is kept, so from-above still holds) and leaves each box on the floor or on the top of a
  box whose footprint overlaps its own. With loading `from-above` that box was packed earlier,
  so z is again the highest earlier top below the footprint. With loading `any` it may come
  later, so z runs over every integer up to the sum of the other boxes' tallest extents (the
  height of the tallest possible chain below).

Pruning is only by valid lower bounds against the incumbent, and by a transposition table: the
rest of the search depends only on which boxes have left and where they stand, so a state met a
second time with no fewer tips cannot lead anywhere new.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from itertools import product
from math import inf
from typing import Iterator, Optional

from instances.model import Instance, Move, Plan, grip_needed, is_upright

FACE_AXIS = {"left": (0, "low"), "right": (0, "high"), "front": (1, "low"), "back": (1, "high")}
GRIP_FACES = {"left-right": ("left", "right"), "front-back": ("front", "back")}


class TooLarge(RuntimeError):
    """The search met more nodes than allowed: the instance is too big for this oracle."""


class NotExact(ValueError):
    """The instance is outside the cases where enumerating integer positions is exact."""


@dataclass(frozen=True)
class Exhaustive:
    """The oracle's answer: `optimal` with the objective, tips and one optimal plan, or `infeasible`.

    `tips` is the fewest tips among main optima when the objective has `then: tips`, else the
    tips of the plan returned. `nodes` counts search nodes (for sizing test strategies).
    """

    status: str
    objective: Optional[int] = None
    tips: Optional[int] = None
    plan: Optional[Plan] = None
    nodes: int = 0


@dataclass(frozen=True)
class _Option:
    """One way to pack a box: orientation, packed extents, and the face pair a tip needs."""

    orientation: str
    ext: tuple[int, ...]
    grip: Optional[str]


@dataclass(frozen=True)
class _Slot:
    """One physical target container: (type id, index) with its integer size."""

    type_id: str
    index: int
    size: tuple[int, ...]
    height: Optional[int]


def _as_int(value: float, what: str) -> int:
    if value is None or float(value) != int(value):
        raise NotExact(f"exhaustive oracle needs integer data; {what} is {value!r}")
    return int(value)


def _overlap(a0: float, a1: float, b0: float, b1: float) -> float:
    return min(a1, b1) - max(a0, b0)


def source_relations(instance: Instance) -> tuple[list[frozenset[int]], list[dict[str, Optional[frozenset[int]]]]]:
    """Own reading of PROBLEM.md section 3: lift predecessors and face blockers per box index.

    Returns (lift, faces): lift[i] holds the boxes that must leave before i; faces[i][face] holds
    the boxes touching that face, or None when the face is within the clearance of a source wall
    (never free). Without a source, or with access `none`, every face is free.
    """
    n = len(instance.boxes)
    dim = instance.dim
    v = dim - 1
    lift: list[frozenset[int]] = [frozenset()] * n
    faces: list[dict[str, Optional[frozenset[int]]]] = [dict() for _ in range(n)]
    face_names = ("left", "right") if dim == 2 else ("left", "right", "front", "back")
    if instance.source is None:
        for i in range(n):
            faces[i] = {f: frozenset() for f in face_names}
        return lift, faces
    tol = instance.rules.tolerance
    clear = instance.rules.side_clearance
    lo = [tuple(b.at) for b in instance.boxes]
    hi = [tuple(p + s for p, s in zip(b.at, b.size)) for b in instance.boxes]
    src = instance.source.size
    for i in range(n):
        above = set()
        for j in range(n):
            if j == i:
                continue
            footprint = all(_overlap(lo[i][k], hi[i][k], lo[j][k], hi[j][k]) > tol for k in range(v))
            if footprint and lo[j][v] >= hi[i][v] - tol:
                above.add(j)
        lift[i] = frozenset(above)
        for face in face_names:
            axis, side = FACE_AXIS[face]
            if instance.rules.access == "none":
                faces[i][face] = frozenset()
                continue
            gap_to_wall = lo[i][axis] if side == "low" else src[axis] - hi[i][axis]
            if gap_to_wall <= clear + tol:
                faces[i][face] = None
                continue
            touching = set()
            for j in range(n):
                if j == i:
                    continue
                gap = lo[i][axis] - hi[j][axis] if side == "low" else lo[j][axis] - hi[i][axis]
                others = all(
                    _overlap(lo[i][k], hi[i][k], lo[j][k], hi[j][k]) > tol for k in range(dim) if k != axis
                )
                if -tol <= gap <= clear + tol and others:
                    touching.add(j)
            faces[i][face] = frozenset(touching)
    return lift, faces


def _options(instance: Instance) -> list[list[_Option]]:
    """Allowed ways to pack each box, dropping ones that are geometrically the same as another.

    An upright option dominates a tipped one with the same extents (no access needed, no tip);
    two tips with the same extents and the same face pair are interchangeable.
    """
    out = []
    for box in instance.boxes:
        size = tuple(_as_int(s, f"size of box {box.id}") for s in box.size)
        seen: dict[tuple, _Option] = {}
        upright_exts = set()
        for o in box.orientations:
            ext = tuple(size["xyz".index(c)] for c in o)
            if is_upright(o):
                upright_exts.add(ext)
        opts = []
        for o in box.orientations:
            ext = tuple(size["xyz".index(c)] for c in o)
            grip = grip_needed(o)
            if grip is not None and ext in upright_exts:
                continue
            key = (ext, grip)
            if key in seen:
                continue
            seen[key] = _Option(o, ext, grip)
            opts.append(seen[key])
        out.append(opts)
    return out


def _slots(instance: Instance) -> list[_Slot]:
    slots = []
    for ct in instance.containers:
        size = tuple(_as_int(s, f"size of container {ct.id}") for s in ct.size[:-1])
        height = None if ct.size[-1] is None else _as_int(ct.size[-1], f"height of container {ct.id}")
        for k in range(ct.count):
            slots.append(_Slot(ct.id, k, size, height))
    return slots


def _check_exact(instance: Instance) -> None:
    rules = instance.rules
    if not rules.integer_positions and not (rules.loading == "any" and rules.support.rule == "none"):
        raise NotExact(
            "exhaustive oracle enumerates integer positions: exact only with integer_positions "
            "or with loading 'any' and support 'none' (normal patterns)"
        )
    if rules.tolerance >= 0.5:
        raise NotExact("exhaustive oracle needs a tolerance below 0.5 on integer data")
    if instance.source is not None:
        for b in instance.boxes:
            for p in b.at:
                _as_int(p, f"position of box {b.id}")
    if instance.objective.minimise == "bins":
        for ct in instance.containers:
            if ct.size[-1] is None:
                raise NotExact("objective 'bins' needs containers with a height")


@dataclass
class _Search:
    instance: Instance
    max_nodes: int
    nodes: int = 0
    best_key: tuple = (inf, inf)
    best_moves: Optional[list] = None
    memo: dict = field(default_factory=dict)

    def __post_init__(self) -> None:
        inst = self.instance
        self.n = len(inst.boxes)
        self.dim = inst.dim
        self.v = self.dim - 1
        self.lift, self.faces = source_relations(inst)
        self.options = _options(inst)
        self.slots = _slots(inst)
        self.allowed = [
            [s for s, slot in enumerate(self.slots) if b.target is None or slot.type_id == b.target]
            for b in inst.boxes
        ]
        self.rule = inst.rules.support.rule
        self.fraction = inst.rules.support.min_fraction or 0.0
        self.from_above = inst.rules.loading == "from-above"
        self.goal = inst.objective.minimise
        self.count_tips = inst.objective.then == "tips"
        tallest = [max(o.ext[-1] for o in opts) for opts in self.options]
        self.zcap = [sum(tallest) - tallest[i] for i in range(self.n)]
        self.lowest = [min(o.ext[-1] for o in opts) for opts in self.options]
        volume = sum(_prod(o[0].ext) for o in self.options)
        floors = [_prod(s.size) for s in self.slots]
        # Valid static lower bounds on the main objective (integer data, so rounding up is sound):
        # height H: every container holds its boxes below H, so volume <= H * total floor;
        # height-sum: volume <= sum_c H_c * floor_c <= max floor * sum_c H_c;
        # bins: each used container holds at most its own volume.
        if self.goal == "height":
            self.static_lb = max(_ceil_div(volume, sum(floors)), max(self.lowest))
        elif self.goal == "height-sum":
            self.static_lb = max(_ceil_div(volume, max(floors)), max(self.lowest))
        else:
            self.static_lb = _ceil_div(volume, max(f * s.height for f, s in zip(floors, self.slots)))

    # ---- the search -------------------------------------------------------------------------
    def run(self) -> None:
        contents: list[list[tuple[tuple[int, ...], tuple[int, ...], int]]] = [[] for _ in self.slots]
        self._dfs(0, [None] * self.n, contents, 0, [])

    def _enter(self, contents, tips: int):
        """Count a node; None when the incumbent already beats every completion, else (objective, tips key)."""
        self.nodes += 1
        if self.nodes > self.max_nodes:
            raise TooLarge(f"more than {self.max_nodes} search nodes")
        tip_key = tips if self.count_tips else 0
        current = self._objective(contents)
        if (max(current, self.static_lb), tip_key) >= self.best_key:
            return None
        return current, tip_key

    def _objective(self, contents) -> int:
        heights = [max(h[-1] for _, h, _ in c) for c in contents if c]
        if self.goal == "height":
            return max(heights, default=0)
        if self.goal == "height-sum":
            return sum(heights)
        return len(heights)

    def _dfs(self, moved: int, where: list, contents: list, tips: int, moves: list) -> None:
        key = self._enter(contents, tips)
        if key is None:
            return
        current, tip_key = key
        if moved == (1 << self.n) - 1:
            self.best_key = (current, tip_key)
            self.best_moves = list(moves)
            return
        state = tuple(where)
        if self.memo.get(state, inf) <= tip_key:
            return
        self.memo[state] = tip_key
        for i in range(self.n):
            if moved >> i & 1 or not all(moved >> j & 1 for j in self.lift[i]):
                continue
            for opt in self.options[i]:
                if opt.grip is not None and not self._grip_free(i, opt.grip, moved):
                    continue
                child_tips = tips + (opt.grip is not None)
                for s in self._open_slots(i, contents):
                    for lo in self._positions(i, s, opt.ext, contents, current, child_tips):
                        hi = tuple(p + e for p, e in zip(lo, opt.ext))
                        contents[s].append((lo, hi, i))
                        where[i] = (s, lo, opt.ext)
                        moves.append((i, s, opt.orientation, lo))
                        self._dfs(moved | 1 << i, where, contents, child_tips, moves)
                        moves.pop()
                        where[i] = None
                        contents[s].pop()

    # ---- feasibility, in the words of PROBLEM.md ---------------------------------------------
    def _grip_free(self, i: int, grip: str, moved: int) -> bool:
        """A tip needs one face of its pair free: not against a wall, every toucher gone."""
        for face in GRIP_FACES[grip]:
            blockers = self.faces[i][face]
            if blockers is not None and all(moved >> j & 1 for j in blockers):
                return True
        return False

    def _open_slots(self, i: int, contents: list) -> Iterator[int]:
        """Allowed containers; of the empty ones of a type only the first (they are identical)."""
        opened: set[str] = set()
        for s in self.allowed[i]:
            if contents[s]:
                yield s
            elif self.slots[s].type_id not in opened:
                opened.add(self.slots[s].type_id)
                yield s

    def _after(self, current: int, here: list, top: int) -> int:
        """The main objective once a box with this top joins a container (non-decreasing in top)."""
        if self.goal == "height":
            return max(current, top)
        if self.goal == "bins":
            return current + (not here)
        level = max((h[-1] for _, h, _ in here), default=0)
        return current + max(0, top - level)

    def _positions(self, i: int, s: int, ext: tuple[int, ...], contents: list, current: int,
                   child_tips: int) -> Iterator[tuple[int, ...]]:
        slot = self.slots[s]
        here = contents[s]
        v = self.v
        tip_key = child_tips if self.count_tips else 0
        ranges = [range(0, w - e + 1) for w, e in zip(slot.size, ext[:v])]
        for xy in product(*ranges):
            below = [h[v] for lo, h, _ in here if self._footprints_meet(xy, ext, lo, h)]
            floor_z = max(below, default=0)
            if self.from_above:
                zs = [floor_z]
            elif self.rule != "none":
                zs = sorted({0, *below})
            else:
                cap = self.zcap[i] if slot.height is None else min(self.zcap[i], slot.height - ext[v])
                zs = range(0, cap + 1)
            for z in zs:
                if (max(self._after(current, here, z + ext[v]), self.static_lb), tip_key) >= self.best_key:
                    break  # zs ascend and the child's objective with them: it cannot beat the incumbent
                lo = (*xy, z)
                if self._feasible(slot, lo, ext, here):
                    yield lo

    def _footprints_meet(self, xy, ext, qlo, qhi) -> bool:
        return all(_overlap(xy[k], xy[k] + ext[k], qlo[k], qhi[k]) > 0 for k in range(self.v))

    def _feasible(self, slot: _Slot, lo, ext, here) -> bool:
        v = self.v
        hi = tuple(p + e for p, e in zip(lo, ext))
        if slot.height is not None and hi[v] > slot.height:
            return False
        for qlo, qhi, _ in here:
            if all(_overlap(lo[k], hi[k], qlo[k], qhi[k]) > 0 for k in range(self.dim)):
                return False  # positive-volume overlap
            if self.from_above and self._footprints_meet(lo, ext, qlo, qhi) and qhi[v] > lo[v]:
                return False  # cannot be lowered straight down past an earlier box
        if lo[v] == 0 or self.rule == "none":
            return True
        supporters = [(qlo, qhi) for qlo, qhi, _ in here if qhi[v] == lo[v] and self._footprints_meet(lo, ext, qlo, qhi)]
        return self._supported(lo, hi, ext, supporters)

    def _supported(self, lo, hi, ext, supporters) -> bool:
        """The support rule for a base at height lo[v] > 0 resting on these supporters' tops."""
        v = self.v
        if not supporters:
            return False
        if self.rule == "center":
            centre = [lo[k] + ext[k] / 2 for k in range(v)]
            return any(_on_top(centre, q) for q in supporters)
        if self.rule == "corners":
            corners = product(*[(lo[k], hi[k]) for k in range(v)])
            return all(any(_on_top(c, q) for q in supporters) for c in corners)
        # base-fraction: count unit cells of the base lying on some supporter's top face
        cells = list(product(*[range(lo[k], hi[k]) for k in range(v)]))
        covered = sum(1 for c in cells if any(all(q[0][k] <= c[k] < q[1][k] for k in range(v)) for q in supporters))
        return covered >= self.fraction * len(cells) - 1e-9

    # ---- the answer -----------------------------------------------------------------------
    def plan(self) -> Optional[Plan]:
        if self.best_moves is None:
            return None
        moves = []
        for i, s, orientation, lo in self.best_moves:
            slot = self.slots[s]
            moves.append(Move(self.instance.boxes[i].id, (slot.type_id, slot.index), orientation, tuple(lo)))
        return Plan(self.instance.name, tuple(moves))


class _LayoutSearch(_Search):
    """Enumerate final layouts, then decide by a greedy whether some sequence realises them.

    Every move condition of PROBLEM.md section 4 that depends on the sequence is monotone in the
    set M of boxes moved before the box: lift predecessors in M; a needed face whose touchers
    are all in M; from above: every box under its footprint in its container in M (the other half
    of the rule, "no box above it moved yet", is that same pairwise condition seen from the box
    above); support by the boxes of M whose tops meet its base (more supporters never hurt).
    So if any sequence works, moving any box whose conditions hold, as long as one exists, never
    gets stuck: the first box of a working sequence not yet moved always qualifies. The layout
    is listed once, boxes in order of (bottom, index); each bottom is the floor or the top of a
    box under its footprint (support rules demand a supporter there; with support `none`,
    dropping boxes as in the module docstring makes it so), and that box has a lower bottom, so
    it is already placed.
    """

    def run(self) -> None:
        contents: list[list[tuple[tuple[int, ...], tuple[int, ...], int]]] = [[] for _ in self.slots]
        self.layout: list = [None] * self.n
        self._place(0, contents, 0, (-1, -1))

    def _place(self, placed: int, contents: list, tips: int, last: tuple[int, int]) -> None:
        key = self._enter(contents, tips)
        if key is None:
            return
        current, tip_key = key
        if placed == (1 << self.n) - 1:
            order = self._sequence()
            if order is not None:
                self.best_key = (current, tip_key)
                self.best_moves = [(i, self.layout[i][0], self.layout[i][3].orientation, self.layout[i][1]) for i in order]
            return
        v = self.v
        for i in range(self.n):
            if placed >> i & 1:
                continue
            for opt in self.options[i]:
                child_tips = tips + (opt.grip is not None)
                for s in self._open_slots(i, contents):
                    for lo in self._bottoms(i, s, opt.ext, contents, current, child_tips, last):
                        hi = tuple(p + e for p, e in zip(lo, opt.ext))
                        contents[s].append((lo, hi, i))
                        self.layout[i] = (s, lo, hi, opt)
                        self._place(placed | 1 << i, contents, child_tips, (lo[v], i))
                        self.layout[i] = None
                        contents[s].pop()

    def _bottoms(self, i, s, ext, contents, current, child_tips, last) -> Iterator[tuple[int, ...]]:
        slot = self.slots[s]
        here = contents[s]
        v = self.v
        tip_key = child_tips if self.count_tips else 0
        for xy in product(*[range(0, w - e + 1) for w, e in zip(slot.size, ext[:v])]):
            below = {h[v] for lo, h, _ in here if self._footprints_meet(xy, ext, lo, h)}
            for z in sorted({0, *below}):
                if (z, i) <= last:
                    continue  # listed in (bottom, index) order only
                if (max(self._after(current, here, z + ext[v]), self.static_lb), tip_key) >= self.best_key:
                    break
                lo = (*xy, z)
                hi = tuple(p + e for p, e in zip(lo, ext))
                if slot.height is not None and hi[v] > slot.height:
                    break
                if not any(all(_overlap(lo[k], hi[k], q[k], qh[k]) > 0 for k in range(self.dim)) for q, qh, _ in here):
                    yield lo

    def _sequence(self) -> Optional[list[int]]:
        """A sequence realising the layout, by the greedy of the class docstring, or None."""
        moved, order = 0, []
        while len(order) < self.n:
            for i in range(self.n):
                if not moved >> i & 1 and self._can_move(i, moved):
                    moved |= 1 << i
                    order.append(i)
                    break
            else:
                return None
        return order

    def _can_move(self, i: int, moved: int) -> bool:
        if not all(moved >> j & 1 for j in self.lift[i]):
            return False
        s, lo, hi, opt = self.layout[i]
        if opt.grip is not None and not self._grip_free(i, opt.grip, moved):
            return False
        v = self.v
        mates = [j for j in range(self.n) if j != i and self.layout[j][0] == s
                 and self._footprints_meet(lo, opt.ext, self.layout[j][1], self.layout[j][2])]
        if self.from_above and any(not moved >> j & 1 and self.layout[j][2][v] <= lo[v] for j in mates):
            return False  # a box under its footprint is not in yet: it could not be lowered past
        if self.rule == "none" or lo[v] == 0:
            return True
        supporters = [(self.layout[j][1], self.layout[j][2]) for j in mates
                      if moved >> j & 1 and self.layout[j][2][v] == lo[v]]
        return self._supported(lo, hi, opt.ext, supporters)


def _on_top(point, q) -> bool:
    """The point lies on the closed top face of supporter q (edges count)."""
    return all(q[0][k] <= p <= q[1][k] for k, p in enumerate(point))


def _prod(values) -> int:
    out = 1
    for x in values:
        out *= x
    return out


def _ceil_div(a: int, b: int) -> int:
    return -(-a // b)


def count_tips(plan: Plan) -> int:
    return sum(0 if is_upright(m.orientation) else 1 for m in plan.moves)


METHODS = {"sequence": _Search, "layout": _LayoutSearch}


def solve_exhaustive(instance: Instance, *, method: str = "auto", max_nodes: int = 2_000_000,
                     check: bool = True) -> Exhaustive:
    """The optimum of a tiny integer instance by exhaustive search, with an optimal plan.

    Main objective first, then (with `then: tips`) the fewest tips among main optima.
    `method`: "sequence" searches move sequences literally (fast when loading from above fixes
    each vertical position); "layout" lists final layouts and finds a sequence greedily (fast
    when loading `any` lets boxes go in any order); "auto" picks by the loading rule. The two
    are tested against each other.
    Raises NotExact outside the cases where the enumeration is exact, TooLarge past `max_nodes`.
    With `check`, the plan is handed to `instances.checker.check_plan` and must pass with the
    same objective and tips.

    Example (FORMATS.md worked example, optimum 5 argued by hand there; it needs integer positions):
    >>> solve_exhaustive(instance).objective  # doctest: +SKIP
    5
    """
    _check_exact(instance)
    if method == "auto":
        method = "layout" if instance.rules.loading == "any" else "sequence"
    search = METHODS[method](instance, max_nodes)
    search.run()
    plan = search.plan()
    if plan is None:
        return Exhaustive("infeasible", nodes=search.nodes)
    objective = int(search.best_key[0])
    tips = count_tips(plan)
    if check:
        from instances.checker import check_plan

        report = check_plan(instance, plan)
        assert report.feasible, f"checker rejects the oracle's plan: {report.violations}"
        assert abs(report.objective - objective) <= 1e-9, (report.objective, objective)
        assert report.tips == tips, (report.tips, tips)
    return Exhaustive("optimal", objective, tips, plan, search.nodes)
