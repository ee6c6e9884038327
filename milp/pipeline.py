"""The solve pipeline: validate, preprocess, bound, greedy incumbent, MILP, extract, check, report."""
from __future__ import annotations

import dataclasses
import math
import os
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Optional, Union

import pulp

import bounds
from instances.checker import check_plan
from instances.errors import InputError
from instances.io import file_mode, instance_digest
from instances.model import Instance, Plan, ProofStep, Provenance, Result, SolverInfo, TieBreak, relative_gap
from instances.precedence import precedence_graph

from . import backends, binpack1d, grid, heightmap, special, split
from .extract import extract_plan
from .incumbent import Incumbent, best_incumbent
from .model import build
from .problem import Problem, prepare, round_bound


def validate_options(instance: Instance, time_limit: float, backend: str, threads: int, seed: int,
                     export_model: Optional[str]) -> None:
    """Reject options the solver cannot honour, naming the option (an InputError, exit 2 in the CLI)."""
    problems = []
    if not isinstance(time_limit, (int, float)) or not time_limit > 0 or not math.isfinite(time_limit):
        problems.append(("time_limit", f"must be a positive number of seconds, got {time_limit!r}"))
    if backend not in backends.BACKENDS:
        problems.append(("backend", f"must be one of {', '.join(backends.BACKENDS)}, got {backend!r}"))
    if not isinstance(threads, int) or threads < 1:
        problems.append(("threads", f"must be a positive integer, got {threads!r}"))
    if not isinstance(seed, int) or seed < 0:
        problems.append(("seed", f"must be a non-negative integer, got {seed!r}"))
    if export_model is not None and Path(export_model).suffix.lower() not in (".lp", ".mps"):
        problems.append(("export_model", f"file name must end in .lp or .mps, got {str(export_model)!r}"))
    if instance.objective.minimise == "bins" and any(c.height is None for c in instance.containers):
        problems.append(("objective.minimise", "'bins' needs every container type to have a height"))
    if problems:
        raise InputError("<options>", problems)


@dataclass
class _Run:
    """Mutable state of one solve: the best checked plan and the best proved bound so far."""

    instance: Instance
    problem: Problem
    graph: object
    t0: float
    time_limit: float
    best: Optional[Incumbent] = None
    bound: float = 0.0
    bounds: dict = field(default_factory=dict)
    notes: list = field(default_factory=list)
    nodes: int = 0
    milp_seconds: float = 0.0
    interrupted: bool = False
    errors: list = field(default_factory=list)
    progress: Optional[Callable[[dict], None]] = None
    steps: list = field(default_factory=list)  # ProofStep: how the bound was established
    backend: str = "highs"
    threads: int = 1
    seed: int = 0
    log: bool = False
    searched: bool = False  # every container part has the height-map searches (`_parts_searched`)

    def report(self, stage: str) -> None:
        """Tell the caller's progress callback where the solve stands (incumbent, bound, gap, elapsed)."""
        if self.progress is None:
            return
        ub = self.upper
        lb = min(self.bound, ub) if ub is not None else self.bound
        self.progress({"stage": stage, "incumbent": ub, "bound": lb,
                       "gap": None if ub is None else relative_gap(ub, lb),
                       "elapsed": time.perf_counter() - self.t0})

    def left(self) -> float:
        return self.time_limit - (time.perf_counter() - self.t0)

    def offer(self, plan: Plan) -> bool:
        """Check a plan; keep it when feasible and better. A rejected plan is recorded as an error."""
        report = check_plan(self.instance, plan, self.graph)
        if not report.feasible:
            self.errors.extend(f"checker rejected the model's plan: {v}"
                               for v in report.violations)
            return False
        cand = Incumbent(plan, report)
        if self.best is None or cand.key < self.best.key:
            self.best = cand
        return True

    @property
    def upper(self) -> Optional[float]:
        return None if self.best is None else self.best.report.objective

    def closed(self) -> bool:
        ub = self.upper
        return ub is not None and ub <= self.bound + 1e-9 * max(1.0, abs(ub))

    def grace(self) -> float:
        """How far past the time limit a run may end: 10 % of it or 2 s, whichever is larger."""
        return max(2.0, 0.1 * self.time_limit)

    def share(self) -> float:
        """Time for a solve whose answer may need confirming: the rest is kept for the second solve."""
        return max(0.1, PRIMARY_SHARE * self.left())

    def solve(self, lp: pulp.LpProblem, *, integral: bool, time_limit: Optional[float] = None) -> backends.Outcome:
        """One backend run with this solve's options, its nodes and time added to the totals."""
        out = backends.run(lp, backend=self.backend, time_limit=self.share() if time_limit is None else time_limit,
                           threads=self.threads, seed=self.seed, log=self.log, integral=integral)
        self._count(out)
        return out

    def _count(self, out: backends.Outcome) -> None:
        self.nodes += out.nodes or 0
        self.milp_seconds += out.seconds
        self.interrupted = self.interrupted or out.interrupted

    def confirmed(self, lp: pulp.LpProblem, out: backends.Outcome, *, integral: bool, what: str,
                  extract: Optional[Callable[[], Plan]] = None) -> Optional[float]:
        """The lower bound on `lp`'s objective that `out` AND an independent second solve establish.

        math.inf when both say infeasible; None when the second solve does not finish or the two
        disagree (one finds a solution the other calls impossible, or proves a bound above the
        other's solution): then nothing is claimed, and the notes say so. A solution found by
        the second solve is still offered to the checker. `what` names the step in the notes.
        """
        if out.bound is None:
            return None
        if self.interrupted:
            self.notes.append(f"{what}: interrupted before the confirming solve; not used as a proof")
            return None
        second = backends.confirm(lp, time_limit=max(0.1, self.left() + 0.5 * self.grace()), threads=self.threads,
                                  seed=self.seed, log=self.log, integral=integral)
        self._count(second)
        label = backends.confirmer(self.backend)
        if second.objective is not None and extract is not None and second.status in ("optimal", "feasible"):
            self.offer(extract())
        slack = 1e-6 * max(1.0, abs(out.objective or 0.0), abs(second.objective or 0.0))
        clash = ((out.status == "infeasible" and second.objective is not None)
                 or (second.status == "infeasible" and out.objective is not None)
                 or (second.bound is not None and out.objective is not None and second.bound > out.objective + slack)
                 or (second.objective is not None and out.bound > second.objective + slack))
        if clash:
            self.notes.append(f"solvers disagree on {what}: {backends.backend_version(self.backend)} says "
                              f"{out.status}, {label} says {second.status}; nothing is claimed from it")
            return None
        if second.bound is None:
            self.notes.append(f"{what}: {out.status} by {self.backend}, not confirmed ({label} ended "
                              f"{second.status} at the time limit); not used as a proof")
            return None
        return min(out.bound, second.bound)

    def prove(self, claim: str, method: str, *, solver: Optional[str] = None, confirmed_by: Optional[str] = None,
              seconds: Optional[float] = None) -> None:
        """Record one step of the certificate behind the bound."""
        self.steps.append(ProofStep(claim, method, solver, confirmed_by,
                                    None if seconds is None else round(seconds, 3)))

    def raise_bound(self, value: float, claim: str, method: str, *, solver_run: bool, seconds: float = 0.0,
                    confirmed_by: Optional[str] = None) -> None:
        """Raise the proved bound to `value` (a confirmed step), recording how."""
        if value <= self.bound:
            return
        self.bound = value
        self.prove(claim, method,
                   solver=backends.backend_version(self.backend) if solver_run else None,
                   confirmed_by=confirmed_by or (backends.confirmer(self.backend) if solver_run else "exact arithmetic"),
                   seconds=seconds)


#: Share of the time left that a solve may use when its answer may have to be confirmed. The
#: confirming solve (presolve off) took about 1.5 times as long in measurements, so a proof found
#: after about 40 % of the time left could not be confirmed in time: 0.45 balances the two.
PRIMARY_SHARE = 0.45
#: Seconds the exhaustive height-map search may spend on one container step before the MILP takes over.
HEIGHTMAP_SECONDS = 0.25
#: Share of a container step's time that the top-down search of the support-free relaxation may use
#: to prove "no plan" (it goes first: rules family, 2D n = 30, median 1.19 s -> 0.68 s against the
#: forward search first), and then the hunt for a plan among the relaxation's; the MILP has the rest.
REFUTE_SHARE = 0.5
#: Share of the time left for re-planning parts whose plans do not merge (`_unlocked`), and the
#: share when the parts' plans already meet the proved bound (a merge then ends the solve).
UNLOCK_SHARE = 0.2
CLOSING_SHARE = 0.9
#: Seconds of the first round of re-planning per kept plan; each round doubles it.
UNLOCK_SECONDS = 0.1
#: Share of the time left that the container decomposition's first plan search may use (`_part_plans`),
#: and the seconds each of its searches may take (twice that per height, once for the try at the
#: floor): plans come in milliseconds or not at all (measured on the rules family, 2D n = 30 and
#: 3D n = 16; the try at the floor took the 2D n = 20 median from 0.19 s to 0.05 s).
PLAN_SHARE = 0.1
DESCENT_SECONDS = 0.05
#: The top-down step runs when the parts' plans are at least this far above the bound: closer,
#: the steps from the bound upward are no more and each is tighter (3D n = 16 of the rules family).
TOP_DOWN_GAP = 3
#: Share of the time limit the slow lower bounds (bar, contiguous) may use.
BOUNDS_SHARE = 0.2
#: The same when every box is bound to one container: the containers' parts (`milp.split`) then
#: prove more per second than the whole-instance bounds (measured on the rules family, 2D n = 30);
#: and none when every part has the height-map searches: their proofs on the parts cover what the
#: slow bounds give (rules family, 35 instances 2D n = 10-40 and 3D n = 6-16: the same 35 proved,
#: pooled median 0.245 s -> 0.185 s without them).
SPLIT_BOUNDS_SHARE = 0.05
SEARCHED_BOUNDS_SHARE = 0.0


def _safe_cap(p: Problem) -> float:
    """An open top never needs to be higher than all boxes stacked (gaps between levels can be closed)."""
    z = p.dim - 1
    return float(sum(p.max_extent(i, z) for i in range(p.n)))


def _lower_bounds(run: _Run) -> None:
    """The largest lower bound of the `bounds` package, within its share of the time, as a proof step."""
    try:
        share = (SEARCHED_BOUNDS_SHARE if run.searched
                 else SPLIT_BOUNDS_SHARE if split.applies(run.problem) else BOUNDS_SHARE)
        value, named = bounds.best(run.instance, share * run.time_limit)
    except Exception as exc:  # a failing bound must not sink the solve; say so in the notes
        run.notes.append(f"lower bounds unavailable ({type(exc).__name__}: {exc}); using the model's own")
        return
    run.bounds.update({k: float(v) for k, v in named.items()})
    value = round_bound(float(value), run.problem.integral_objective)
    if value > run.bound:
        name = max(named, key=lambda k: named[k]) if named else "?"
        kind = run.instance.objective.minimise
        claim = "no plan exists" if math.isinf(value) else f"{kind} >= {value:g}"
        how = {"contiguous": "HiGHS with presolve on and off, the weaker dual bound",
               "bar": "weak duality on the LP duals (Farley 1990)",
               "type-sum": "per-type bounds summed, each confirmed as its kind is"}.get(name, "exact arithmetic")
        run.bound = value
        run.prove(claim, f"lower bound '{name}' (bounds package)", confirmed_by=how)


def _export(p: Problem, run: _Run, path: str) -> None:
    """Write the main model (with the current bounds) as LP or MPS, atomically."""
    ub = run.upper if run.upper is not None else _safe_cap(p)
    vcap = ub if p.instance.objective.minimise != "bins" else _safe_cap(p)
    m = build(p, vcap=max(vcap, run.bound), lower=run.bound, upper=max(ub, run.bound))
    target = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=".model-", suffix=target.suffix, dir=target.parent or ".")
    os.close(fd)
    try:
        os.chmod(tmp, file_mode(target))  # as a plain open() would: the umask, or the replaced file's mode
        if target.suffix.lower() == ".lp":
            m.lp.writeLP(tmp)
        else:
            m.lp.writeMPS(tmp)
        os.replace(tmp, target)
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)


def _main_stage(run: _Run) -> None:
    """Minimise the main objective below the incumbent; every solution is checked before it counts.

    Integer objectives ask for plans strictly better than the incumbent (upper = incumbent - 1),
    so a confirmed "infeasible" proves the incumbent optimal. Otherwise the model asks for plans
    no worse than the incumbent: the checked incumbent is then a solution of the model, so
    "infeasible" would contradict the checker and proves nothing (it is reported, never claimed).
    """
    p = run.problem
    integral = p.integral_objective
    kind = p.instance.objective.minimise
    cap = _safe_cap(p)
    if run.upper is not None:
        upper = run.upper - 1 if integral else run.upper
    else:
        upper = float(len(p.slots)) if kind == "bins" else (cap if kind == "height" else cap * len(p.slots))
    if upper < run.bound - 1e-9:
        return
    vcap = cap if kind == "bins" else min(cap, upper)
    m = build(p, vcap=vcap, lower=run.bound, upper=upper)
    out = run.solve(m.lp, integral=integral)
    run.notes.extend(r for r in m.restrictions if r not in run.notes)
    if out.objective is not None and out.status in ("optimal", "feasible"):
        run.offer(extract_plan(m))
    if not m.exact or out.bound is None:
        return  # a restricted model proves nothing about the full problem
    if out.status == "infeasible" and not integral and run.upper is not None:
        run.notes.append("the model found no plan as good as the checked incumbent (a model restriction or a "
                         "solver error); nothing is claimed from it")
        return
    t0 = time.perf_counter()
    what = f"{kind} in [{run.bound:g}, {upper:g}]"
    got = run.confirmed(m.lp, out, integral=integral, what=what, extract=lambda: extract_plan(m))
    if got is None:
        return
    if math.isinf(got):
        # no plan with objective <= upper; with an incumbent that is upper + 1 (integral) or no plan at all
        value = run.upper if run.upper is not None else math.inf
        claim = "no plan exists" if math.isinf(value) else f"no plan has {kind} <= {upper:g}"
    else:
        value = round_bound(min(got, run.upper) if run.upper is not None else got, integral)
        claim = f"{kind} >= {value:g}"
        run.bounds["milp"] = float(value)
    run.raise_bound(value, claim, "relative-position MILP (milp.model)", solver_run=True,
                    seconds=out.seconds + time.perf_counter() - t0)
    run.report("milp")


def _use_decision(p: Problem) -> bool:
    """The decision version pays on integer heights (measured: 9/9 strip instances n=10-14 closed in
    60 s against 8/9 by direct optimisation); other objectives are optimised directly."""
    return p.integral_objective and p.instance.objective.minimise == "height"


def _decision_stage(run: _Run) -> None:
    """Height on integer data: feasibility models at H = bound, bound + 1, ... below the incumbent.

    Each step caps every open top at the target height (the tightest big-M); a confirmed
    infeasible step proves the bound up by one, a feasible one is optimal because every lower
    target failed.
    """
    p = run.problem
    cap = _safe_cap(p)
    if all(slot.size[-1] is not None for slot in p.slots):
        cap = min(cap, max(slot.size[-1] for slot in p.slots))  # no box top can be above that
    z = p.dim - 1
    # model-internal: every box stands somewhere, so H is at least the lowest extent of the tallest box
    tallest = round_bound(max(p.min_extent(i, z) for i in range(p.n)), True)
    run.raise_bound(tallest, f"height >= {tallest:g}", "a box's lowest usable orientation (arithmetic)",
                    solver_run=False)
    while not run.closed() and run.left() > 0.05 and not run.interrupted:
        target = run.bound
        if target > cap + 1e-9:
            if run.upper is None:
                run.raise_bound(math.inf, "no plan exists",
                                f"every height up to {cap:g} was shown infeasible, and no plan needs more",
                                solver_run=False)
            return
        use_grid = (grid.applies(p) and grid.is_perfect(p, int(target))
                    and grid.size_estimate(p, int(target)) <= grid.MAX_NONZEROS)
        if use_grid:
            g = grid.build_grid(p, int(target))
            lp, exact, restrictions, extract = g.lp, True, [], (lambda g=g: grid.grid_plan(p, g))
            method = "position-indexed model on normal patterns (milp.grid, Beasley 1985)"
            if not any(n.startswith("perfect-packing") for n in run.notes):
                run.notes.append("perfect-packing step: position-indexed model on normal patterns (Beasley 1985)")
        else:
            m = build(p, vcap=target, lower=0.0, upper=target, goal="feasible")
            lp, exact, restrictions, extract = m.lp, m.exact, m.restrictions, (lambda m=m: extract_plan(m))
            method = "relative-position MILP, decision version (milp.model)"
        out = run.solve(lp, integral=True)
        if out.status == "unknown" and not run.interrupted and run.left() > 1.0:
            # no answer within the share kept for a confirmation: a proof this slow could not be
            # confirmed in time anyway, but a plan needs no confirmation, so look again with the rest
            out = run.solve(lp, integral=True, time_limit=run.left())
        run.notes.extend(r for r in restrictions if r not in run.notes)
        if out.objective is not None and out.status in ("optimal", "feasible"):
            if not run.offer(extract()):
                return
            if run.upper is not None and run.upper > target + 1e-9:
                return  # the checked plan scores above the target: do not claim more than it shows
        elif out.status == "infeasible" and exact:
            t0 = time.perf_counter()
            got = run.confirmed(lp, out, integral=True, what=f"height <= {target:g}", extract=extract)
            if got is None or not math.isinf(got):
                return
            run.raise_bound(target + 1, f"no plan has height <= {target:g}", f"{method}, H = {target:g}",
                            solver_run=True, seconds=out.seconds + time.perf_counter() - t0)
            run.bounds["milp"] = float(run.bound)
        else:
            return
        run.report(f"height {target:g}")


def _split_stage(run: _Run) -> None:
    """Every box bound to one container: the containers' parts (`milp.split`) are solved apart.

    Each part is a relaxation of the whole, so a confirmed "no plan of height <= H" for one part
    raises the bound on `height` to H + 1 (and each part's least height adds to the bound on
    `height-sum`). When every part has a plan within the bound, the plans are merged into one
    sequence and offered to the checker; when they cannot be merged, the whole model goes on
    from the raised bound.
    """
    p = run.problem
    if run.closed() or not p.integral_objective or not split.applies(p):
        return
    kind = p.instance.objective.minimise
    z = p.dim - 1
    pieces = split.parts(p)
    if len(pieces) == 1 and not heightmap.refutable(pieces[0].problem):
        return  # one container and no search to add: the whole model is the same model
    # the part whose boxes need the most height on average first: it is the likeliest to raise the bound
    pieces.sort(key=lambda pc: -sum(min(e[0] * e[z] for e in pc.problem.ext[i].values()) for i in range(pc.problem.n))
                / pc.problem.slots[0].size[0])
    least = {pc.slot: round_bound(max(pc.problem.min_extent(i, z) for i in range(pc.problem.n)), True) for pc in pieces}
    early = _part_plans(run, pieces, least)
    if kind == "height" and _top_down(run, pieces, early):
        return
    found: dict[int, Plan] = {}
    todo = list(pieces)
    patient = False  # the first rounds give every open part an even slice; then each step the usual share
    while todo:
        progress = False
        for pc in list(todo):
            if run.closed() or run.left() <= 0.05 or run.interrupted:
                return
            target = max(run.bound, least[pc.slot]) if kind == "height" else least[pc.slot]
            if pc.slot in early and early[pc.slot][0] <= target:
                got = early[pc.slot][1]
            else:
                got = _part_step(run, pc, target, None if patient else run.left() / (2 * len(todo)))
            if got is None:
                continue
            progress = True
            if isinstance(got, Plan):
                found[pc.slot] = got
                todo.remove(pc)
                continue
            if target >= _part_cap(pc.problem):
                value, claim = math.inf, "no plan exists"
            else:
                least[pc.slot] = target + 1
                value = target + 1 if kind == "height" else float(sum(least.values()))
                claim = f"no plan has height <= {target:g}" if kind == "height" else f"height-sum >= {value:g}"
            if value > run.bound:
                run.bound = value
                run.steps.append(dataclasses.replace(got, claim=f"{claim}: {got.claim}"))
            if math.isinf(value):
                return
            run.bounds["split"] = float(run.bound)
            run.report("containers")
        if not progress:
            if patient:
                return
            patient = True
    before = run.best
    if not _offer_merged(run, pieces, found):
        run.notes.append("the containers' separate plans admit no common sequence; the whole model goes on")
    elif run.best is not before:
        run.notes.append("plan merged from the containers' separate plans (container decomposition)")
    run.report("containers")


def _parts_searched(p: Problem) -> bool:
    """The container decomposition applies and each part has the height-map searches (plans come from them)."""
    return split.applies(p) and p.integral_objective and all(heightmap.refutable(pc.problem) for pc in split.parts(p))


def _offer_merged(run: _Run, pieces: list, plans: dict[int, Plan]) -> bool:
    """Merge the parts' plans into one sequence (`split.merge`) and offer it to the checker.

    When tips in two containers wait for each other's boxes, the parts holding them are planned
    again with those tips restricted (`_unlocked`). False when no common sequence was found."""
    merged = split.merge(run.problem, [(pc, plans[pc.slot]) for pc in pieces])
    if merged is None:
        merged = _unlocked(run, pieces, dict(plans))
    if merged is not None:
        run.offer(merged)
    return merged is not None


def _unlocked(run: _Run, pieces: list, plans: dict[int, Plan]) -> Optional[Plan]:
    """A merged plan when the parts' own plans do not merge: the first part's plan is kept and the
    others are planned again in turn, each on the orders the plans before it fix (`split.following`)
    and strict, within the height the objective allows them. Each kept plan gets a slice of
    UNLOCK_SECONDS in turn, the slices doubling each round, so an easy order is not starved by a
    hard one. Plan searches only; None when nothing merges within UNLOCK_SHARE of the time left
    (CLOSING_SHARE when the plans already meet the proved bound)."""
    p = run.problem
    heights = {pc.slot: _plan_height(pc.problem, plans[pc.slot]) for pc in pieces}
    top = max(heights.values())
    closing = p.instance.objective.minimise == "height" and top <= run.bound  # a merge would end the solve
    end = time.perf_counter() + (CLOSING_SHARE if closing else UNLOCK_SHARE) * max(run.left(), 0.0)
    limit = lambda pc: top if p.instance.objective.minimise == "height" else heights[pc.slot]
    step = UNLOCK_SECONDS
    failed: set[int] = set()  # kept plans whose re-planning failed on an exact answer (`_replanned`): not retried
    while time.perf_counter() < end and not run.interrupted and len(failed) < len(pieces):
        for first in (k for k in range(len(pieces)) if k not in failed):  # each kept in turn, slices growing
            order = pieces[first:] + pieces[:first]
            got = _replanned(p, order, plans[order[0].slot], limit, min(end, time.perf_counter() + step))
            if isinstance(got, Plan):
                return got
            if got == "none":
                failed.add(first)
        step *= 2
    return None


def _replanned(p: Problem, order: list, kept: Plan, limit: Callable, until: float) -> Union[Plan, str]:
    """The merged plan of `_unlocked` with the first part's plan kept and the others planned again in
    order, each on the orders fixed before it. Else "none" when this order failed on an exact answer
    (orders that admit no sequence, a part with no plan within `limit(part)`, plans that do not
    merge), which a longer slice would change only by giving an earlier part another plan, or
    "unknown" when `until` came first. Plan searches only: nothing here is claimed."""
    fixed = {order[0].slot: kept}
    q = split.following(p, order[0], kept)
    for pc in order[1:]:
        if q is None:
            return "none"
        if time.perf_counter() >= until:
            return "unknown"
        got = _plan_within(split.part(q, pc.slot, frozenset(pc.boxes)).problem, limit(pc), until)
        if got.status != "plan":
            return got.status
        fixed[pc.slot] = got.plan
        q = split.following(q, pc, got.plan)
    return "none" if q is None else (split.merge(p, [(pc, fixed[pc.slot]) for pc in order]) or "none")


def _plan_height(q: Problem, plan: Plan) -> int:
    """The packed height of one part's plan."""
    return int(max((mv.at[-1] + q.ext[q.ids.index(mv.box)][mv.orientation][-1] for mv in plan.moves), default=0))


def _plan_within(q: Problem, height: int, deadline: float, hunt_first: bool = True) -> heightmap.Found:
    """One part at one height by the height-map searches: the top-down search of the relaxation
    (`heightmap.refute`) with half the time, then the top-down hunt and the forward search in turn
    (or the other way round), the first with half the rest. Status "plan", "none" (each search's
    "none" is a proof for the part) or "unknown". The relaxation goes first because it answers
    "none" in milliseconds where the plan searches only run out of time (rules family, the 35
    instances of the side-by-side benchmark: sum of times 6.4 s -> 5.2 s)."""
    def halfway() -> float:
        return time.perf_counter() + 0.5 * max(deadline - time.perf_counter(), 0.0)

    if heightmap.refutable(q):
        found = heightmap.refute(q, height, deadline=halfway())
        if found.status in ("plan", "none"):
            return found
    half = halfway()
    searches = [(heightmap.refutable, heightmap.hunt), (heightmap.applies, heightmap.search)]
    got = heightmap.Found("unknown")
    for k, (applies, search) in enumerate(searches if hunt_first else searches[::-1]):
        if applies(q):
            got = search(q, height, deadline=half if k == 0 else deadline)
            if got.status in ("plan", "none"):
                return got
    return got


def _top_down(run: _Run, pieces: list, best: dict[int, tuple[int, Plan]]) -> bool:
    """Objective `height`: ask the parts that reach the incumbent's height U for a plan below it.

    A confirmed "none" at U - 1 for one of them proves U optimal at once, without the decision
    steps from the bound upward, which cost a proof each; a plan lowers U and the next round
    asks again. `best` (slot -> (height, plan)) is updated in place. True when the stage is done
    (optimal, or time out); False when a step had no answer in its slice and the steps from the
    bound upward take over.
    """
    if len(best) != len(pieces) or max(h for h, _ in best.values()) - run.bound < TOP_DOWN_GAP:
        return False

    def merged(done: bool) -> bool:  # merged once on leaving: a failed merge costs a re-planning
        ok = _offer_merged(run, pieces, {k: plan for k, (_, plan) in best.items()})
        return done and ok

    while True:
        top = max(h for h, _ in best.values())
        if top - 1 < run.bound:
            return merged(True)
        for pc in (pc for pc in pieces if best[pc.slot][0] == top):
            if run.left() <= 0.05 or run.interrupted:
                merged(True)
                return True
            got = _part_step(run, pc, top - 1)
            if got is None:
                return merged(False)
            if isinstance(got, Plan):
                report = check_plan(pc.problem.instance, got)
                if not report.feasible:
                    return merged(False)
                best[pc.slot] = (int(round(report.objective)), got)
                continue
            run.bound = float(top)
            run.bounds["split"] = float(top)
            run.steps.append(dataclasses.replace(got, claim=f"no plan has height <= {top - 1:g}: {got.claim}"))
            run.report("containers")
            break  # the incumbent is proved: the next round merges the plans and ends


def _part_plans(run: _Run, pieces: list, least: dict) -> dict[int, tuple[int, Plan]]:
    """Each part's lowest plan that a short descent of height-map searches finds: slot -> (height, plan).

    A first search at the part's cap, one at the floor, then one below each plan found, each
    within the step budget (`_plan_within`: the relaxation, then forward first), all within PLAN_SHARE of the time left.
    The floor is the part's least height; for objective `height` also the bound and the height of
    any part planned before it (lower gains nothing). The parts' plans are merged and offered at
    once, so the incumbent is good before the proofs from below start. Plans only: a "none" here
    raises the floor and is left to the proof steps to claim.
    """
    out: dict[int, tuple[int, Plan]] = {}
    end = time.perf_counter() + PLAN_SHARE * max(run.left(), 0.0)
    height = run.problem.instance.objective.minimise == "height"
    for pc in pieces:
        q = pc.problem
        if not heightmap.applies(q):
            continue
        target, jumped = int(_part_cap(q)), False
        # objective height: a part lower than the bound, or than a part already planned, gains nothing
        floor = max([least[pc.slot], run.bound] + [h for h, _ in out.values()]) if height else least[pc.slot]
        while target >= floor and not run.interrupted and time.perf_counter() < end:
            # after the first plan one try at the floor itself, hunt first: most bounds here are tight
            jump = pc.slot in out and not jumped and target > math.ceil(floor)
            at, jumped = (math.ceil(floor) if jump else target), jumped or jump
            got = _plan_within(q, at, min(end, time.perf_counter() + (1 if jump else 2) * DESCENT_SECONDS),
                               hunt_first=jump)
            if got.status == "plan":
                out[pc.slot] = (got.height, got.plan)
                target = got.height - 1
            elif got.status == "none":
                floor = at + 1  # proved: no plan at or below `at`, left to the proof steps to claim
            elif not jump:
                break
    before = run.best
    if len(out) == len(pieces) and _offer_merged(run, pieces, {k: plan for k, (_, plan) in out.items()}):
        if run.best is not before:
            run.notes.append("plan merged from the containers' height-map plans (container decomposition)")
    return out


def _part_cap(p: Problem) -> float:
    """The height above which a part cannot need more: its closed top, or all its boxes stacked."""
    top = p.slots[0].size[-1]
    return float(top) if top is not None else _safe_cap(p)


def _part_step(run: _Run, piece: split.Part, target: float, seconds: Optional[float] = None):
    """A plan of the part within `target` (a Plan), a confirmed "none" (a ProofStep), or None (no answer).

    `seconds` caps the model's first solve (the container decomposition's even slices); without
    it the solve takes the usual share and, with no answer, the rest of the time.

    The support-free relaxation searched top down (`heightmap.refute`) goes first: it proves most
    "no plan" answers in milliseconds, and its plan counts when it meets support. Where the
    relaxation packs, a short hunt among its plans for one that meets support (`heightmap.hunt`);
    then the exhaustive height-map search (`milp.heightmap.search`) for a short while, which closes
    small parts outright; then the hunt again, longer, if the short one was cut off; the MILP
    answers the rest.
    """
    start = time.perf_counter()
    q = piece.problem
    target = min(target, _part_cap(q))
    what = f"the boxes of container {q.instance.name.rsplit(' / ', 1)[-1]} alone"
    budget = max(seconds if seconds is not None else run.left(), 0.0)
    hunting = False  # the relaxation packs: look among its plans for one that meets support
    if heightmap.refutable(q):
        t0 = time.perf_counter()
        found = heightmap.refute(q, int(target), deadline=t0 + REFUTE_SHARE * budget)
        if found.status == "none":
            return _searched(f"{what} cannot be packed to height {target:g}",
                             f"exhaustive search of the support-free relaxation from the top down ({found.states} "
                             "states, milp.heightmap.refute)", t0)
        if found.status == "relaxed":  # a short hunt first: where the relaxation packs, plans are often near
            until = time.perf_counter() + min(HEIGHTMAP_SECONDS, REFUTE_SHARE * budget)
            found = heightmap.hunt(q, int(target), deadline=until)
            hunting = time.perf_counter() >= until  # cut off, not done: worth a longer try below
        if found.status == "plan":
            return found.plan
    if heightmap.applies(q):
        t0 = time.perf_counter()
        found = heightmap.search(q, int(target), deadline=t0 + min(HEIGHTMAP_SECONDS, 0.2 * budget))
        if found.status == "plan":
            return found.plan
        if found.status == "none":
            return _searched(f"{what} cannot be packed to height {target:g}",
                             f"exhaustive search over loading sequences on a height map ({found.states} states, "
                             "milp.heightmap)", t0)
    if hunting:
        left = max(budget - (time.perf_counter() - start), 0.0)
        found = heightmap.hunt(q, int(target), deadline=time.perf_counter() + REFUTE_SHARE * left)
        if found.status == "plan":
            return found.plan
    if seconds is not None:
        seconds = max(seconds - (time.perf_counter() - start), 0.05)
    m = build(q, vcap=target, lower=0.0, upper=target, goal="feasible")
    out = run.solve(m.lp, integral=True, time_limit=seconds)
    if seconds is None and out.status == "unknown" and not run.interrupted and run.left() > 1.0:
        out = run.solve(m.lp, integral=True, time_limit=run.left())
    run.notes.extend(r for r in m.restrictions if r not in run.notes)
    if out.objective is not None and out.status in ("optimal", "feasible"):
        return extract_plan(m)
    if out.status != "infeasible" or not m.exact:
        return None
    t0 = time.perf_counter()
    got = run.confirmed(m.lp, out, integral=True, what=f"{what}: height <= {target:g}")
    if got is None or not math.isinf(got):
        return None
    return ProofStep(f"{what} cannot be packed to height {target:g}", "relative-position MILP on one container "
                     "(milp.model, container decomposition)", backends.backend_version(run.backend),
                     backends.confirmer(run.backend), round(out.seconds + time.perf_counter() - t0, 3))

def _searched(claim: str, method: str, t0: float) -> ProofStep:
    """A proof step of an exhaustive search in integer arithmetic (no solver, nothing to confirm)."""
    return ProofStep(claim, method, None, "exact integer arithmetic (no solver)", round(time.perf_counter() - t0, 3))


def _special_stage(run: _Run) -> None:
    """Plans from special-structure finders (`milp.special`), each checked before it counts."""
    if run.closed():
        return
    deadline = run.t0 + run.time_limit
    for name, plan in special.special_plans(run.instance, run.problem, run.bound, deadline):
        if run.offer(plan) and f"plan found by {name}" not in run.notes:
            run.notes.append(f"plan found by {name}")
        if run.closed():
            return


def _structure_bound(run: _Run) -> None:
    """A bound that only a recognised structure gives: 1D bin packing (`milp.binpack1d`).

    Martello-Toth L2, the arc-flow LP with exact integer weights, or the arc-flow optimum K,
    which counts only when an exhaustive integer bin completion shows K - 1 bins cannot hold
    the items: a wrong solver answer can only cost the bound, never make it wrong.
    """
    if run.closed() or run.instance.objective.minimise != "bins" or run.left() <= 0.05:
        return
    t0 = time.perf_counter()
    got = binpack1d.proved_lower_bound(run.instance, run.problem, run.t0 + run.time_limit, upper=run.upper)
    if got is None:
        return
    value, reason = got
    run.bounds["1d-bins"] = float(value)
    solver_step = "refuted by exhaustive bin completion" in reason or "cannot hold" in reason
    run.raise_bound(value, "no plan exists" if math.isinf(value) else f"bins >= {value:g}", reason,
                    solver_run=False, seconds=time.perf_counter() - t0,
                    confirmed_by="exhaustive integer bin completion" if solver_step else "exact arithmetic")


def _tips_stage(run: _Run) -> tuple[int, bool]:
    """Fewest tipped boxes among plans with the proved main optimum (a second, lexicographic solve)."""
    p = run.problem
    tips = run.best.report.tips
    if tips == 0:
        return 0, True
    if run.left() <= 0.05 or run.interrupted:
        return tips, False
    opt = run.best.report.objective
    slack = 0.0 if p.integral_objective else max(p.instance.rules.tolerance, 1e-9 * abs(opt))
    kind = p.instance.objective.minimise
    vcap = _safe_cap(p) if kind == "bins" else min(_safe_cap(p), opt + slack)
    m = build(p, vcap=vcap, lower=run.bound, upper=opt + slack, goal="tips", main_cap=opt + slack)
    m.lp += m.tips <= tips - 1, "fewer_tips"
    out = run.solve(m.lp, integral=True)

    def better() -> None:
        plan = extract_plan(m)
        report = check_plan(p.instance, plan, run.graph)
        if report.feasible and report.objective <= opt + slack + 1e-9 and report.tips < run.best.report.tips:
            run.best = Incumbent(plan, report)
        elif not report.feasible:
            run.errors.extend(f"checker rejected the tie-break plan: {v.rule}: {v.detail}" for v in report.violations)

    if out.objective is not None and out.status in ("optimal", "feasible"):
        better()
    if not m.exact or out.status not in ("optimal", "infeasible"):
        return run.best.report.tips, False
    got = run.confirmed(m.lp, out, integral=True, what=f"tips below {tips}", extract=lambda: extract_plan(m))
    tips = run.best.report.tips
    proved = got is not None and round_bound(got, True) >= tips
    if proved:
        run.prove(f"no plan with {kind} {opt:g} tips fewer than {tips} boxes", "tie-break MILP (milp.model)",
                  solver=backends.backend_version(run.backend), confirmed_by=backends.confirmer(run.backend),
                  seconds=out.seconds)
    return tips, proved


def solve(instance: Instance, *, time_limit: float = 60.0, backend: str = "highs", threads: int = 1,
          seed: int = 0, log: bool = False, export_model: Optional[str] = None,
          progress: Optional[Callable[[dict], None]] = None) -> Result:
    """Solve an unstack-and-pack instance to proved optimality, or report the best plan and the gap.

    Pipeline: validate options; index the instance and drop orientations that can never be used
    (reporting a proof of infeasibility when a box has none left); lower bounds from `bounds`;
    a greedy precedence-respecting incumbent; then a relative-position MILP (Chen, Lee & Shen
    1995) with order potentials for the sequence. For `height` on integer data it is a decision
    version: feasibility models at H = bound, bound + 1, ... with open tops capped at H, so the
    first feasible step is optimal; otherwise the model asks only for plans strictly better than
    the incumbent (so "infeasible" proves the incumbent optimal). With `then: tips` a second,
    lexicographic solve. Every plan is replayed by `instances.checker.check_plan`.

    Result.status:
      - "optimal": a checked plan whose objective equals the proved bound;
      - "feasible": a checked plan, the gap still open when the time limit was hit;
      - "infeasible": proved that no feasible plan exists (the reason is in `notes`);
      - "unknown": no plan and no proof within the time limit;
      - "error": the model produced a plan the checker rejects (violations in `notes`).

    References: Chen, Lee & Shen (1995), An analytical model for the container loading problem,
    EJOR 80; Martello, Monaci & Vigo (2003), An exact approach to the strip-packing problem,
    INFORMS J. Computing 15; Côté & Iori (2018), The meet-in-the-middle principle for cutting
    and packing problems, INFORMS J. Computing 30.
    """
    t0 = time.perf_counter()
    validate_options(instance, time_limit, backend, threads, seed, export_model)
    graph = precedence_graph(instance)
    p = prepare(instance, graph)
    run = _Run(instance, p, graph, t0, float(time_limit), progress=progress, backend=backend, threads=threads,
               seed=seed, log=log, searched=_parts_searched(p))
    info = lambda: SolverInfo(backend=backend, version=backends.backend_version(backend), time_limit_s=float(time_limit),
                              seed=seed, time_s=round(run.milp_seconds, 3), nodes=run.nodes, threads=threads)
    seconds = lambda: round(time.perf_counter() - t0, 3)

    def result(status: str, **kw) -> Result:
        if seconds() > time_limit + run.grace():
            run.notes.append(f"time limit overrun: {seconds():g} s against {time_limit:g} s")
        run.notes.extend(f"proof step: {s.claim} ({s.method}{'; ' + s.solver if s.solver else ''}; confirmed by "
                         f"{s.confirmed_by})" for s in run.steps)
        return Result(instance.name, status, bounds=run.bounds, notes=tuple(run.notes), solver=info(),
                      seconds=seconds(), provenance=_provenance(instance, run), **kw)

    if instance.rules.integer_positions:
        run.notes.append("positions restricted to integers")
    if p.infeasible_reason:
        run.notes.append(p.infeasible_reason)
        run.prove("no plan exists", f"preprocessing: {p.infeasible_reason}", confirmed_by="exact arithmetic")
        return result("infeasible")
    try:
        _lower_bounds(run)
        run.report("bounds")
        if math.isinf(run.bound):
            which = ", ".join(k for k, v in run.bounds.items() if math.isinf(v))
            run.notes.append(f"a lower bound proves that no plan exists ({which})")
            return result("infeasible")
        # the greedy's restarts are not needed where the containers' height-map searches give plans
        budget = 0.0 if run.searched else min(0.5, 0.02 * time_limit)
        run.best = best_incumbent(instance, graph, budget_s=budget, seed=seed, lower=run.bound)
        run.report("incumbent")
        if export_model:
            _export(p, run, export_model)
        _special_stage(run)
        _structure_bound(run)
        run.report("special")
        _split_stage(run)
        if not run.closed() and run.left() > 0.05 and not math.isinf(run.bound):
            if _use_decision(p):
                _decision_stage(run)
            else:
                _main_stage(run)
    except KeyboardInterrupt:
        run.interrupted = True
        run.notes.append("interrupted: the best checked plan so far is reported")
    if run.interrupted and not any(n.startswith("interrupted") for n in run.notes):
        run.notes.append("interrupted: the best checked plan so far is reported")
    if run.errors:
        # the model produced a plan the checker rejects: no claim about optimality can stand
        run.notes.extend(run.errors[:20])
        return result("error")
    if run.best is None:
        if math.isinf(run.bound):
            run.notes.append("the model has no solution: no plan satisfies every rule")
            return result("infeasible")
        return result("unknown", bound=run.bound)
    objective = run.best.report.objective
    if run.bound > objective + max(1e-6, 1e-9 * abs(objective)):
        # a proved bound above a checked plan: one of the proof steps is false; claim nothing
        run.notes.append(f"a proof step claims {run.bound:g}, above the checked plan's {objective:g}: "
                         "the proof is wrong, so no bound is reported")
        run.steps.clear()
        run.bound = 0.0
        return result("error", objective=objective, plan=run.best.plan, checked=True)
    bound = min(run.bound, objective)
    status = "optimal" if run.closed() else "feasible"
    tiebreak = None
    if instance.objective.then == "tips":
        if status == "optimal":
            try:
                tips, proved = _tips_stage(run)
            except KeyboardInterrupt:
                tips, proved = run.best.report.tips, False
        else:
            tips, proved = run.best.report.tips, False
        tiebreak = TieBreak("tips", float(tips), proved)
    if run.errors:
        run.notes.extend(run.errors[:20])
        return result("error")
    return result(status, objective=objective, bound=bound, gap=relative_gap(objective, bound), tiebreak=tiebreak,
                  plan=run.best.plan, checked=True)


def _provenance(instance: Instance, run: _Run) -> Provenance:
    """Instance hash, tool and solver versions, date, and the proof steps of this run."""
    from datetime import datetime, timezone
    from importlib.metadata import PackageNotFoundError, version

    def ver(name: str) -> str:
        try:
            return version(name)
        except PackageNotFoundError:  # pragma: no cover
            return "not installed"

    return Provenance(
        instance_sha256=instance_digest(instance),
        tool_version=f"stackproof {ver('stackproof')}",
        solvers={"highspy": ver("highspy"), "PuLP": ver("pulp")},
        date=datetime.now(timezone.utc).isoformat(timespec="seconds"),
        proof=tuple(run.steps),
    )
