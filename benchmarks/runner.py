"""The benchmark runner: every instance in its own process with a hard wall-clock limit.

Work runs on `jobs` local processes or on an existing Dask distributed cluster; both call
`solve_isolated`, so a result does not depend on where it ran. Each finished instance is
verified (`benchmarks.verify`) and appended as one JSON line to the results file, flushed
and fsynced; instances already in the file (same content hash and configuration) are
skipped, so a killed run resumes and loses nothing.
"""
from __future__ import annotations

import datetime as _dt
import subprocess
import sys
import time
from concurrent.futures import ThreadPoolExecutor, as_completed
from dataclasses import asdict, dataclass, replace
from pathlib import Path
from typing import Callable, Iterator, Optional, Sequence

from instances.io import instance_to_dict, plan_to_dict, result_from_dict
from instances.model import Result

from .isolate import REPO_ROOT, allow_solves, kill_live_solves, solve_isolated, stop_solves
from .progress import StatusLine, Ticker
from .results import ResultsFile, is_proven
from .suites import SuiteEntry, instance_hash, shuffled
from .text import number, percent, plural
from .verify import verify

DEFAULT_SOLVER = "milp:solve"


@dataclass(frozen=True)
class RunConfig:
    """How every instance of a run is solved (all of it goes into each record)."""

    time_limit: float = 60.0
    solver: str = DEFAULT_SOLVER
    backend: str = "highs"
    threads: int = 1
    seed: int = 0
    shuffle_seed: Optional[int] = None
    hard_limit: Optional[float] = None  # default: time_limit + max(10 s, time_limit / 2)

    @property
    def wall_limit(self) -> float:
        if self.hard_limit is not None:
            return self.hard_limit
        return self.time_limit + max(10.0, self.time_limit / 2)

    @property
    def label(self) -> str:
        """A short name of the configuration, for comparisons across runs."""
        text = f"{self.solver}[{self.backend}] {self.time_limit:g}s seed {self.seed}"
        if self.threads != 1:
            text += f" threads {self.threads}"
        if self.shuffle_seed is not None:
            text += f" shuffle {self.shuffle_seed}"
        return text


def stackproof_version() -> str:
    """The package version, with the git commit of the working tree when there is one
    (`0.1.0+git-1a2b3c4`), so that runs of different code are told apart."""
    try:
        from importlib.metadata import version

        text = version("stackproof")
    except Exception:
        text = "unknown"
    if not (REPO_ROOT / ".git").exists():  # an installed copy, not a checkout
        return text
    try:
        out = subprocess.run(["git", "-C", str(REPO_ROOT), "rev-parse", "--short", "HEAD"], capture_output=True, text=True, timeout=5)
        if out.returncode == 0 and out.stdout.strip():
            text += "+git-" + out.stdout.strip()
    except (OSError, subprocess.SubprocessError):
        pass
    return text


# ---------------------------------------------------------------- records


def make_job(entry: SuiteEntry, config: RunConfig) -> tuple[SuiteEntry, dict]:
    """The entry as it is run (shuffled if asked) and the job document sent to the worker."""
    if config.shuffle_seed is not None:
        entry = SuiteEntry(entry.set, entry.name, entry.file, shuffled(entry.instance, config.shuffle_seed))
    job = {
        "instance": instance_to_dict(replace(entry.instance, known=None)),  # solvers never see the known value
        "solver": config.solver,
        "time_limit": config.time_limit,
        "backend": config.backend,
        "threads": config.threads,
        "seed": config.seed,
    }
    return entry, job


def run_key(key: str, instance_hash_: str, config: RunConfig) -> str:
    """What makes two records "the same run" for resuming: name, instance content and configuration."""
    return f"{key}|{instance_hash_}|{config.solver}|{config.backend}|{config.time_limit:g}|{config.seed}|{config.threads}|{config.shuffle_seed}"


def make_record(entry: SuiteEntry, config: RunConfig, outcome: dict, version: str) -> dict:
    """One JSON line: the verified result of one instance with its full provenance."""
    inst = entry.instance
    h = instance_hash(inst)
    if outcome["result"] is not None:
        result = result_from_dict(outcome["result"])
    else:
        result = Result(instance=inst.name, status="error", notes=(outcome["error"],))
    verdict = verify(inst, result)
    known = inst.known
    solver = result.solver
    return {
        "key": entry.key,
        "set": entry.set,
        "name": entry.name,
        "file": str(entry.file),
        "hash": h,
        "run_key": run_key(entry.key, h, config),
        "config": config.label,
        "n": len(inst.boxes),
        "dim": inst.dim,
        "minimise": inst.objective.minimise,
        "status": result.status,
        "objective": verdict.objective,
        "claimed_objective": result.objective,
        "bound": result.bound,
        "gap": verdict.gap,
        "checked": verdict.checked,
        "tiebreak": None if result.tiebreak is None else asdict(result.tiebreak),
        "seconds": round(outcome["seconds"], 3),
        "solve_seconds": result.seconds,
        "solver": config.solver,
        "backend": config.backend,
        "solver_version": None if solver is None else solver.version,
        "version": version,
        "time_limit": config.time_limit,
        "seed": config.seed,
        "threads": config.threads,
        "shuffle_seed": config.shuffle_seed,
        "date": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "known": None if known is None else {"optimum": known.optimum, "infeasible": known.infeasible, "source": known.source},
        "contradictions": verdict.contradictions,
        "problems": verdict.problems,
        "violations": verdict.violations[:20],
        "notes": list(result.notes),
        "plan": None if result.plan is None else plan_to_dict(result.plan),
    }


# ---------------------------------------------------------------- progress


class Progress:
    """Bench progress on a terminal: a row per finished instance (status, objective, bound, gap in
    percent, seconds) under which one line keeps done / proven / elapsed. Silent when disabled or
    when stderr is not a terminal; contradictions are listed by the command at the end either way."""

    def __init__(self, total: int, stream=None, enabled: bool = True):
        self.total, self.done, self.proven = total, 0, 0
        self.line = StatusLine(stream, enabled)
        self.start = time.monotonic()
        self.ticker = Ticker(self.line, self.head).start()

    def head(self) -> str:
        return f"bench: {self.done}/{self.total} done, {self.proven} proven, {time.monotonic() - self.start:.0f} s elapsed"

    def update(self, record: dict) -> None:
        self.done += 1
        self.proven += is_proven(record)
        self.line.row(record_row(record))
        for c in record["contradictions"]:
            self.line.row(f"  CONTRADICTION: {c}")
        for p in record["problems"]:
            self.line.row(f"  UNCHECKED: {p}")
        self.line.show(self.head())

    def close(self) -> None:
        self.ticker.stop()


def record_row(record: dict) -> str:
    """One finished instance for people: `set/name: optimal  objective 8  bound 8  gap 0.00%  1.2 s`."""
    return (f"{record['key']}: {record['status']}  objective {number(record.get('objective'))}  "
            f"bound {number(record.get('bound'))}  gap {percent(record.get('gap'))}  {record['seconds']:.1f} s")


# ---------------------------------------------------------------- the run


def _local(jobs: int) -> Callable[[list[tuple[dict, float]]], Iterator[tuple[int, dict]]]:
    def execute(work: list[tuple[dict, float]]) -> Iterator[tuple[int, dict]]:
        allow_solves()
        pool = ThreadPoolExecutor(max_workers=max(1, jobs))
        try:
            futures = {pool.submit(solve_isolated, job, wall): k for k, (job, wall) in enumerate(work)}
            for f in as_completed(futures):
                yield futures[f], f.result()
        except BaseException:  # Ctrl-C or an error: no job still waiting for a thread may start
            stop_solves()
            raise
        finally:  # start nothing more, stop what runs
            pool.shutdown(wait=False, cancel_futures=True)
            kill_live_solves()

    return execute


def _dask(address: str) -> Callable[[list[tuple[dict, float]]], Iterator[tuple[int, dict]]]:
    def execute(work: list[tuple[dict, float]]) -> Iterator[tuple[int, dict]]:
        from distributed import Client
        from distributed import as_completed as dask_completed

        with Client(address, set_as_default=False) as client:
            futures = [client.submit(solve_isolated, job, wall, pure=False) for job, wall in work]
            index = {f.key: k for k, f in enumerate(futures)}
            try:
                for f in dask_completed(futures, loop=client.loop):
                    try:
                        outcome = f.result()
                    except Exception as exc:  # the cluster failed (lost worker...), not the solve: retried on resume
                        outcome = {"result": None, "error": f"Dask task failed: {type(exc).__name__}: {exc}", "seconds": 0.0, "transient": True}
                    yield index[f.key], outcome
            finally:  # an interrupted run starts nothing more on the cluster
                client.cancel([f for f in futures if not f.done()])

    return execute


def run_bench(
    entries: Sequence[SuiteEntry],
    config: RunConfig,
    results: Optional[str | Path] = None,
    jobs: int = 1,
    scheduler: Optional[str] = None,
    progress: bool = True,
) -> list[dict]:
    """Solve every entry not yet in `results`; return the records of all entries (old and new),
    in suite order. With `progress`, say on stderr when a resumed run skips finished instances,
    and show rows and a status line on a terminal."""
    store = ResultsFile(results)
    old = {r.get("run_key"): r for r in store.read()}
    version = stackproof_version()
    prepared = [make_job(e, config) for e in entries]
    keys = [run_key(e.key, instance_hash(e.instance), config) for e, _ in prepared]
    todo = [k for k, key in enumerate(keys) if key not in old]
    if progress and len(todo) < len(keys):
        print(f"resuming {store.path}: {len(keys) - len(todo)} of {plural(len(keys), 'instance')} already done "
              f"with this configuration, skipped; {len(todo)} to run", file=sys.stderr)
    bar = Progress(len(todo), enabled=progress)
    execute = _dask(scheduler) if scheduler else _local(jobs)
    new: dict[int, dict] = {}
    try:
        for k, outcome in execute([(prepared[k][1], config.wall_limit) for k in todo]):
            entry = prepared[todo[k]][0]
            record = make_record(entry, config, outcome, version)
            if not outcome.get("transient"):
                store.append(record)
            new[todo[k]] = record
            bar.update(record)
    finally:
        bar.close()
    return [new[k] if k in new else old[key] for k, key in enumerate(keys)]
