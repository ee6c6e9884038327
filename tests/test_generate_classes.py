"""Size classes (instances/generate/classes.py) against the published class definitions.

Sources (definitions recalled from memory, as restated in the bin packing literature):
Berkey & Wang (1987) classes I-VI; Martello & Vigo (1998) classes I-IV;
Martello, Pisinger & Vigo (2000) classes 1-8.
Statistical checks: chi-square goodness of fit (scipy.stats) at significance 1e-4, so a correct
generator fails about once in ten thousand runs; the seeds are fixed, so runs are repeatable.
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from instances.generate.classes import class_names, draw_sizes, find_class, integer_range

ALPHA = 1e-4


@pytest.mark.parametrize(
    "name, ref, expected",
    [
        # Berkey & Wang (1987): sizes uniform in [1, a], bins b x b
        ("bw1", 10, [[(1, 10), (1, 10)]]),
        ("bw2", 30, [[(1, 10), (1, 10)]]),
        ("bw3", 40, [[(1, 35), (1, 35)]]),
        ("bw4", 100, [[(1, 35), (1, 35)]]),
        ("bw5", 100, [[(1, 100), (1, 100)]]),
        ("bw6", 300, [[(1, 100), (1, 100)]]),
        # Martello & Vigo (1998), W = H = 100: types wide, tall, large, small
        ("mv1", 100, [[(67, 100), (1, 50)], [(1, 50), (67, 100)], [(50, 100), (50, 100)], [(1, 50), (1, 50)]]),
    ],
)
def test_2d_ranges_at_the_published_bin_size(name, ref, expected):
    cls = find_class(2, name)
    assert cls.reference == ref
    got = [[integer_range(r, ref) for r in t.ranges] for t in cls.types]
    assert got == expected


def test_3d_types_at_the_published_bin_size():
    """Martello, Pisinger & Vigo (2000) type 1: w in [1, W/2], h in [2H/3, H], d in [2D/3, D];
    stored as (x = w, y = d, z = h)."""
    cls = find_class(3, "mpv1")
    assert [integer_range(r, 100) for r in cls.types[0].ranges] == [(1, 50), (67, 100), (67, 100)]
    assert [integer_range(r, 100) for r in cls.types[1].ranges] == [(67, 100), (67, 100), (1, 50)]
    assert cls.weights == (0.6, 0.1, 0.1, 0.1, 0.1)
    assert [integer_range(r, 40) for r in find_class(3, "mpv7").types[0].ranges] == [(1, 35)] * 3


@pytest.mark.parametrize("dim, name, main, p_main", [(2, "mv1", 0, 0.7), (2, "tall", 1, 0.7), (3, "mpv3", 2, 0.6), (3, "small", 4, 0.6)])
def test_type_mixture_follows_the_published_weights(dim, name, main, p_main):
    cls = find_class(dim, name)
    n = 3000
    _, kinds = draw_sizes(np.random.default_rng(11), cls, n, (100,) * dim)
    observed = np.bincount(kinds, minlength=len(cls.types))
    expected = np.array(cls.weights) / sum(cls.weights) * n
    assert expected[main] == pytest.approx(p_main * n)
    assert stats.chisquare(observed, expected).pvalue > ALPHA


def test_sizes_are_uniform_on_the_scaled_range():
    """bw5 at width 20: each axis uniform on the integers [1, 20] (chi-square)."""
    sizes, _ = draw_sizes(np.random.default_rng(5), find_class(2, "bw5"), 4000, (20, 20))
    for axis in (0, 1):
        counts = np.bincount([s[axis] for s in sizes], minlength=21)[1:]
        assert stats.chisquare(counts).pvalue > ALPHA


def test_scaled_sizes_stay_inside_each_type_range():
    cls = find_class(2, "wide")
    sizes, kinds = draw_sizes(np.random.default_rng(2), cls, 500, (12, 12))
    for s, k in zip(sizes, kinds):
        for axis, r in enumerate(cls.types[k].ranges):
            lo, hi = integer_range(r, 12)
            assert lo <= s[axis] <= hi
    assert integer_range(cls.types[0].ranges[0], 12) == (8, 12)  # 2/3 of 12 = 8


def test_names_and_errors():
    assert find_class(2, "uniform").name == "bw1" and find_class(3, "uniform").name == "mpv6"
    assert find_class(2, "mixed").weights == (0.5, 0.5)
    assert {"uniform", "wide", "tall", "large", "small", "mixed", "mv4", "bw6"} <= set(class_names(2))
    with pytest.raises(ValueError, match="unknown size class 'mv1' in 3D"):
        find_class(3, "mv1")
