"""Running a PuLP model on HiGHS (through highspy) or CBC, with the numbers a result reports.

Both backends get threads, seed, time limit and a zero relative gap, so `Optimal` from them
means proved. HiGHS runs with Ctrl-C handling on: an interrupt stops the search and keeps the
best solution found, and `Outcome.interrupted` tells the pipeline to stop.
"""
from __future__ import annotations

import math
import os
import time
from dataclasses import dataclass
from typing import Optional

import pulp

BACKENDS = ("highs", "cbc")


@dataclass
class Outcome:
    """What one backend run established."""

    status: str  # "optimal", "feasible", "infeasible", "unknown"
    objective: Optional[float]
    bound: Optional[float]  # proved lower bound on the model's objective (None if unknown)
    nodes: Optional[int]
    seconds: float
    interrupted: bool = False


def backend_version(backend: str) -> str:
    from importlib.metadata import PackageNotFoundError, version

    if backend == "highs":
        try:
            return f"HiGHS {version('highspy')} (highspy) via PuLP {pulp.__version__}"
        except PackageNotFoundError:  # pragma: no cover
            return f"HiGHS via PuLP {pulp.__version__}"
    return f"CBC (bundled with PuLP) via PuLP {pulp.__version__}"


class _Highs(pulp.HiGHS):
    """PuLP's HiGHS interface with Ctrl-C handling, quiet start-up and the run's info kept."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self.info = None
        self.interrupted = False
        self.model_status = None

    def createAndConfigureSolver(self, lp):
        if self.msg:
            return super().createAndConfigureSolver(lp)
        # HiGHS prints a banner on stdout when the first instance is made; keep quiet output quiet
        import sys

        sys.stdout.flush()
        saved = os.dup(1)
        devnull = os.open(os.devnull, os.O_WRONLY)
        try:
            os.dup2(devnull, 1)
            super().createAndConfigureSolver(lp)
        finally:
            os.dup2(saved, 1)
            os.close(saved)
            os.close(devnull)

    def callSolver(self, lp):
        h = lp.solverModel
        try:
            h.HandleKeyboardInterrupt = True
            h.solve()
        except KeyboardInterrupt:  # pragma: no cover - depends on timing of the signal
            self.interrupted = True
        self.info = h.getInfo()
        import highspy

        self.model_status = h.getModelStatus()
        if self.model_status == highspy.HighsModelStatus.kInterrupt:
            self.interrupted = True


#: The solver versions the proofs were tested with (pinned in pyproject.toml).
TESTED = {"highspy": "1.16.0", "PuLP": "3.3.2"}


def confirmer(backend: str) -> str:
    """The independent second solve that must agree before a solver's proof counts.

    HiGHS's answer is re-derived by HiGHS with presolve off (the presolve is where a wrong
    "infeasible" was seen, highspy 1.16.0); CBC's answer by HiGHS with presolve off (the other
    backend). Returns a label for the notes and the proof steps.
    """
    return f"{backend_version('highs')}, presolve off"


def run(lp: pulp.LpProblem, *, backend: str = "highs", time_limit: float = 60.0, threads: int = 1,
        seed: int = 0, log: bool = False, integral: bool = False, presolve: bool = True) -> Outcome:
    """Solve `lp` (a minimisation) and report status, objective, proved bound and node count.

    `integral`: the objective takes integer values only, so the bound may be rounded up.
    `presolve=False` switches HiGHS's presolve off (the confirming solve); CBC ignores it.
    """
    t0 = time.perf_counter()
    time_limit = max(0.05, float(time_limit))
    if backend == "highs":
        extra = {} if presolve else {"presolve": "off"}
        solver = _Highs(
            msg=log, timeLimit=time_limit, threads=threads, gapRel=0.0, gapAbs=0.0 if not integral else 0.999,
            random_seed=int(seed), **extra,
        )
    elif backend == "cbc":
        solver = pulp.PULP_CBC_CMD(
            msg=log, timeLimit=time_limit, threads=threads, gapRel=0.0, gapAbs=0.0 if not integral else 0.999,
            options=[f"randomSeed {int(seed) + 1}", f"randomCbcSeed {int(seed) + 1}"],
        )
    else:
        raise ValueError(f"unknown backend {backend!r} (choose from {', '.join(BACKENDS)})")
    interrupted = False
    try:
        lp.solve(solver)
    except KeyboardInterrupt:
        interrupted = True
    except pulp.PulpSolverError:
        return Outcome("unknown", None, None, None, time.perf_counter() - t0)
    seconds = time.perf_counter() - t0
    has_solution = lp.sol_status in (pulp.LpSolutionOptimal, pulp.LpSolutionIntegerFeasible)
    if backend == "highs" and solver.info is not None:
        # PuLP reports an interrupted or timed-out run as integer-feasible even without a solution
        has_solution = has_solution and int(solver.info.primal_solution_status) == 2  # kSolutionStatusFeasible
    objective = pulp.value(lp.objective) if has_solution else None
    if objective is None and has_solution:
        objective = 0.0
    bound = nodes = None
    if backend == "highs":
        interrupted = interrupted or solver.interrupted
        info = solver.info
        if info is not None:
            nodes = int(info.mip_node_count) if info.mip_node_count >= 0 else None
            db = info.mip_dual_bound
            if db is not None and math.isfinite(db):
                bound = float(db)
    status = "unknown"
    if lp.status == pulp.LpStatusInfeasible:
        status = "infeasible"
    elif has_solution:
        proved = lp.sol_status == pulp.LpSolutionOptimal
        if backend == "highs":
            import highspy

            proved = solver.model_status == highspy.HighsModelStatus.kOptimal
        status = "optimal" if proved else "feasible"
        if proved:
            bound = objective
    if status == "infeasible":
        bound = math.inf
    return Outcome(status, objective, bound, nodes, seconds, interrupted)


def confirm(lp: pulp.LpProblem, *, time_limit: float, threads: int = 1, seed: int = 0, log: bool = False,
            integral: bool = False) -> Outcome:
    """Solve `lp` again, independently of the first answer (see `confirmer`): HiGHS, presolve off."""
    return run(lp, backend="highs", time_limit=time_limit, threads=threads, seed=seed, log=log,
               integral=integral, presolve=False)
