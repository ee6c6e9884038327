"""Dual feasible functions (DFFs) on an integer grid, and the scaling of sizes onto that grid.

A DFF f maps sizes in {0..C} to [0, 1] such that any items whose sizes add up to at most C
have f-values adding up to at most 1. Applying a DFF to each axis of a feasible packing keeps
it "volume-feasible" (Fekete & Schepers 2004, "A general framework for bounds for higher-
dimensional orthogonal packing problems", Math. Methods of OR 60:311-329), which gives lower
bounds. Families used:

- identity (the continuous bound);
- u^(k) (Fekete & Schepers 2004): x if (k+1)x/C is an integer, else floor((k+1)x/C)/k;
- U^(lambda) (Fekete & Schepers 2004, after Martello & Vigo 1998): 1 above C - lambda,
  0 below lambda, x/C in between;
- f_CCM,1 (Carlier, Clautiaux & Moukrim 2007, "New reduction procedures and lower bounds for
  the two-dimensional bin packing problem with fixed orientation", Computers & OR 34:2223-2250).

Every family is checked to be dual feasible by exhaustive knapsack search in the tests.
Real sizes are first scaled down onto the grid (rounding down keeps sums within C), so all
arithmetic here is exact integer arithmetic.
"""
from __future__ import annotations

from typing import Callable, Iterable, Sequence

import numpy as np

GRID = 1 << 20  # grid size for real-valued data
MAX_K = 20  # u^(k) for k = 1..MAX_K
MAX_LAMBDAS = 40  # parameter values tried per threshold family

Dff = Callable[[np.ndarray], np.ndarray]


def to_grid(sizes: Sequence[float], capacity: float, spread: float, integral: bool) -> tuple[np.ndarray, int]:
    """Map `sizes` onto {0..C} so that a feasible line-up stays within C.

    `spread` is how much a line-up of items may exceed `capacity` through tolerated overlaps.
    Integer data with `spread` < 1 keeps its own grid (C = capacity); anything else is scaled
    by GRID / (capacity + spread) and rounded down, which can only lower sums.
    """
    if integral and float(capacity).is_integer() and spread < 1 and all(float(s).is_integer() for s in sizes):
        return np.asarray([int(s) for s in sizes], dtype=np.int64), int(capacity)
    scale = GRID / (capacity + spread)
    return np.asarray([int(np.floor(s * scale)) for s in sizes], dtype=np.int64), GRID


def identity(C: int) -> Dff:
    return lambda x: x / C


def fs_u(k: int, C: int) -> Dff:
    """u^(k) of Fekete & Schepers (2004) on {0..C}."""

    def f(x: np.ndarray) -> np.ndarray:
        t = (k + 1) * x
        return np.where(t % C == 0, x / C, (t // C) / k)

    return f


def fs_threshold(lam: int, C: int) -> Dff:
    """U^(lambda): big items (> C - lambda) count fully, small ones (< lambda) vanish."""

    def f(x: np.ndarray) -> np.ndarray:
        return np.where(x > C - lam, 1.0, np.where(x < lam, 0.0, x / C))

    return f


def ccm1(lam: int, C: int) -> Dff:
    """f_CCM,1 of Carlier, Clautiaux & Moukrim (2007), 1 <= lambda <= C/2, normalised to f(C) = 1."""
    top = 2 * (C // lam)

    def f(x: np.ndarray) -> np.ndarray:
        big = 2 * (C // lam - (C - x) // lam)
        small = 2 * (x // lam)
        mid = np.full_like(x, C // lam)
        return np.where(2 * x > C, big, np.where(2 * x == C, mid, small)) / top

    return f


def family(values: Iterable[int], C: int) -> list[tuple[str, Dff]]:
    """The DFFs tried for items of grid sizes `values`: identity, u^(k), and the threshold families
    at parameters taken from the item sizes (and their complements) not above C/2."""
    out: list[tuple[str, Dff]] = [("identity", identity(C))]
    out += [(f"u{k}", fs_u(k, C)) for k in range(1, MAX_K + 1)]
    vals = sorted({int(v) for v in values})
    cands = sorted({v for v in vals if 1 <= v <= C // 2} | {C - v for v in vals if 1 <= C - v <= C // 2})
    if len(cands) > MAX_LAMBDAS:
        idx = np.linspace(0, len(cands) - 1, MAX_LAMBDAS).round().astype(int)
        cands = sorted({cands[i] for i in idx})
    out += [(f"U{lam}", fs_threshold(lam, C)) for lam in cands]
    out += [(f"ccm{lam}", ccm1(lam, C)) for lam in cands]
    return out
