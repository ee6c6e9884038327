"""Axis-aligned geometry with a tolerance: overlaps, footprints, exact union measure.

The last axis is vertical everywhere. Overlaps shorter than the tolerance do not count
(PROBLEM.md section 7).
"""
from __future__ import annotations

from dataclasses import dataclass
from itertools import product
from typing import Iterable, Sequence

Vector = tuple[float, ...]


@dataclass(frozen=True)
class Placed:
    """A box standing somewhere: its minimum corner `pos` and its extents `ext`."""

    id: str
    pos: Vector
    ext: Vector

    @property
    def bottom(self) -> float:
        return self.pos[-1]

    @property
    def top(self) -> float:
        return self.pos[-1] + self.ext[-1]

    def lo(self, axis: int) -> float:
        return self.pos[axis]

    def hi(self, axis: int) -> float:
        return self.pos[axis] + self.ext[axis]

    @property
    def footprint(self) -> tuple[Vector, Vector]:
        """(minimum corner, extents) of the horizontal projection."""
        return self.pos[:-1], self.ext[:-1]


def overlap_length(a0: float, a1: float, b0: float, b1: float) -> float:
    """Length of [a0, a1] ∩ [b0, b1] (0 when disjoint)."""
    return max(0.0, min(a1, b1) - max(a0, b0))


def overlaps_on(a: Placed, b: Placed, axes: Iterable[int], tol: float) -> bool:
    """True when a and b overlap by more than `tol` on every axis in `axes`."""
    return all(overlap_length(a.lo(k), a.hi(k), b.lo(k), b.hi(k)) > tol for k in axes)


def footprints_overlap(a: Placed, b: Placed, tol: float) -> bool:
    """Positive-length (2D) or positive-area (3D) overlap of the horizontal projections."""
    return overlaps_on(a, b, range(len(a.pos) - 1), tol)


def volumes_overlap(a: Placed, b: Placed, tol: float) -> bool:
    """Positive-volume overlap (every axis overlaps by more than `tol`)."""
    return overlaps_on(a, b, range(len(a.pos)), tol)


def union_measure(boxes: Sequence[tuple[Vector, Vector]]) -> float:
    """Exact length/area/volume of a union of axis-aligned boxes given as (lo, hi) corners.

    Coordinate compression: cut space at every box edge, sum the cells covered by any box.
    Exact for the small supporter sets it is used on.
    """
    boxes = [(lo, hi) for lo, hi in boxes if all(h > l for l, h in zip(lo, hi))]
    if not boxes:
        return 0.0
    dim = len(boxes[0][0])
    cuts = [sorted({c for lo, hi in boxes for c in (lo[k], hi[k])}) for k in range(dim)]
    total = 0.0
    for cell in product(*(range(len(c) - 1) for c in cuts)):
        mid = [(cuts[k][i] + cuts[k][i + 1]) / 2 for k, i in enumerate(cell)]
        if any(all(lo[k] <= mid[k] <= hi[k] for k in range(dim)) for lo, hi in boxes):
            vol = 1.0
            for k, i in enumerate(cell):
                vol *= cuts[k][i + 1] - cuts[k][i]
            total += vol
    return total


def point_on_face(point: Sequence[float], face_lo: Sequence[float], face_hi: Sequence[float], tol: float) -> bool:
    """True when `point` lies on the closed rectangle [face_lo, face_hi] (edges count), within `tol`."""
    return all(lo - tol <= p <= hi + tol for p, lo, hi in zip(point, face_lo, face_hi))
