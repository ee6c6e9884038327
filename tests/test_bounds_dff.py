"""The dual feasible functions of bounds.dff are dual feasible, checked exhaustively on small grids.

A function f on {0..C} is dual feasible when every multiset of sizes adding up to at most C has
f-values adding up to at most 1 (Fekete & Schepers 2004). The largest such sum is an unbounded
knapsack, solved here by plain dynamic programming, independent of bounds.dff.
"""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from bounds import dff


def knapsack_max(values: np.ndarray, C: int) -> float:
    """Largest sum of values[s] over multisets of sizes s >= 1 adding up to at most C."""
    best = np.zeros(C + 1)
    for c in range(1, C + 1):
        best[c] = max(best[c - 1], max(best[c - s] + values[s] for s in range(1, c + 1)))
    return float(best[C])


def functions(C: int):
    yield "identity", dff.identity(C)
    for k in range(1, 9):
        yield f"u{k}", dff.fs_u(k, C)
    for lam in range(1, C // 2 + 1):
        yield f"U{lam}", dff.fs_threshold(lam, C)
        yield f"ccm{lam}", dff.ccm1(lam, C)


@pytest.mark.parametrize("C", range(2, 29))
def test_every_family_member_is_dual_feasible_and_maps_into_0_1(C):
    for name, f in functions(C):
        values = f(np.arange(C + 1, dtype=np.int64)).astype(float)
        assert values.min() >= 0 and values.max() <= 1 + 1e-12, (C, name)
        assert knapsack_max(values, C) <= 1 + 1e-12, (C, name)
        assert values[C] == pytest.approx(1.0), (C, name)  # normalised: a full item counts 1


def test_a_deliberately_wrong_function_is_caught_by_the_check():
    # Doubling the identity is not dual feasible: two halves would count 2. The check must see it.
    C = 10
    values = 2 * dff.identity(C)(np.arange(C + 1))
    assert knapsack_max(values, C) > 1


def test_published_function_values():
    # u^(k) (Fekete & Schepers 2004): x if (k+1)x is an integer, else floor((k+1)x)/k; on C = 10, k = 1:
    # sizes above half count 1, exactly half counts 1/2, below half 0 (values worked out by hand).
    u1 = dff.fs_u(1, 10)(np.array([4, 5, 6, 10]))
    assert list(u1) == [0.0, 0.5, 1.0, 1.0]
    # f_CCM,1 (Carlier, Clautiaux & Moukrim 2007) with C = 10, lambda = 3 (hand-computed from the
    # definition): top = 2*floor(10/3) = 6; x=2 -> 2*floor(2/3)=0; x=3 -> 2; x=5 -> floor(10/3)=3;
    # x=7 -> 2*(3 - floor(3/3)) = 4.
    ccm = dff.ccm1(3, 10)(np.array([2, 3, 5, 7])) * 6
    assert list(ccm) == [0, 2, 3, 4]


@settings(max_examples=200, deadline=None)
@given(st.lists(st.floats(0.01, 100.0), min_size=1, max_size=8), st.floats(1.0, 100.0),
       st.floats(0.0, 1e-3))
def test_grid_scaling_keeps_every_feasible_line_up_within_the_grid(sizes, capacity, spread):
    # Rounding down onto the grid may only lower sums: a line-up within capacity + spread stays within C.
    grid, C = dff.to_grid(sizes, capacity, spread, integral=True)
    for s, g in zip(sizes, grid):
        assert g <= s * C / (capacity + spread) + 1e-9 or float(s).is_integer()
    if sum(sizes) <= capacity + spread:
        assert grid.sum() <= C


def test_integer_data_keep_their_own_grid():
    grid, C = dff.to_grid([3.0, 4.0, 5.0], 10.0, 1e-5, integral=True)
    assert C == 10 and list(grid) == [3, 4, 5]
