"""Performance profiles for comparing solvers, configurations or heuristics on one problem set.

E. D. Dolan and J. J. More, "Benchmarking optimization software with performance profiles",
Mathematical Programming 91(2):201-213, 2002. For a cost t[p, s] of solver s on problem p
(time to a proven optimum, or objective value; None for a failure), the performance ratio is
r[p, s] = t[p, s] / min_s t[p, s] (infinite for a failure), and the profile of s is
rho_s(tau) = |{p : r[p, s] <= tau}| / (number of problems).

Example:
    >>> prof = performance_profile({"a": {"p1": 1.0, "p2": 4.0}, "b": {"p1": 2.0, "p2": 2.0}})
    >>> prof["a"].at(1.0), prof["b"].at(1.0), prof["a"].at(2.0)
    (0.5, 0.5, 0.5)
"""
from __future__ import annotations

import bisect
import math
from dataclasses import dataclass
from typing import Mapping, Optional


@dataclass(frozen=True)
class Profile:
    """rho(tau) as a step function: `ratios` sorted (finite ones), `share[k]` = rho(ratios[k])."""

    ratios: tuple[float, ...]
    share: tuple[float, ...]

    def at(self, tau: float) -> float:
        k = bisect.bisect_right(self.ratios, tau)
        return 0.0 if k == 0 else self.share[k - 1]


def ratios(costs: Mapping[str, Mapping[str, Optional[float]]]) -> dict[str, dict[str, float]]:
    """r[s][p] for every problem any solver has; missing or failed entries are infinite.

    A problem every solver failed keeps infinite ratios (it lowers every profile alike).
    Costs of 0 are compared as equal best (ratio 1) when the best is 0 too.
    """
    problems = sorted({p for per in costs.values() for p in per})
    out: dict[str, dict[str, float]] = {s: {} for s in costs}
    for p in problems:
        values = {s: costs[s].get(p) for s in costs}
        finite = [v for v in values.values() if v is not None and math.isfinite(v)]
        best = min(finite) if finite else None
        for s, v in values.items():
            if v is None or not math.isfinite(v) or best is None:
                out[s][p] = math.inf
            elif best == 0:
                out[s][p] = 1.0 if v == 0 else math.inf
            else:
                out[s][p] = v / best
    return out


def performance_profile(costs: Mapping[str, Mapping[str, Optional[float]]]) -> dict[str, Profile]:
    """The Dolan-More profile of every solver in `costs` (solver -> problem -> cost)."""
    r = ratios(costs)
    n = len({p for per in costs.values() for p in per})
    out = {}
    for s, per in r.items():
        finite = sorted(v for v in per.values() if math.isfinite(v))
        steps: list[float] = []
        share: list[float] = []
        for k, v in enumerate(finite, 1):
            if steps and steps[-1] == v:
                share[-1] = k / n
            else:
                steps.append(v)
                share.append(k / n)
        out[s] = Profile(tuple(steps), tuple(share))
    return out
