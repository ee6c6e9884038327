"""The results file (one JSON record per finished instance) and what a record says."""
from __future__ import annotations

import json
import os
from pathlib import Path
from typing import Optional

from instances.errors import InputError


def is_failure(record: dict) -> bool:
    """A record that must fail a CI job: a contradiction or a claim without a checked plan."""
    return bool(record.get("contradictions") or record.get("problems"))


def has_checked_result(record: dict) -> bool:
    """The instance produced something the run can vouch for: a plan the checker accepted, or a
    proof of infeasibility that nothing contradicts."""
    return not is_failure(record) and (bool(record.get("checked")) or record.get("status") == "infeasible")


def is_proven(record: dict) -> bool:
    """Proven optimal: status optimal, a plan the checker accepted, and nothing contradicts it."""
    return record.get("status") == "optimal" and bool(record.get("checked")) and not is_failure(record)


class ResultsFile:
    """An append-only JSON-lines file; every line is flushed and fsynced before the next solve counts."""

    def __init__(self, path: Optional[str | Path]):
        self.path = None if path is None else Path(path)

    def read(self) -> list[dict]:
        """All complete records; a torn last line (a kill during a write) is dropped from the file."""
        if self.path is None or not self.path.exists():
            return []
        data = self.path.read_bytes()
        if data and not data.endswith(b"\n"):
            cut = data.rfind(b"\n") + 1
            with open(self.path, "r+b") as fh:
                fh.truncate(cut)
                fh.flush()
                os.fsync(fh.fileno())
            data = data[:cut]
        out = []
        for number, line in enumerate(data.decode("utf-8").splitlines(), 1):
            if line.strip():
                try:
                    out.append(json.loads(line))
                except json.JSONDecodeError as exc:
                    raise InputError.one(str(self.path), f"line {number}", f"not a JSON record: {exc.msg}") from None
        return out

    def append(self, record: dict) -> None:
        if self.path is None:
            return
        self.path.parent.mkdir(parents=True, exist_ok=True)
        line = json.dumps(record, sort_keys=True, allow_nan=False, separators=(",", ":")) + "\n"
        with open(self.path, "a", encoding="utf-8") as fh:
            _lock(fh)  # two runs appending to one file never interleave their lines
            fh.write(line)
            fh.flush()
            os.fsync(fh.fileno())


def read_results(path: str | Path) -> list[dict]:
    """The records of a results file (an InputError when it is missing or damaged)."""
    if not Path(path).is_file():
        raise InputError.one(str(path), "$", "results file not found")
    return ResultsFile(path).read()


def _lock(fh) -> None:
    """An exclusive advisory lock until the file is closed (POSIX; a no-op elsewhere)."""
    try:
        import fcntl

        fcntl.flock(fh.fileno(), fcntl.LOCK_EX)
    except (ImportError, OSError):
        pass
