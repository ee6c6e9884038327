"""Size classes: the published item-size distributions of 2D and 3D bin packing, scaled.

Each class is a mixture of item *types*; a type gives, per axis, a range of integer sizes as
fractions of the reference container extent along that axis. Drawn at the reference extent
(`reference`), a class reproduces the published distribution exactly; at another extent the
fractions are scaled and rounded inwards (ceil of the low end, floor of the high end, at least 1).

References (class definitions recalled from memory, as they are commonly restated):

- J. O. Berkey and P. Y. Wang, "Two-dimensional finite bin-packing algorithms",
  Journal of the Operational Research Society 38(5):423-429, 1987: classes I-VI, sizes uniform
  in [1, a] with square bins of side b: (10, 10), (10, 30), (35, 40), (35, 100), (100, 100),
  (100, 300).
- S. Martello and D. Vigo, "Exact solution of the two-dimensional finite bin packing problem",
  Management Science 44(3):388-399, 1998: bins 100 x 100, four item types (w uniform in
  [2W/3, W] and h in [1, H/2]; w in [1, W/2], h in [2H/3, H]; w in [W/2, W], h in [H/2, H];
  w in [1, W/2], h in [1, H/2]); class k draws type k with probability 0.7 and each other
  type with probability 0.1.
- S. Martello, D. Pisinger and D. Vigo, "The three-dimensional bin packing problem",
  Operations Research 48(2):256-267, 2000: bins 100^3, five item types, class k draws type k
  with probability 0.6 and each other type with 0.1; classes 6-8 are uniform in [1, 10], [1, 35],
  [1, 100] with bins of side 10, 40, 100. Their (width, height, depth) are mapped here to
  (x, z, y): height is vertical.

The plain-word aliases (uniform, wide, tall, large, small) name one of the classes above;
`mixed` (half large, half small items) is this project's own class.
"""
from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction as F
from math import ceil, floor
from typing import Sequence

import numpy as np

Range = tuple[F, F]


@dataclass(frozen=True)
class ItemType:
    """Per-axis size ranges (fractions of the reference extent along that axis)."""

    ranges: tuple[Range, ...]


@dataclass(frozen=True)
class SizeClass:
    """A mixture of item types, with the reference container extent it was published for."""

    name: str
    dim: int
    types: tuple[ItemType, ...]
    weights: tuple[float, ...]
    reference: int
    source: str


def _uniform(dim: int, a: int, b: int) -> ItemType:
    return ItemType(tuple((F(1, b), F(a, b)) for _ in range(dim)))


LOW_HALF = (F(1, 100), F(1, 2))  # [1, L/2] at L = 100
HIGH_THIRD = (F(2, 3), F(1))  # [2L/3, L]
HIGH_HALF = (F(1, 2), F(1))  # [L/2, L]

# Martello & Vigo (1998) item types, axes (x, vertical).
_MV_TYPES = (
    ItemType((HIGH_THIRD, LOW_HALF)),  # wide
    ItemType((LOW_HALF, HIGH_THIRD)),  # tall
    ItemType((HIGH_HALF, HIGH_HALF)),  # large
    ItemType((LOW_HALF, LOW_HALF)),  # small
)
# Martello, Pisinger & Vigo (2000) item types as (w, h, d), stored on axes (x, y=d, z=h).
_MPV_WHD = (
    (LOW_HALF, HIGH_THIRD, HIGH_THIRD),
    (HIGH_THIRD, LOW_HALF, HIGH_THIRD),
    (HIGH_THIRD, HIGH_THIRD, LOW_HALF),
    (HIGH_HALF, HIGH_HALF, HIGH_HALF),
    (LOW_HALF, LOW_HALF, LOW_HALF),
)
_MPV_TYPES = tuple(ItemType((w, d, h)) for w, h, d in _MPV_WHD)

_BW = "Berkey & Wang (1987), class {}"
_MV = "Martello & Vigo (1998), class {}"
_MPV = "Martello, Pisinger & Vigo (2000), class {}"


def _mixture(types: Sequence[ItemType], main: int, p_main: float, p_other: float) -> tuple[float, ...]:
    return tuple(p_main if k == main else p_other for k in range(len(types)))


def _build() -> dict[tuple[int, str], SizeClass]:
    out: dict[tuple[int, str], SizeClass] = {}
    for k, (a, b) in enumerate([(10, 10), (10, 30), (35, 40), (35, 100), (100, 100), (100, 300)], start=1):
        out[(2, f"bw{k}")] = SizeClass(f"bw{k}", 2, (_uniform(2, a, b),), (1.0,), b, _BW.format(k))
    for k in range(4):
        out[(2, f"mv{k + 1}")] = SizeClass(f"mv{k + 1}", 2, _MV_TYPES, _mixture(_MV_TYPES, k, 0.7, 0.1), 100, _MV.format(k + 1))
    for k in range(5):
        out[(3, f"mpv{k + 1}")] = SizeClass(f"mpv{k + 1}", 3, _MPV_TYPES, _mixture(_MPV_TYPES, k, 0.6, 0.1), 100, _MPV.format(k + 1))
    for k, (a, b) in enumerate([(10, 10), (35, 40), (100, 100)], start=6):
        out[(3, f"mpv{k}")] = SizeClass(f"mpv{k}", 3, (_uniform(3, a, b),), (1.0,), b, _MPV.format(k))
    mixed2 = SizeClass("mixed", 2, (_MV_TYPES[2], _MV_TYPES[3]), (0.5, 0.5), 100, "this project: half large, half small (Martello & Vigo 1998 types 3 and 4)")
    mixed3 = SizeClass("mixed", 3, (_MPV_TYPES[3], _MPV_TYPES[4]), (0.5, 0.5), 100, "this project: half large, half small (Martello, Pisinger & Vigo 2000 types 4 and 5)")
    out[(2, "mixed")] = mixed2
    out[(3, "mixed")] = mixed3
    return out


CLASSES = _build()
ALIASES = {
    2: {"uniform": "bw1", "wide": "mv1", "tall": "mv2", "large": "mv3", "small": "mv4"},
    3: {"uniform": "mpv6", "wide": "mpv2", "tall": "mpv1", "large": "mpv4", "small": "mpv5"},
}


def class_names(dim: int) -> list[str]:
    """Every class name usable in `dim` dimensions (aliases first)."""
    return list(ALIASES[dim]) + [name for (d, name) in CLASSES if d == dim]


def find_class(dim: int, name: str) -> SizeClass:
    """The class called `name` (an alias or a published label) in `dim` dimensions."""
    key = ALIASES.get(dim, {}).get(name, name)
    try:
        return CLASSES[(dim, key)]
    except KeyError:
        raise ValueError(f"unknown size class {name!r} in {dim}D (one of {', '.join(class_names(dim))})") from None


def integer_range(r: Range, extent: int) -> tuple[int, int]:
    """The integer sizes [lo, hi] a fractional range allows at container extent `extent`."""
    lo = max(1, ceil(r[0] * extent))
    hi = max(lo, floor(r[1] * extent))
    return lo, hi


def draw_sizes(rng: np.random.Generator, cls: SizeClass, n: int, extents: Sequence[int]) -> tuple[list[tuple[int, ...]], list[int]]:
    """Draw `n` integer sizes from `cls` scaled to container `extents` (one per axis).

    Returns the sizes and the item type index of each (for checking the mixture).
    """
    kinds = rng.choice(len(cls.types), size=n, p=np.asarray(cls.weights) / sum(cls.weights))
    sizes = []
    for k in kinds:
        t = cls.types[int(k)]
        size = []
        for axis, r in enumerate(t.ranges):
            lo, hi = integer_range(r, int(extents[axis]))
            size.append(int(rng.integers(lo, hi + 1)))
        sizes.append(tuple(size))
    return sizes, [int(k) for k in kinds]
