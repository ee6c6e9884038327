"""Shared generator settings (instances/generate/options.py): exact shares, rules, names."""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, strategies as st

from instances.generate.options import apportion, box_ids, chosen, make_objective, make_rules, upright_orientations


@given(total=st.integers(0, 500), shares=st.lists(st.floats(0.01, 10), min_size=1, max_size=6))
def test_apportion_is_exact_and_within_one_of_the_proportion(total, shares):
    parts = apportion(total, shares)
    assert sum(parts) == total
    for p, s in zip(parts, shares):
        assert abs(p - total * s / sum(shares)) < 1 + 1e-9


def test_apportion_worked_example():
    assert apportion(10, [0.5, 0.3, 0.2]) == [5, 3, 2]
    assert apportion(7, [1, 1, 1]) == [3, 2, 2]  # ties go to the first
    with pytest.raises(ValueError):
        apportion(3, [0, 0])


def test_chosen_draws_round_share_times_n_distinct_indices():
    picked = chosen(np.random.default_rng(0), 20, 0.35, list(range(5, 25)))
    assert len(picked) == 7 and picked <= set(range(5, 25))
    assert chosen(np.random.default_rng(0), 20, 0.9, [1, 2]) == {1, 2}


def test_rules_and_objective_checks():
    assert make_rules("base-fraction", 0.5).support.min_fraction == 0.5
    for bad in (dict(support="base-fraction"), dict(support="center", min_fraction=0.5), dict(loading="sideways"),
                dict(side_clearance=-1)):
        with pytest.raises(ValueError):
            make_rules(**bad)
    with pytest.raises(ValueError, match="then"):
        make_objective("height", "luck")


def test_names():
    assert box_ids(12)[:2] == ["b01", "b02"] and box_ids(3) == ["b1", "b2", "b3"]
    assert upright_orientations(2) == ("xy",) and set(upright_orientations(3)) == {"xyz", "yxz"}
