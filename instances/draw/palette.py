"""Colours: a colour-blind-safe set for destinations, a sequential map for steps, face shading.

Destination colours are the eight-colour set of Okabe and Ito, "Color Universal Design"
(2008), as reprinted by B. Wong, "Points of view: Color blindness", Nature Methods 8, 441
(2011); hex values recalled from memory. Black is left out (it is the outline colour).
Step colours sample matplotlib's "viridis" map (van der Walt and Smith, 2015), which stays
ordered in lightness for the common forms of colour blindness.
"""
from __future__ import annotations

from typing import Sequence

DESTINATION = (
    "#E69F00",  # orange
    "#56B4E9",  # sky blue
    "#009E73",  # bluish green
    "#F0E442",  # yellow
    "#0072B2",  # blue
    "#D55E00",  # vermillion
    "#CC79A7",  # reddish purple
)
UNASSIGNED = "#D9D9D9"  # a box with no destination yet (no plan, no target)
OUTLINE = "#222222"
EDGE_LIFT = "#000000"
EDGE_SIDE = "#5A5A5A"
WALL = "#000000"
VIOLATION = "#000000"
GHOST = "#F4F4F4"  # part of a box drawn in another part of a cut container
GHOST_EDGE = "#9A9A9A"


def _rgb(colour: str) -> tuple[float, float, float]:
    c = colour.lstrip("#")
    return tuple(int(c[i:i + 2], 16) / 255 for i in (0, 2, 4))  # type: ignore[return-value]


def _hex(rgb: Sequence[float]) -> str:
    return "#" + "".join(f"{round(max(0.0, min(1.0, v)) * 255):02X}" for v in rgb)


def destination_colour(k: int) -> str:
    """Colour of the k-th destination; past seven, the set repeats lighter, then darker."""
    base = _rgb(DESTINATION[k % len(DESTINATION)])
    round_ = k // len(DESTINATION)
    if round_ == 0:
        return DESTINATION[k]
    if round_ % 2 == 1:
        return mix(_hex(base), "#FFFFFF", 0.45)
    return shade(_hex(base), 0.65)


def step_colour(step: int, steps: int) -> str:
    """Colour of move `step` (1-based) out of `steps`, from viridis (dark early, light late)."""
    from matplotlib import colormaps

    t = 0.0 if steps <= 1 else (step - 1) / (steps - 1)
    r, g, b, _ = colormaps["viridis"](0.08 + 0.84 * t)
    return _hex((r, g, b))


def shade(colour: str, factor: float) -> str:
    """`colour` darkened (factor < 1) by scaling its channels."""
    return _hex(tuple(v * factor for v in _rgb(colour)))


def mix(colour: str, other: str, t: float) -> str:
    """`colour` moved a fraction `t` of the way to `other`."""
    a, b = _rgb(colour), _rgb(other)
    return _hex(tuple(x + (y - x) * t for x, y in zip(a, b)))


def text_colour(fill: str) -> str:
    """Black or white, whichever reads better on `fill` (relative luminance, WCAG 2.0 formula)."""
    lin = [v / 12.92 if v <= 0.03928 else ((v + 0.055) / 1.055) ** 2.4 for v in _rgb(fill)]
    lum = 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2]
    return "#000000" if lum > 0.179 else "#FFFFFF"
