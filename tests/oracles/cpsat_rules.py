"""OR-Tools CP-SAT reference for the whole unstack-and-pack problem (PROBLEM.md), integer data.

An independent model (it imports nothing from `milp` or `bounds`) of every rule of PROBLEM.md
sections 3-5, used to judge the MILP on loads too large for `oracles.exhaustive`:
- a move sequence: a position `seq[i]` per box, all different; pair literals "i before j";
- lift predecessors earlier (edges from `instances.precedence.precedence_graph`);
- a tip only with one face of the needed pair free: every box touching that face earlier, a
  wall-blocked face never free;
- one orientation and one physical container per box, among the allowed types (targets,
  several types of different sizes, counts), inside it and under a closed height;
- no overlap: NoOverlap2D per container over optional intervals in 2D, pairwise "left of /
  behind / below" disjunctions in 3D (and in 2D for the loading rule);
- loading `from-above`: with footprints overlapping in one container the lower box comes
  first (the "below" disjunct carries the order);
- support `center`, `corners`, `base-fraction` judged against earlier boxes of the container
  whose top is the box's bottom and whose footprint meets its base with positive measure;
- objectives `height`, `height-sum`, `bins`, and `then: tips` as main * (n + 1) + tips (exact
  lexicographic weighting: at most n tips).
Supporters of one box share one top level in one container, so their footprints are
interior-disjoint and the covered base area is the plain sum of pairwise overlaps.

Why integer positions are exact here: the instance asks for them (`integer_positions`), or
loading `any` with support `none` makes every packing normalisable to sums of sizes ("normal
patterns", Herz 1972; Christofides & Whitlock 1977). Why the vertical domain of an open-top
container (the sum of the tallest extents) keeps an optimum: with a support rule every box
rests on a chain of boxes below it; with support `none` dropping boxes lowest-first keeps a
plan feasible (argued in `oracles.exhaustive`).
Symmetry breaking: containers of one type are interchangeable, so index k+1 used implies index
k used. Redundant: per container, the boxes' volumes fit under its packed height; in 2D a
cumulative on the vertical intervals.
"""
from __future__ import annotations

import math
import time
from dataclasses import dataclass
from itertools import product
from typing import Optional

from ortools.sat.python import cp_model

from instances.model import FACES_OF_GRIP, Instance, Move, Plan, grip_needed, is_upright
from instances.precedence import face_blockers, precedence_graph
from tests.oracles.cpsat import STATUS
# plain records shared with the exhaustive search; the reasoning about rules stays separate
from tests.oracles.exhaustive import NotExact, _Option, _Slot


@dataclass(frozen=True)
class CpRules:
    """CP-SAT's answer on the whole problem.

    status: `optimal` (objective proved, tips too with `then: tips`), `feasible` (a checked plan,
    gap open), `infeasible` (proved), `unknown` (no plan in time). `bound` is the proved lower
    bound on the main objective; `tips` the plan's tipped boxes.
    """

    status: str
    objective: Optional[int]
    tips: Optional[int]
    bound: Optional[int]
    plan: Optional[Plan]
    seconds: float


def _int(value, what: str) -> int:
    if value is None or float(value) != int(value):
        raise NotExact(f"CP-SAT rules oracle needs integer data; {what} is {value!r}")
    return int(value)


def check_exact(instance: Instance) -> None:
    """Raise NotExact unless enumerating integer positions is exact for `instance`."""
    r = instance.rules
    if not r.integer_positions and not (r.loading == "any" and r.support.rule == "none"):
        raise NotExact("integer positions are exact only with integer_positions, or loading 'any' "
                       "with support 'none' (normal patterns)")
    if r.tolerance >= 0.5:
        raise NotExact("needs a tolerance below 0.5 on integer data")
    if instance.objective.minimise == "bins" and any(c.size[-1] is None for c in instance.containers):
        raise NotExact("objective 'bins' needs containers with a height")
    for b in instance.boxes:
        for s in b.size:
            _int(s, f"size of box {b.id}")


def _options(instance: Instance) -> list[list[_Option]]:
    """Allowed packings per box; a tip with the extents of an upright option is dominated."""
    out = []
    for b in instance.boxes:
        size = tuple(int(s) for s in b.size)
        exts = {o: tuple(size["xyz".index(c)] for c in o) for o in b.orientations}
        upright = {exts[o] for o in b.orientations if is_upright(o)}
        seen, opts = set(), []
        for o in b.orientations:
            key = (exts[o], grip_needed(o))
            if key in seen or (key[1] is not None and key[0] in upright):
                continue
            seen.add(key)
            opts.append(_Option(o, exts[o], key[1]))
        out.append(opts)
    return out


def _slots(instance: Instance) -> list[_Slot]:
    """Every physical container; real sizes are floored (exact for integer boxes and positions)."""
    tol = instance.rules.tolerance
    out = []
    for c in instance.containers:
        foot = tuple(int(math.floor(s + tol)) for s in c.size[:-1])
        h = None if c.size[-1] is None else int(math.floor(c.size[-1] + tol))
        out.extend(_Slot(c.id, k, foot, h) for k in range(c.count))
    return out


def _fits(opt: _Option, slot: _Slot) -> bool:
    return all(e <= w for e, w in zip(opt.ext, slot.size)) and (slot.height is None or opt.ext[-1] <= slot.height)


class _Model:
    """The CP-SAT model; one method per rule family of PROBLEM.md."""

    def __init__(self, instance: Instance):
        self.inst = instance
        self.dim = instance.dim
        self.v = instance.dim - 1
        self.n = len(instance.boxes)
        self.opts = _options(instance)
        self.slots = _slots(instance)
        self.graph = precedence_graph(instance)
        self.m = cp_model.CpModel()
        self._before: dict[tuple[int, int], cp_model.IntVar] = {}
        self._same: dict[tuple[int, int], cp_model.IntVar] = {}
        allowed_types = [{c.id for c in instance.allowed_types(b)} for b in instance.boxes]
        self.allowed = [[s for s, sl in enumerate(self.slots)
                         if sl.type_id in allowed_types[i] and any(_fits(o, sl) for o in self.opts[i])]
                        for i in range(self.n)]
        tallest = sum(max((o.ext[-1] for o in opts), default=0) for opts in self.opts)
        self.cap = [sl.height if sl.height is not None else tallest for sl in self.slots]
        self.infeasible = any(not a for a in self.allowed)

    # ------------------------------------------------------------------ variables
    def variables(self) -> None:
        m, n = self.m, self.n
        self.seq = [m.new_int_var(0, n - 1, f"seq{i}") for i in range(n)]
        m.add_all_different(self.seq)
        self.pick = [[m.new_bool_var(f"o{i}_{k}") for k in range(len(self.opts[i]))] for i in range(n)]
        self.into = [{s: m.new_bool_var(f"in{i}_{s}") for s in self.allowed[i]} for i in range(n)]
        self.pos, self.ext, self.end = [], [], []
        self.ext_hi: list[list[int]] = [[] for _ in range(n)]
        for i in range(n):
            m.add_exactly_one(self.pick[i])
            m.add_exactly_one(self.into[i].values())
            limits = [max(self.slots[s].size[a] for s in self.allowed[i]) for a in range(self.v)]
            limits.append(max(self.cap[s] for s in self.allowed[i]))
            ext = []
            for a in range(self.dim):
                vals = [o.ext[a] for o in self.opts[i]]
                e = m.new_int_var(min(vals), max(vals), f"e{i}_{a}")
                self.ext_hi[i].append(max(vals))
                m.add(e == sum(p * o.ext[a] for p, o in zip(self.pick[i], self.opts[i])))
                ext.append(e)
            pos = [m.new_int_var(0, limits[a], f"p{i}_{a}") for a in range(self.dim)]
            end = [m.new_int_var(0, limits[a], f"q{i}_{a}") for a in range(self.dim)]
            for a in range(self.dim):
                m.add(pos[a] + ext[a] == end[a])
            self.pos.append(pos)
            self.ext.append(ext)
            self.end.append(end)

    def before(self, i: int, j: int):
        """Literal: box i is moved before box j."""
        if (i, j) in self._before:
            return self._before[(i, j)]
        if (j, i) in self._before:
            return ~self._before[(j, i)]
        b = self.m.new_bool_var(f"b{i}_{j}")
        self.m.add(self.seq[i] < self.seq[j]).only_enforce_if(b)
        self.m.add(self.seq[i] > self.seq[j]).only_enforce_if(~b)
        self._before[(i, j)] = b
        return b

    def shared(self, i: int, j: int) -> list[int]:
        return [s for s in self.allowed[i] if s in self.into[j]]

    def same(self, i: int, j: int):
        """Literal forced true when i and j go to one container (it may be true otherwise only
        where that merely adds constraints)."""
        key = (min(i, j), max(i, j))
        if key not in self._same:
            lit = self.m.new_bool_var(f"same{key[0]}_{key[1]}")
            for s in self.shared(i, j):
                self.m.add_bool_or([~self.into[i][s], ~self.into[j][s], lit])
            self._same[key] = lit
        return self._same[key]

    # ------------------------------------------------------------------ rules
    def lift_order(self) -> None:
        """Section 3 / move rule 1: boxes in the lift column leave first."""
        idx = {b.id: k for k, b in enumerate(self.inst.boxes)}
        for j, i, kind in self.graph.edges(data="kind"):
            if kind == "lift":
                self.m.add(self.seq[idx[j]] < self.seq[idx[i]])

    def side_access(self) -> None:
        """Move rule 2: a tip needs one face of its pair free (touching boxes gone, no wall)."""
        idx = {b.id: k for k, b in enumerate(self.inst.boxes)}
        for i, b in enumerate(self.inst.boxes):
            blocked = self.graph.nodes[b.id]["wall_blocked"]
            blockers = face_blockers(self.graph, b.id)
            for k, o in enumerate(self.opts[i]):
                if o.grip is None:
                    continue
                frees = []
                for face in FACES_OF_GRIP[o.grip]:
                    if face in blocked:
                        continue
                    lit = self.m.new_bool_var(f"free{i}_{face}")
                    for j in blockers.get(face, ()):
                        self.m.add_implication(lit, self.before(idx[j], i))
                    frees.append(lit)
                self.m.add_bool_or([~self.pick[i][k], *frees])

    def containment(self) -> None:
        """Move rules 3 and 7: inside the chosen container, under its height; targets via `allowed`."""
        for i in range(self.n):
            for s, lit in self.into[i].items():
                sl = self.slots[s]
                for a in range(self.v):
                    self.m.add(self.end[i][a] <= sl.size[a]).only_enforce_if(lit)
                self.m.add(self.end[i][self.v] <= self.cap[s]).only_enforce_if(lit)
                for k, o in enumerate(self.opts[i]):
                    if not _fits(o, sl):
                        self.m.add_bool_or([~lit, ~self.pick[i][k]])

    def no_overlap(self) -> None:
        """Move rules 4 and 5: no positive-volume overlap; `from-above` orders stacked pairs."""
        m = self.m
        from_above = self.inst.rules.loading == "from-above"
        if self.dim == 2:
            for s in range(len(self.slots)):
                xs, ys, widths = [], [], []
                for i in range(self.n):
                    if s in self.into[i]:
                        lit = self.into[i][s]
                        xs.append(m.new_optional_interval_var(self.pos[i][0], self.ext[i][0], self.end[i][0], lit, f"x{i}_{s}"))
                        ys.append(m.new_optional_interval_var(self.pos[i][1], self.ext[i][1], self.end[i][1], lit, f"y{i}_{s}"))
                        widths.append(self.ext[i][0])
                if len(xs) > 1:
                    m.add_no_overlap_2d(xs, ys)
                    m.add_cumulative(ys, widths, self.slots[s].size[0])
            if not from_above:
                return
        for i in range(self.n):
            for j in range(i + 1, self.n):
                if not self.shared(i, j):
                    continue
                sides = []
                for a in range(self.dim):
                    for u, w in ((i, j), (j, i)):
                        lit = m.new_bool_var(f"s{u}_{w}_{a}")
                        m.add(self.end[u][a] <= self.pos[w][a]).only_enforce_if(lit)
                        if a == self.v and from_above:
                            m.add_implication(lit, self.before(u, w))
                        sides.append(lit)
                m.add_bool_or([~self.same(i, j), *sides])

    def support(self) -> None:
        """Move rule 6: off the floor, the support rule holds against earlier boxes below."""
        rule = self.inst.rules.support
        if rule.rule == "none":
            return
        m, v = self.m, self.v
        for i in range(self.n):
            floor = m.new_bool_var(f"floor{i}")
            m.add(self.pos[i][v] == 0).only_enforce_if(floor)
            m.add(self.pos[i][v] >= 1).only_enforce_if(~floor)
            others = [j for j in range(self.n) if j != i and self.shared(i, j)]
            if rule.rule == "center":
                sups = []
                for j in others:
                    lit = self._supporter(i, j)
                    for a in range(v):  # the base centre lies on j's top face (edges count)
                        m.add(2 * self.pos[j][a] <= 2 * self.pos[i][a] + self.ext[i][a]).only_enforce_if(lit)
                        m.add(2 * self.pos[i][a] + self.ext[i][a] <= 2 * self.end[j][a]).only_enforce_if(lit)
                    sups.append(lit)
                m.add_bool_or([floor, *sups])
            elif rule.rule == "corners":
                for corner in product((0, 1), repeat=v):
                    sups = []
                    for j in others:
                        lit = self._supporter(i, j)
                        c = m.new_bool_var(f"c{i}_{j}_{corner}")
                        m.add_implication(c, lit)
                        for a, hi in enumerate(corner):
                            # corner on j's top face, with positive overlap along axis a
                            if hi:
                                m.add(self.pos[j][a] + 1 <= self.end[i][a]).only_enforce_if(c)
                                m.add(self.end[i][a] <= self.end[j][a]).only_enforce_if(c)
                            else:
                                m.add(self.pos[j][a] <= self.pos[i][a]).only_enforce_if(c)
                                m.add(self.pos[i][a] <= self.end[j][a] - 1).only_enforce_if(c)
                        sups.append(c)
                    m.add_bool_or([floor, *sups])
            else:
                self._base_fraction(i, others, floor, rule.min_fraction or 0.0)

    def _supporter(self, i: int, j: int):
        """Literal: j is earlier, in i's container, with its top at i's bottom."""
        lit = self.m.new_bool_var(f"sup{i}_{j}")
        self.m.add_implication(lit, self.before(j, i))
        self.m.add(self.end[j][self.v] == self.pos[i][self.v]).only_enforce_if(lit)
        for s, into_i in self.into[i].items():
            if s in self.into[j]:
                self.m.add_bool_or([~lit, ~into_i, self.into[j][s]])
            else:
                self.m.add_bool_or([~lit, ~into_i])
        return lit

    def _base_fraction(self, i: int, others: list[int], floor, fraction: float) -> None:
        m, v, tol = self.m, self.v, self.inst.rules.tolerance
        covers = []
        for j in others:
            lit = self._supporter(i, j)
            lens, tops = [], []
            for a in range(v):
                top = min(self.ext_hi[i][a], self.ext_hi[j][a])
                ov = m.new_int_var(0, top, f"ov{i}_{j}_{a}")
                for hi, lo in ((self.end[i][a], self.pos[i][a]), (self.end[i][a], self.pos[j][a]),
                               (self.end[j][a], self.pos[i][a]), (self.end[j][a], self.pos[j][a])):
                    m.add(ov <= hi - lo).only_enforce_if(lit)
                lens.append(ov)
                tops.append(top)
            if v == 1:
                area = lens[0]
            else:
                area = m.new_int_var(0, tops[0] * tops[1], f"ar{i}_{j}")
                m.add_multiplication_equality(area, lens)
            cov = m.new_int_var(0, math.prod(tops), f"cov{i}_{j}")
            m.add(cov <= area)
            m.add(cov == 0).only_enforce_if(~lit)
            covers.append(cov)
        for k, o in enumerate(self.opts[i]):
            base = math.prod(o.ext[:v])
            perimeter = 2.0 if v == 1 else 2.0 * (o.ext[0] + o.ext[1])
            need = max(0, math.ceil(fraction * base - tol * perimeter - 1e-12))
            # the checker accepts covered + tol * perimeter >= fraction * base; covered is integral
            m.add(sum(covers) >= need).only_enforce_if([self.pick[i][k], ~floor])

    def objective(self) -> None:
        """Section 5: height, height-sum or bins, with `then: tips` weighted lexicographically."""
        m = self.m
        self.h = [m.new_int_var(0, self.cap[s], f"h{s}") for s in range(len(self.slots))]
        self.used = [m.new_bool_var(f"u{s}") for s in range(len(self.slots))]
        for i in range(self.n):
            for s, lit in self.into[i].items():
                m.add(self.h[s] >= self.end[i][self.v]).only_enforce_if(lit)
                m.add_implication(lit, self.used[s])
        for s, sl in enumerate(self.slots):
            vol = [(lit, math.prod(self.opts[i][0].ext)) for i in range(self.n) for t, lit in self.into[i].items() if t == s]
            if vol:
                m.add(sum(c * lit for lit, c in vol) <= math.prod(sl.size) * self.h[s])
            if s > 0 and self.slots[s - 1].type_id == sl.type_id:
                m.add_implication(self.used[s], self.used[s - 1])
        kind = self.inst.objective.minimise
        if kind == "height":
            main = m.new_int_var(0, max(self.cap, default=0), "height")
            for hs in self.h:
                m.add(main >= hs)
        elif kind == "height-sum":
            main = sum(self.h)
        else:
            main = sum(self.used)
        self.tips = sum(p for i in range(self.n) for p, o in zip(self.pick[i], self.opts[i]) if o.grip is not None)
        self.weight = self.n + 1 if self.inst.objective.then == "tips" else 1
        m.minimize(main * self.weight + (self.tips if self.weight > 1 else 0))

    def build(self) -> None:
        self.variables()
        self.lift_order()
        self.side_access()
        self.containment()
        self.no_overlap()
        self.support()
        self.objective()

    def fix(self, plan: Plan) -> None:
        """Pin the model to `plan` (a checker-accepted plan must then be a solution of it)."""
        idx = {b.id: k for k, b in enumerate(self.inst.boxes)}
        slot = {(sl.type_id, sl.index): s for s, sl in enumerate(self.slots)}
        for rank, mv in enumerate(plan.moves):
            i = idx[mv.box]
            ext = self.inst.boxes[i].extents(mv.orientation)
            grip = grip_needed(mv.orientation)
            # a dominated tip is represented by the upright option with the same extents
            k = next(k for k, o in enumerate(self.opts[i])
                     if o.ext == tuple(int(e) for e in ext) and o.grip in (grip, None))
            self.m.add(self.pick[i][k] == 1)
            s = slot[tuple(mv.container)]
            self.m.add(self.into[i][s] == 1) if s in self.into[i] else self.m.add_bool_or([])
            self.m.add(self.seq[i] == rank)
            for a in range(self.dim):
                self.m.add(self.pos[i][a] == int(round(mv.at[a])))

    def plan(self, solver: cp_model.CpSolver) -> Plan:
        moves = []
        for i, b in enumerate(self.inst.boxes):
            k = next(k for k, p in enumerate(self.pick[i]) if solver.boolean_value(p))
            s = next(s for s, lit in self.into[i].items() if solver.boolean_value(lit))
            o = self.opts[i][k]
            at = tuple(int(solver.value(p)) for p in self.pos[i])
            moves.append((solver.value(self.seq[i]), Move(b.id, (self.slots[s].type_id, self.slots[s].index), o.orientation, at, o.grip)))
        moves.sort(key=lambda t: t[0])
        return Plan(self.inst.name, tuple(mv for _, mv in moves))


def solve_cpsat_rules(instance: Instance, *, time_limit: float = 30.0, workers: int = 1,
                      check: bool = True, fixed: Optional[Plan] = None) -> CpRules:
    """The optimum of an integer instance under every rule of PROBLEM.md, by CP-SAT.

    Raises NotExact outside the exact cases (see `check_exact`). With `check`, the plan must pass
    `instances.checker.check_plan` with the same objective and tips (an AssertionError if not).
    `fixed` pins the model to a given plan: the test that the model admits every plan the checker
    accepts (its answer must then be that plan's objective).

    Example:
    >>> solve_cpsat_rules(instance, time_limit=10).objective  # doctest: +SKIP
    5
    """
    started = time.perf_counter()
    check_exact(instance)
    model = _Model(instance)
    if model.infeasible:
        return CpRules("infeasible", None, None, None, None, 0.0)
    model.build()
    if fixed is not None:
        model.fix(fixed)
    solver = cp_model.CpSolver()
    solver.parameters.max_time_in_seconds = time_limit
    solver.parameters.num_workers = workers
    solver.parameters.random_seed = 0
    try:
        code = solver.solve(model.m)
    except IndexError:
        # OR-Tools 9.15 presolve symmetry detection can fail inside (an absl map lookup) on
        # optional NoOverlap2D models; the same model solves without symmetry detection.
        spent = time.perf_counter() - started
        solver = cp_model.CpSolver()
        solver.parameters.max_time_in_seconds = max(0.0, time_limit - spent)
        solver.parameters.num_workers = workers
        solver.parameters.random_seed = 0
        solver.parameters.symmetry_level = 0
        code = solver.solve(model.m)
    status = STATUS.get(code, "unknown")
    if status not in ("optimal", "feasible"):
        return CpRules(status, None, None, None, None, time.perf_counter() - started)
    plan = model.plan(solver)
    value = int(round(solver.objective_value))
    w = model.weight
    tips = sum(1 for mv in plan.moves if not is_upright(mv.orientation))
    objective = value // w
    bound = int(math.floor(solver.best_objective_bound / w + 1e-9))
    if check:
        from instances.checker import check_plan

        report = check_plan(instance, plan)
        assert report.feasible, f"checker rejects the CP-SAT plan: {report.violations}"
        assert abs(report.objective - objective) <= 1e-9, (report.objective, objective)
        assert report.tips == tips, (report.tips, tips)
    return CpRules(status, objective, tips, bound, plan, time.perf_counter() - started)
