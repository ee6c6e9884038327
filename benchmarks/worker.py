"""One solve in its own process: `python -m benchmarks.worker JOB.json OUT.json`.

`python -m benchmarks.worker --check MODULE:FUNCTION` only says whether the solver loads (exit 0 or 2).
The job names the instance document, the solver (`module:function`, called as
``f(instance, *, time_limit, backend, threads, seed, log=False) -> Result``) and its options.
The result document is written atomically to OUT.json; a crash leaves no OUT.json and a
traceback on stderr. The process dies with its parent (Linux `PR_SET_PDEATHSIG`, else a
watchdog thread), so a killed benchmark run leaves no orphan solves behind.
"""
from __future__ import annotations

import importlib
import json
import os
import signal
import sys
import threading
import time
from typing import Callable


def _die_with_parent() -> None:
    parent = os.getppid()
    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(1, signal.SIGKILL)  # PR_SET_PDEATHSIG = 1
    except (OSError, AttributeError):
        pass
    if os.getppid() != parent:  # the parent died before prctl took effect
        os._exit(1)

    def watch() -> None:
        while True:
            time.sleep(0.5)
            if os.getppid() != parent:
                os._exit(1)

    threading.Thread(target=watch, daemon=True).start()


def load_function(spec: str) -> Callable:
    """`package.module:function` -> the function (ValueError with a plain message otherwise)."""
    module_name, sep, attr = spec.partition(":")
    if not sep or not module_name or not attr:
        raise ValueError(f"expected MODULE:FUNCTION, got {spec!r}")
    module = importlib.import_module(module_name)
    try:
        fn = getattr(module, attr)
    except AttributeError:
        raise ValueError(f"module {module_name!r} has no attribute {attr!r}") from None
    if not callable(fn):
        raise ValueError(f"{spec!r} is not callable")
    return fn


def main(argv: list[str]) -> int:
    if argv[:1] == ["--check"]:  # can this process load the solver? (asked before a run starts)
        try:
            load_function(argv[1])
        except (ImportError, ValueError) as exc:
            print(f"{type(exc).__name__}: {exc}" if isinstance(exc, ImportError) else str(exc), file=sys.stderr)
            return 2
        return 0
    _die_with_parent()
    from instances.io import instance_from_dict, result_to_dict, write_json

    job_file, out_file = argv
    with open(job_file, encoding="utf-8") as fh:
        job = json.load(fh)
    instance = instance_from_dict(job["instance"])
    solve = load_function(job["solver"])
    result = solve(
        instance,
        time_limit=job["time_limit"],
        backend=job["backend"],
        threads=job["threads"],
        seed=job["seed"],
        log=False,
    )
    write_json(out_file, result_to_dict(result))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
