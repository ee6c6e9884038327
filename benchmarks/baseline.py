"""Compare a run with an earlier results file: what got worse.

A regression is an instance proven optimal in the baseline and not proven now, or one whose
checked objective is now worse (higher) than in the baseline, or that had a checked plan and
now has none. Instances are matched by `set/name`; instances in only one of the two files
are not compared (a filtered run is not a regression).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Iterable, Optional

from .results import is_proven
from .verify import close


@dataclass(frozen=True)
class Regression:
    key: str
    what: str

    def __str__(self) -> str:
        return f"{self.key}: {self.what}"


def _best(records: Iterable[dict]) -> dict[str, dict]:
    """Per key the best record (proven first, then the lowest checked objective)."""
    best: dict[str, dict] = {}

    def rank(r: dict) -> tuple:
        obj = r.get("objective")
        return (not is_proven(r), obj is None, obj if obj is not None else 0.0)

    for r in records:
        k = r["key"]
        if k not in best or rank(r) < rank(best[k]):
            best[k] = r
    return best


def regressions(baseline: Iterable[dict], current: Iterable[dict], tol: float = 1e-6) -> list[Regression]:
    """Every regression of `current` against `baseline`, in key order."""
    base, now = _best(baseline), _best(current)
    out = []
    for key in sorted(set(base) & set(now)):
        b, c = base[key], now[key]
        if is_proven(b) and not is_proven(c):
            out.append(Regression(key, f"proven optimal before ({b['objective']:g}), now {c['status']}"))
        bo: Optional[float] = b.get("objective")
        co: Optional[float] = c.get("objective")
        if bo is not None and co is None:
            out.append(Regression(key, f"had a checked plan with objective {bo:g}, now none ({c['status']})"))
        elif bo is not None and co is not None and co > bo and not close(co, bo, tol):
            out.append(Regression(key, f"objective worse: {co:g} now, {bo:g} before"))
    return out
