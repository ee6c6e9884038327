"""OR-Tools CP-SAT reference for the precedence-free strip packing case (integer data).

Covers instances with no source, loading `any`, support `none`, one open-top container type with
count 1 and objective `height`: the classic strip packing problem, 2D or 3D, with the box's
allowed orientations (rotation or not). A general-purpose solver from the package registry,
modelled here independently of the MILP:
- 2D: x and y interval variables of variable size (the orientation picks the size) under one
  NoOverlap2D constraint;
- 3D: CP-SAT has no 3D no-overlap constraint, so each pair of boxes gets six literals "i left of
  j", "j left of i", ... of which at least one holds (the relative-position disjunction).
Redundant constraints only speed the proof: in 2D a cumulative constraint on the vertical
intervals (widths at any height fit the strip), and everywhere the volume bound (floor area
times height holds every box).
The returned plan is handed to `instances.checker.check_plan` when `check` is set.
"""
from __future__ import annotations

from dataclasses import dataclass
from itertools import combinations
from typing import Optional

from ortools.sat.python import cp_model

from instances.model import Instance, Move, Plan

STATUS = {
    cp_model.OPTIMAL: "optimal",
    cp_model.FEASIBLE: "feasible",
    cp_model.INFEASIBLE: "infeasible",
    cp_model.UNKNOWN: "unknown",
    cp_model.MODEL_INVALID: "error",
}


@dataclass(frozen=True)
class CpStrip:
    """CP-SAT's answer: status, the height of its plan and its proved lower bound."""

    status: str
    height: Optional[int]
    bound: Optional[int]
    plan: Optional[Plan]
    seconds: float


def _volume(ext) -> int:
    out = 1
    for e in ext:
        out *= e
    return out


def is_strip_case(instance: Instance) -> bool:
    """True when the instance is classic strip packing (the only case this oracle models)."""
    r = instance.rules
    return (
        instance.source is None
        and r.loading == "any"
        and r.support.rule == "none"
        and len(instance.containers) == 1
        and instance.containers[0].count == 1
        and instance.containers[0].size[-1] is None
        and instance.objective.minimise == "height"
        and all(float(s) == int(s) for b in instance.boxes for s in b.size)
        and all(float(s) == int(s) for s in instance.containers[0].size[:-1])
    )


def strip_height_cpsat(instance: Instance, *, time_limit: float = 30.0, workers: int = 1,
                       check: bool = True) -> CpStrip:
    """Minimum strip height by CP-SAT; raises ValueError outside the strip packing case."""
    if not is_strip_case(instance):
        raise ValueError("CP-SAT oracle models only precedence-free strip packing with integer data")
    dim = instance.dim
    width = tuple(int(s) for s in instance.containers[0].size[:-1])
    boxes = instance.boxes
    options = []
    for b in boxes:
        size = tuple(int(s) for s in b.size)
        opts = {}
        for o in b.orientations:
            ext = tuple(size["xyz".index(c)] for c in o)
            if all(e <= w for e, w in zip(ext, width)):
                opts.setdefault(ext, o)  # same extents: same geometry, keep one orientation
        if not opts:
            return CpStrip("infeasible", None, None, None, 0.0)
        options.append(list(opts.items()))
    top = sum(max(ext[-1] for ext, _ in opts) for opts in options)

    m = cp_model.CpModel()
    pos, ext_vars, picks = [], [], []
    for i, opts in enumerate(options):
        pick = [m.new_bool_var(f"o{i}_{k}") for k in range(len(opts))]
        m.add_exactly_one(pick)
        limit = list(width) + [top]
        # interval sizes must be single variables, so each extent is a variable tied to the pick
        ext = [m.new_int_var(min(e[a] for e, _ in opts), max(e[a] for e, _ in opts), f"e{i}_{a}")
               for a in range(dim)]
        for a in range(dim):
            m.add(ext[a] == sum(p * e[a] for p, (e, _) in zip(pick, opts)))
        p = [m.new_int_var(0, limit[a], f"p{i}_{a}") for a in range(dim)]
        for a in range(dim):
            m.add(p[a] + ext[a] <= limit[a])
        pos.append(p)
        ext_vars.append(ext)
        picks.append(pick)
    height = m.new_int_var(0, top, "height")
    for i in range(len(boxes)):
        m.add(height >= pos[i][-1] + ext_vars[i][-1])
    if dim == 2:
        xs, ys = [], []
        for i in range(len(boxes)):
            ends = [m.new_int_var(0, limit, f"end{i}_{a}") for a, limit in enumerate((width[0], top))]
            xs.append(m.new_interval_var(pos[i][0], ext_vars[i][0], ends[0], f"ix{i}"))
            ys.append(m.new_interval_var(pos[i][1], ext_vars[i][1], ends[1], f"iy{i}"))
        m.add_no_overlap_2d(xs, ys)
        # redundant: at every height the widths of the boxes crossing it fit in the strip
        # (the bar relaxation; gives CP-SAT the area bound and energy reasoning)
        m.add_cumulative(ys, [ext_vars[i][0] for i in range(len(boxes))], width[0])
    else:
        for i, j in combinations(range(len(boxes)), 2):
            sides = []
            for a in range(dim):
                for u, w in ((i, j), (j, i)):
                    lit = m.new_bool_var(f"s{i}_{j}_{a}_{u}")
                    m.add(pos[u][a] + ext_vars[u][a] <= pos[w][a]).only_enforce_if(lit)
                    sides.append(lit)
            m.add_bool_or(sides)
    # redundant: the floor area times the height holds every box (rotation keeps volumes)
    floor = 1
    for w in width:
        floor *= w
    volume = sum(_volume(opts[0][0]) for opts in options)
    m.add(floor * height >= volume)
    m.minimize(height)

    solver = cp_model.CpSolver()
    solver.parameters.max_time_in_seconds = time_limit
    solver.parameters.num_workers = workers
    solver.parameters.random_seed = 0
    code = solver.solve(m)
    status = STATUS.get(code, "unknown")
    if status not in ("optimal", "feasible"):
        return CpStrip(status, None, None, None, solver.wall_time)
    moves = []
    for i, b in enumerate(boxes):
        k = next(k for k, p in enumerate(picks[i]) if solver.boolean_value(p))
        at = tuple(int(solver.value(v)) for v in pos[i])
        moves.append(Move(b.id, (instance.containers[0].id, 0), options[i][k][1], at))
    moves.sort(key=lambda mv: mv.at[-1])
    plan = Plan(instance.name, tuple(moves))
    value = int(round(solver.objective_value))
    bound = int(round(solver.best_objective_bound))
    if check:
        from instances.checker import check_plan

        report = check_plan(instance, plan)
        assert report.feasible, f"checker rejects the CP-SAT plan: {report.violations}"
        assert abs(report.objective - value) <= 1e-9, (report.objective, value)
    return CpStrip(status, value, bound, plan, solver.wall_time)
