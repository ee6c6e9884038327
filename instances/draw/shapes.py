"""The drawing primitives every view is built from, in pixels with y pointing down.

A view (2D elevation, isometric 3D) builds a `Scene`; the SVG and PNG writers render it.
Groups carry the attributes the step-through page uses to show and hide boxes.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Optional, Union

Point = tuple[float, float]


@dataclass
class Poly:
    """A filled closed polygon."""

    points: list[Point]
    fill: str
    stroke: str = "#222222"
    width: float = 1.0
    dash: Optional[str] = None  # SVG dash array, e.g. "4 2"
    cls: str = ""
    opacity: float = 1.0


@dataclass
class Line:
    """A straight segment; `arrow` "solid" or "open" puts a head at the end point."""

    a: Point
    b: Point
    stroke: str = "#000000"
    width: float = 1.0
    dash: Optional[str] = None
    arrow: Optional[str] = None
    cls: str = ""
    halo: bool = False


@dataclass
class Text:
    """A line of text centred (or anchored) at (x, y), y being the middle of the line."""

    x: float
    y: float
    text: str
    size: float
    colour: str = "#000000"
    anchor: str = "middle"  # "start", "middle" or "end"
    weight: str = "normal"
    cls: str = ""


@dataclass
class Group:
    """Items drawn together; `attrs` become SVG attributes (data-*, class), `title` a tooltip."""

    items: list["Item"]
    attrs: dict[str, str] = field(default_factory=dict)
    title: Optional[str] = None


Item = Union[Poly, Line, Text, Group]


@dataclass
class Scene:
    width: float
    height: float
    items: list[Item]
    title: str = ""


def walk(items: list[Item]):
    """Every non-group item, depth first, in drawing order."""
    for it in items:
        if isinstance(it, Group):
            yield from walk(it.items)
        else:
            yield it


def rect(x: float, y: float, w: float, h: float, **style) -> Poly:
    """An axis-aligned rectangle with top-left corner (x, y)."""
    return Poly([(x, y), (x + w, y), (x + w, y + h), (x, y + h)], **style)


def fit_label(text: str, width: float, height: float, largest: float = 13.0, smallest: float = 7.0) -> Optional[float]:
    """Font size that fits `text` in a width x height pixel box, or None when it would be too small.

    Assumes an average glyph is 0.6 em wide (common practice for sans-serif estimates).
    """
    if not text:
        return None
    size = min(largest, width / (0.6 * len(text) + 0.4), height * 0.8)
    return size if size >= smallest else None
