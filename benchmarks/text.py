"""Human-readable numbers and words shared by every command: one move numbering, one gap unit.

Moves are numbered from 1 in everything a person reads (the plan's first move is move 1); gaps
are shown in percent. JSON documents keep FORMATS.md's units (the gap as a fraction).
"""
from __future__ import annotations

from typing import Optional

from instances.draw.views import plural  # noqa: F401  (one wording for pictures and the command line)


def percent(gap: Optional[float]) -> str:
    """A gap (a fraction, as in FORMATS.md) in percent with two decimals; `-` when there is none."""
    return "-" if gap is None else f"{100 * gap:.2f}%"


def number(x: Optional[float]) -> str:
    """A value as `%g`; `-` when there is none."""
    return "-" if x is None else f"{x:g}"


def violation_text(v) -> str:
    """One checker violation for people: `move 3 (box b1): overlap: ...`, moves counted from 1."""
    return str(v)
