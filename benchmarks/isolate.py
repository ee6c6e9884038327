"""One solve in a fresh Python process with a hard wall-clock limit.

`solve_isolated` runs `benchmarks.worker` in its own session and kills the whole process
group when the limit passes; a crash or a kill becomes an error message, never an exception.
It is what local threads and Dask workers both call, so where a solve ran does not matter.
"""
from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path
from typing import Optional

REPO_ROOT = Path(__file__).resolve().parents[1]


def solve_isolated(job: dict, wall_limit: float) -> dict:
    """Run one solve in a fresh Python process; kill its process group after `wall_limit` s.

    Returns ``{"result": result document or None, "error": message or None, "seconds": wall}``.
    Runs anywhere the project is importable (a local thread or a Dask worker).
    """
    start = time.monotonic()
    with tempfile.TemporaryDirectory(prefix="stackproof-job-") as tmp:
        job_file, out_file, err_file = (os.path.join(tmp, n) for n in ("job.json", "result.json", "stderr.txt"))
        with open(job_file, "w", encoding="utf-8") as fh:
            json.dump(job, fh)
        with open(err_file, "wb") as err, _LOCK:
            if _STOPPED.is_set():  # the run was interrupted while this job waited for its turn
                return {"result": None, "error": "not started: the run was interrupted", "seconds": 0.0, "transient": True}
            proc = subprocess.Popen(
                [sys.executable, "-m", "benchmarks.worker", job_file, out_file],
                stdin=subprocess.DEVNULL,
                stdout=err,
                stderr=err,
                env=worker_env(),
                cwd=tmp,
                start_new_session=True,
            )
            _LIVE.add(proc)
        try:
            code = proc.wait(timeout=wall_limit)
            killed = False
        except subprocess.TimeoutExpired:
            _kill_group(proc)
            code, killed = proc.wait(), True
        finally:
            with _LOCK:
                _LIVE.discard(proc)
        seconds = time.monotonic() - start
        if killed:
            return {"result": None, "error": f"killed after the hard wall-clock limit of {wall_limit:g} s", "seconds": seconds}
        if code == 0 and os.path.exists(out_file):
            with open(out_file, encoding="utf-8") as fh:
                return {"result": json.load(fh), "error": None, "seconds": seconds}
        with open(err_file, encoding="utf-8", errors="replace") as fh:
            tail = [line.rstrip() for line in fh.read().splitlines() if line.strip()][-1:] or ["no output"]
        return {"result": None, "error": f"solver process exited with code {code}: {tail[0]}", "seconds": seconds}


def worker_env() -> dict:
    """The environment of a worker process: this one, with the project first on PYTHONPATH."""
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join([str(REPO_ROOT)] + ([env["PYTHONPATH"]] if env.get("PYTHONPATH") else []))
    return env


def solver_load_error(spec: str) -> Optional[str]:
    """Why a worker process could not load the solver `module:function` (None when it can),
    found in a worker-like process (same path, a scratch working folder) before any run starts."""
    with tempfile.TemporaryDirectory(prefix="stackproof-check-") as tmp:
        out = subprocess.run([sys.executable, "-m", "benchmarks.worker", "--check", spec], capture_output=True, text=True,
                             env=worker_env(), cwd=tmp, stdin=subprocess.DEVNULL, timeout=120)
    if out.returncode == 0:
        return None
    lines = [line for line in (out.stderr or out.stdout).splitlines() if line.strip()]
    return lines[-1] if lines else f"exit code {out.returncode}"


_LIVE: set[subprocess.Popen] = set()  # solve processes started here and still running
_LOCK = threading.Lock()
_STOPPED = threading.Event()  # set when a run is interrupted: no new solve starts


def allow_solves() -> None:
    """Let solves start again (at the beginning of a run)."""
    _STOPPED.clear()


def stop_solves() -> None:
    """An interrupted run: start no new solve until `allow_solves` (no job that was about to start
    slips through), and kill those that run."""
    _STOPPED.set()
    kill_live_solves()


def kill_live_solves() -> None:
    """Kill every solve process this process started (an interrupted run leaves none behind)."""
    with _LOCK:
        procs = list(_LIVE)
    for proc in procs:
        _kill_group(proc)


def _kill_group(proc: subprocess.Popen) -> None:
    try:
        os.killpg(proc.pid, signal.SIGKILL)
    except (ProcessLookupError, PermissionError):
        proc.kill()
