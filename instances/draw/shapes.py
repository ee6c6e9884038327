"""The drawing primitives every view is built from, in pixels with y pointing down.

A view (2D elevation, isometric 3D) builds a `Scene`; the SVG and PNG writers render it.
Groups carry the attributes the step-through page uses to show and hide boxes.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache
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
    rotate: float = 0.0  # degrees, counter-clockwise on screen (90: reads bottom to top)

    def bounds(self) -> tuple[float, float, float, float]:
        """Pixel (left, top, right, bottom) of the text's box (measured DejaVu Sans advance widths)."""
        w = text_width(self.text, self.size, self.weight == "bold")
        h = self.size * LINE
        if self.rotate % 180:
            w, h = h, w
        x0 = {"start": self.x, "middle": self.x - w / 2, "end": self.x - w}[self.anchor] if not self.rotate % 180 else self.x - w / 2
        return x0, self.y - h / 2, x0 + w, self.y + h / 2


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
    """Every non-group item that shows, depth first, in drawing order."""
    for it in items:
        if isinstance(it, Group):
            if it.attrs.get("display") != "none":
                yield from walk(it.items)
        else:
            yield it


def rect(x: float, y: float, w: float, h: float, **style) -> Poly:
    """An axis-aligned rectangle with top-left corner (x, y)."""
    return Poly([(x, y), (x + w, y), (x + w, y + h), (x, y + h)], **style)


LINE = 1.15  # height of a line of text, in em (DejaVu Sans ascent + descent is about 1.17 em)
SMALLEST = 7.0  # pixels: labels that would be smaller are left off


@lru_cache(maxsize=4096)
def _glyph_width(ch: str, bold: bool) -> float:
    """Advance width of one character in em, from the DejaVu Sans metrics matplotlib ships."""
    from matplotlib.font_manager import FontProperties
    from matplotlib.textpath import TextToPath

    prop = FontProperties(family="DejaVu Sans", weight="bold" if bold else "normal", size=100)
    w, _, _ = TextToPath().get_text_width_height_descent(ch, prop, ismath=False)
    return w / 100.0


def text_width(text: str, size: float, bold: bool = False) -> float:
    """Pixel width of `text` at font size `size` px in DejaVu Sans (the pictures' first font)."""
    return size * sum(_glyph_width(ch, bold) for ch in text)


def fit_label(text: str, width: float, height: float, largest: float = 13.0, smallest: float = SMALLEST,
              bold: bool = False) -> Optional[float]:
    """Font size that fits `text` in a width x height pixel box, or None when it would be too small."""
    if not text or width <= 0 or height <= 0:
        return None
    em = text_width(text, 1.0, bold)
    size = min(largest, (width - 1.0) / em, height / LINE)
    return size if size >= smallest else None


def segment_hits_rect(a: Point, b: Point, rect: tuple[float, float, float, float]) -> bool:
    """Does the segment a-b pass through the rectangle (left, top, right, bottom)? (Liang-Barsky clipping.)"""
    x0, y0, x1, y1 = rect
    dx, dy = b[0] - a[0], b[1] - a[1]
    lo, hi = 0.0, 1.0
    for p, q in ((-dx, a[0] - x0), (dx, x1 - a[0]), (-dy, a[1] - y0), (dy, y1 - a[1])):
        if p == 0:
            if q < 0:
                return False
            continue
        t = q / p
        if p < 0:
            lo = max(lo, t)
        else:
            hi = min(hi, t)
        if lo > hi:
            return False
    return True


class RectIndex:
    """Label rectangles of a picture in a coarse grid, for fast "does this segment cross a label?"."""

    def __init__(self, cell: float = 64.0):
        self.cell = cell
        self.rects: list[tuple[float, float, float, float]] = []
        self.grid: dict[tuple[int, int], list[int]] = {}

    def _cells(self, x0: float, y0: float, x1: float, y1: float):
        c = self.cell
        for i in range(int(x0 // c), int(x1 // c) + 1):
            for j in range(int(y0 // c), int(y1 // c) + 1):
                yield i, j

    def add(self, rect: tuple[float, float, float, float]) -> None:
        self.rects.append(rect)
        for cell in self._cells(*rect):
            self.grid.setdefault(cell, []).append(len(self.rects) - 1)

    def hits(self, a: Point, b: Point, pad: float = 1.5) -> list[int]:
        """Indices of the rectangles (grown by `pad`) that the segment a-b crosses."""
        box = (min(a[0], b[0]), min(a[1], b[1]), max(a[0], b[0]), max(a[1], b[1]))
        seen: set[int] = set()
        out = []
        for cell in self._cells(*box):
            for k in self.grid.get(cell, ()):
                if k in seen:
                    continue
                seen.add(k)
                x0, y0, x1, y1 = self.rects[k]
                if segment_hits_rect(a, b, (x0 - pad, y0 - pad, x1 + pad, y1 + pad)):
                    out.append(k)
        return out
