"""Cutting a container into boxes that fill it exactly, and a loading order for them.

Guillotine cuts split a piece in two across one axis; a *pinwheel* splits a piece into five
around a centre piece on two axes, a pattern no guillotine cut can produce (the classic
smallest non-guillotine pattern; common practice in cutting-stock test generation).
All cuts fall on integer coordinates, so pieces keep integer sizes and positions.
"""
from __future__ import annotations

from typing import Sequence

import numpy as np

Vec = tuple[int, ...]
Piece = tuple[Vec, Vec]  # (minimum corner, extents)


def cut_container(rng: np.random.Generator, extents: Sequence[int], pieces: int, *, pinwheel: float = 0.2) -> list[Piece]:
    """Cut a box of `extents` into exactly `pieces` integer boxes that tile it.

    The piece cut next is drawn with probability proportional to its volume; with probability
    `pinwheel` (when the count allows and the piece is at least 3 long on two axes) the cut is a
    pinwheel, otherwise a guillotine cut across an axis drawn in proportion to its length.
    Raises ValueError when `pieces` exceeds the number of unit cells.
    """
    ext = tuple(int(e) for e in extents)
    if pieces < 1 or pieces > int(np.prod(ext)):
        raise ValueError(f"cannot cut a {'x'.join(map(str, ext))} container into {pieces} integer boxes (at most {int(np.prod(ext))})")
    out: list[Piece] = [((0,) * len(ext), ext)]
    while len(out) < pieces:
        vols = np.array([np.prod(e) if max(e) > 1 else 0 for _, e in out], dtype=float)
        k = int(rng.choice(len(out), p=vols / vols.sum()))
        pos, e = out.pop(k)
        wide = [a for a in range(len(e)) if e[a] >= 3]
        if len(out) + 5 <= pieces and len(wide) >= 2 and rng.random() < pinwheel:
            p, q = (int(a) for a in rng.choice(wide, size=2, replace=False))
            out.extend(_pinwheel(rng, pos, e, p, q))
        else:
            out.extend(_guillotine(rng, pos, e))
    return out


def _guillotine(rng: np.random.Generator, pos: Vec, ext: Vec) -> list[Piece]:
    lengths = np.array([e - 1 for e in ext], dtype=float)
    axis = int(rng.choice(len(ext), p=lengths / lengths.sum()))
    at = int(rng.integers(1, ext[axis]))
    lo = list(ext)
    lo[axis] = at
    hi_pos = list(pos)
    hi_pos[axis] += at
    hi = list(ext)
    hi[axis] -= at
    return [(pos, tuple(lo)), (tuple(hi_pos), tuple(hi))]


def _pinwheel(rng: np.random.Generator, pos: Vec, ext: Vec, p: int, q: int) -> list[Piece]:
    """Five pieces on axes p, q: four arms turning round a centre piece (other axes unchanged)."""
    x1 = int(rng.integers(1, ext[p] - 1))
    x2 = int(rng.integers(x1 + 1, ext[p]))
    y1 = int(rng.integers(1, ext[q] - 1))
    y2 = int(rng.integers(y1 + 1, ext[q]))
    W, H = ext[p], ext[q]
    # (p-interval, q-interval) of each piece, relative to the piece's corner
    rects = [((0, x2), (0, y1)), ((x2, W), (0, y2)), ((x1, W), (y2, H)), ((0, x1), (y1, H)), ((x1, x2), (y1, y2))]
    out = []
    for (a0, a1), (b0, b1) in rects:
        c, e = list(pos), list(ext)
        c[p], e[p] = pos[p] + a0, a1 - a0
        c[q], e[q] = pos[q] + b0, b1 - b0
        out.append((tuple(c), tuple(e)))
    return out


def supports(a: Piece, b: Piece) -> bool:
    """True when `a` carries `b`: a's top is b's bottom and their footprints overlap with positive area."""
    (pa, ea), (pb, eb) = a, b
    if pa[-1] + ea[-1] != pb[-1]:
        return False
    return all(min(pa[k] + ea[k], pb[k] + eb[k]) - max(pa[k], pb[k]) > 0 for k in range(len(pa) - 1))


def loading_order(rng: np.random.Generator, pieces: Sequence[Piece]) -> list[int]:
    """A random order in which every piece goes in after all pieces carrying it.

    In a tiling, everything under a piece's footprint is filled by pieces reachable down chains
    of carriers, so this order loads from above with full support (a random topological order
    of the "carries" relation: the next piece is drawn uniformly among the ready ones).
    """
    n = len(pieces)
    below = [[a for a in range(n) if supports(pieces[a], pieces[b])] for b in range(n)]
    done: set[int] = set()
    order: list[int] = []
    while len(order) < n:
        ready = [b for b in range(n) if b not in done and all(a in done for a in below[b])]
        pick = ready[int(rng.integers(len(ready)))]
        order.append(pick)
        done.add(pick)
    return order
