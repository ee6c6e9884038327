"""Dropping boxes into a source so that every box rests (integer sizes and positions).

A box is lowered at a chosen horizontal position until it meets the floor or the highest box
top under its footprint, so it always rests (PROBLEM.md section 1). A height map over the
integer grid of the source floor gives every landing height at once. Positions can be drawn
uniformly or *flush* (touching a wall or a neighbour's side, which blocks faces), and a box can
be asked to keep one face of a grip free of the boxes already there (walls and side clearance
count, PROBLEM.md section 3).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Optional, Sequence

import numpy as np
from numpy.lib.stride_tricks import sliding_window_view

from ..geometry import Placed
from ..model import FACES, FACES_OF_GRIP
from ..precedence import FACE_AXIS, touches

Vec = tuple[int, ...]
FLUSH_TRIES = 24


@dataclass
class Stack:
    """A source being filled: its floor extents, the clearance, and the boxes dropped so far."""

    floor: Vec
    clearance: float = 0
    placed: list[Placed] = field(default_factory=list)

    def __post_init__(self) -> None:
        self.heights = np.zeros(self.floor, dtype=np.int64)

    # ------------------------------------------------------------ queries

    def landing_heights(self, ext: Vec) -> np.ndarray:
        """Landing height of a box with extents `ext` at every admissible floor position."""
        window = tuple(int(e) for e in ext[:-1])
        return sliding_window_view(self.heights, window).max(axis=tuple(range(-len(window), 0)))

    def blocked(self, pos: Vec, ext: Vec, face: str) -> bool:
        """True when `face` of a box at `pos` is blocked: a wall or a placed box within clearance.

        Integer data, so the tolerance is 0; the touching rule is the precedence graph's own.
        """
        axis, side = FACE_AXIS[face]
        wall = pos[axis] if side < 0 else self.floor[axis] - (pos[axis] + ext[axis])
        if wall <= self.clearance:
            return True
        me = Placed("", pos, ext)
        return any(touches(q, me, face, self.clearance, 0.0) for q in self.placed)

    def grip_free(self, pos: Vec, ext: Vec, grip: str) -> bool:
        """True when at least one face of `grip` is free of walls and placed boxes."""
        return any(not self.blocked(pos, ext, f) for f in FACES_OF_GRIP[grip])

    def is_flush(self, pos: Vec, ext: Vec) -> bool:
        """True when some side face touches a wall or a placed box."""
        return any(self.blocked(pos, ext, f) for f in FACES[len(pos)])

    # ------------------------------------------------------------ dropping

    def drop(self, rng: np.random.Generator, ext: Vec, *, flush: float = 0.0, keep_free: Optional[str] = None) -> Optional[Vec]:
        """Drop a box of extents `ext`; return its position, or None when no position suits.

        With probability `flush` the position is first sought among flush ones; with
        `keep_free` (a grip) only positions leaving one face of that grip free are allowed.
        """
        if any(e > f for e, f in zip(ext[:-1], self.floor)):
            return None
        land = self.landing_heights(ext)

        def at(cell: Vec) -> Vec:
            return tuple(int(v) for v in cell) + (int(land[cell]),)

        def allowed(pos: Vec) -> bool:
            return keep_free is None or self.grip_free(pos, ext, keep_free)

        if rng.random() < flush:
            cands = self._flush_cells(ext, land.shape)
            for k in rng.permutation(len(cands))[:FLUSH_TRIES]:
                pos = at(cands[int(k)])
                if self.is_flush(pos, ext) and allowed(pos):
                    return self._place(pos, ext)
        cells = list(np.ndindex(land.shape))
        for k in rng.permutation(len(cells)):
            pos = at(cells[int(k)])
            if allowed(pos):
                return self._place(pos, ext)
        return None

    def _flush_cells(self, ext: Vec, shape: tuple[int, ...]) -> list[Vec]:
        """Floor positions against a wall or a placed box's side on one axis (candidates only)."""
        lines = []
        for axis, n in enumerate(shape):
            coords = {0, n - 1}
            for q in self.placed:
                coords.update((q.hi(axis), q.lo(axis) - ext[axis]))
            lines.append(sorted(c for c in coords if 0 <= c < n))
        if len(shape) == 1:
            return [(x,) for x in lines[0]]
        cells = {(x, y) for x in lines[0] for y in range(shape[1])}
        cells |= {(x, y) for y in lines[1] for x in range(shape[0])}
        return sorted(cells)

    def _place(self, pos: Vec, ext: Vec) -> Vec:
        self.placed.append(Placed("", pos, ext))
        window = tuple(slice(p, p + e) for p, e in zip(pos[:-1], ext[:-1]))
        self.heights[window] = pos[-1] + ext[-1]
        return pos


def source_floor(target_floor: Sequence[int], ratio: float, extents: Sequence[Vec]) -> Vec:
    """Source floor extents: `ratio` times the target's, and at least the widest box on each axis."""
    out = []
    for axis, t in enumerate(target_floor):
        widest = max((e[axis] for e in extents), default=1)
        out.append(max(int(np.ceil(ratio * t - 1e-9)), widest))
    return tuple(out)
