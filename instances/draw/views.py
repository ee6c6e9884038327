"""What the 2D and the 3D views share: box colours, container sizes, panel layout, legend."""
from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

from ..model import Instance
from . import palette
from .timeline import Key, Replay
from .shapes import Group, Item, Line, Poly, Text, rect

COLOR_BY = ("destination", "step")
GAP = 36.0  # pixels between panels
HEADER = 24.0  # pixels above a panel for its title
MAX_ROW = 1400.0  # pixels before panels wrap to a new row
MAX_KEYS = 12  # destinations listed in the legend at most


def check_color_by(color_by: str) -> str:
    if color_by not in COLOR_BY:
        raise ValueError(f"color_by must be one of {COLOR_BY}, not {color_by!r}")
    return color_by


@dataclass(frozen=True)
class Colours:
    """The fill of every box, by destination (container, or target type without a plan) or by step."""

    by: str
    fills: dict[str, str]
    legend: tuple[tuple[str, str], ...]  # (colour, label)

    def of(self, box_id: str) -> str:
        return self.fills.get(box_id, palette.UNASSIGNED)


def colours(rp: Replay, color_by: str = "destination") -> Colours:
    check_color_by(color_by)
    inst = rp.instance
    fills: dict[str, str] = {}
    legend: list[tuple[str, str]] = []
    if color_by == "step" and rp.steps:
        n = len(rp.steps)
        for box_id, k in rp.step_of.items():
            fills[box_id] = palette.step_colour(k, n)
        marks = sorted({1, n, *range(1, n + 1, max(1, n // 5))})
        legend = [(palette.step_colour(k, n), f"move {k}") for k in marks]
    elif rp.steps:
        index = {key: n for n, key in enumerate(rp.keys)}
        for box_id, k in rp.step_of.items():
            key = rp.steps[k - 1].key
            fills[box_id] = palette.destination_colour(index[key])
        if len(rp.keys) <= MAX_KEYS:  # beyond that the panel titles name the containers
            legend = [(palette.destination_colour(n), container_label(key)) for n, key in enumerate(rp.keys)]
    else:
        index = {c.id: n for n, c in enumerate(inst.containers)}
        for b in inst.boxes:
            if b.target is not None and b.target in index:
                fills[b.id] = palette.destination_colour(index[b.target])
        used = sorted({b.target for b in inst.boxes if b.target in index}, key=index.__getitem__)
        legend = [(palette.destination_colour(index[t]), f"must go to {t}") for t in used]
    if any(b.id not in fills for b in inst.boxes):
        legend.append((palette.UNASSIGNED, "not moved" if rp.steps else "any container"))
    return Colours(color_by, fills, tuple(legend))


def container_label(key: Key) -> str:
    return f"{key[0]} #{key[1]}"


def container_size(inst: Instance, rp: Replay, key: Key) -> tuple[tuple[float, ...], bool]:
    """Display size of a target container and whether its top is open.

    An open top is drawn a little above the packed height (or the tallest box when empty);
    a container type missing from the instance is sized to what the plan put in it.
    """
    contents = [(s.move.at, s.extents) for s in rp.steps if s.key == key and s.extents is not None]
    try:
        size = list(inst.container(key[0]).size)
    except KeyError:
        size = [max([a[k] + e[k] for a, e in contents], default=1.0) for k in range(inst.dim - 1)] + [None]
    open_top = size[-1] is None
    if open_top:
        packed = max([a[-1] + e[-1] for a, e in contents], default=0.0)
        if packed <= 0:
            packed = max(max(b.size) for b in inst.boxes)
        size[-1] = packed * 1.08
    return tuple(float(v) for v in size), open_top  # type: ignore[arg-type]


def source_size(inst: Instance) -> tuple[tuple[float, ...], bool]:
    """Display size of the source (open top drawn just above its highest box)."""
    assert inst.source is not None
    size = list(inst.source.size)
    open_top = size[-1] is None
    if open_top:
        size[-1] = max(b.at[-1] + b.size[-1] for b in inst.boxes) * 1.08  # type: ignore[index]
    return tuple(float(v) for v in size), open_top  # type: ignore[arg-type]


def panel_name(kind: str, key, open_top: bool) -> str:
    """Title above a panel: the source, the boxes laid out, a container type, or one container."""
    top = " (open top)" if open_top else ""
    if kind == "source":
        return "source" + top
    if kind == "given":
        return "boxes (no source)"
    if kind == "type":
        return f"{key[0]} x{key[1]}{top}"
    return container_label(key)


def choose_scale(widths: list[float], heights: list[float]) -> float:
    """Pixels per unit for all panels: about 1100 px across in total, at most 900 px tall,
    each panel at least 200 px wide when that fits."""
    by_width = max(1100.0 / sum(widths), 200.0 / max(widths))
    return min(by_width, 900.0 / max(heights))


def vertical_stretch(scale: float, tallest: float, least: float = 48.0) -> float:
    """Factor by which a 2D picture's vertical axis is stretched so the tallest panel is at
    least `least` pixels tall (1 for all but very flat data, e.g. 1D bin packing as 2D)."""
    return max(1.0, least / (tallest * scale))


def panel_width(name: str, pixels: float) -> float:
    """A panel is at least as wide as its title (0.62 em per glyph at 12 px, bold)."""
    return max(pixels, 7.6 * len(name) + 12, 90.0)


def flow(sizes: list[tuple[float, float]], left: float = 20.0, top: float = 20.0) -> tuple[list[tuple[float, float]], float, float]:
    """Place panels of pixel `sizes` (including headers) left to right, wrapping rows.

    Returns the top-left corner of each panel and the width and height used.
    """
    x, y, row_h, width = left, top, 0.0, left
    out = []
    for w, h in sizes:
        if x > left and x + w > MAX_ROW:
            x, y, row_h = left, y + row_h + GAP, 0.0
        out.append((x, y))
        x += w + GAP
        row_h = max(row_h, h)
        width = max(width, x - GAP)
    return out, width + left, y + row_h


def legend(col: Colours, rp: Replay, x0: float, y0: float, width: float, edges: bool) -> tuple[list[Item], float]:
    """The key below the panels, and the height it takes."""
    entries: list[tuple[list[Item], str]] = []
    for colour, label in col.legend:
        entries.append(([rect(0, -6, 14, 12, fill=colour, stroke=palette.OUTLINE)], label))
    if edges:
        entries.append(([Line((0, 0), (22, 0), palette.EDGE_LIFT, 1.4, arrow="solid")], "lift: must leave first"))
        entries.append(([Line((0, 0), (22, 0), palette.EDGE_SIDE, 1.4, dash="5 3", arrow="open")], "side: frees that face for a tip"))
        entries.append(([Line((7, -7), (7, 7), palette.WALL, 3.5, dash="3 2")], "face against a wall"))
    if rp.steps:
        if any(s.tipped for s in rp.steps):
            entries.append(([Poly([(0, -6), (12, -6), (12, 6)], fill=palette.OUTLINE, stroke="none", width=0)], "tipped"))
        if rp.report is not None and rp.report.violations:
            entries.append(([rect(0, -6, 14, 12, fill="#FFFFFF", stroke=palette.VIOLATION, width=2.5, dash="4 2")], "breaks a rule"))
    items: list[Item] = []
    x, y = x0, y0 + 10
    for glyph, label in entries:
        w = 30 + 6.2 * len(label) + 18
        if x > x0 and x + w > x0 + width:
            x, y = x0, y + 20
        items.append(Group(_shift(glyph, x, y), {"class": "legend-glyph"}))
        items.append(Text(x + 28, y, label, 11, anchor="start", cls="legend"))
        x += w
    height = y - y0 + 14
    lines = violation_lines(rp)
    for n, line in enumerate(lines):
        items.append(Text(x0, y0 + height + 14 + 16 * n, line, 11, anchor="start", cls="violation-text"))
    return items, height + (16 * len(lines) + 14 if lines else 0)


def violation_lines(rp: Replay, limit: int = 12) -> list[str]:
    """The checker's findings, one line each, moves numbered from 1 as on the picture."""
    if rp.report is None or not rp.report.violations:
        return []
    out = []
    for v in rp.report.violations[:limit]:
        where = "plan" if v.move is None else f"move {v.move + 1}"
        out.append(f"{where} ({v.box}): {v.rule}: {v.detail}")
    more = len(rp.report.violations) - limit
    if more > 0:
        out.append(f"... and {more} more")
    return ["Infeasible plan:"] + out


def _shift(items: list[Item], dx: float, dy: float) -> list[Item]:
    out: list[Item] = []
    for it in items:
        if isinstance(it, Poly):
            out.append(Poly([(x + dx, y + dy) for x, y in it.points], it.fill, it.stroke, it.width, it.dash, it.cls))
        elif isinstance(it, Line):
            out.append(Line((it.a[0] + dx, it.a[1] + dy), (it.b[0] + dx, it.b[1] + dy), it.stroke, it.width, it.dash, it.arrow, it.cls))
    return out


def box_title(rp: Replay, box_id: str, side: str) -> str:
    """Tooltip text for a box."""
    b = rp.instance.box(box_id)
    parts = [f"{b.id}: size {' x '.join(num(v) for v in b.size)}"]
    if side == "source" and b.at is not None:
        parts.append(f"at ({', '.join(num(v) for v in b.at)})")
    step = rp.step_for(box_id)
    if step is not None:
        parts.append(f"move {step.number} to {container_label(step.key)}, {step.move.orientation}")
        if step.tipped:
            parts.append("tipped")
    if b.target:
        parts.append(f"must go to {b.target}")
    return "; ".join(parts)


def num(v: Optional[float]) -> str:
    """A number as people read it (`open` for an open top)."""
    if v is None:
        return "open"
    return f"{v:g}"


def box_attrs(rp: Replay, box_id: str, side: str, step) -> dict[str, str]:
    """SVG attributes of a box group; the page shows and hides boxes by them.

    A target box is marked bad when its move broke a rule; a source box when the plan never
    moved it and the checker said so.
    """
    attrs = {"class": "box", "data-side": side, "data-box": box_id, "data-step": str(step.number if step else 0)}
    if side == "target" and step is not None:
        attrs["data-container"] = f"{step.key[0]}#{step.key[1]}"
    if side == "target":
        bad = step is not None and bool(step.violations)
    else:
        bad = rp.report is not None and step is None and any(v.box == box_id for v in rp.report.violations)
    if bad:
        attrs["data-bad"] = "1"
    return attrs


def edge_group(rp: Replay, j: str, i: str, kind: str, line: Line) -> Group:
    """A precedence edge j -> i; `data-gone` is the move after which it no longer binds."""
    steps = [rp.step_of[b] for b in (j, i) if b in rp.step_of]
    gone = min(steps) if steps else 0
    title = f"{j} must leave before {i}" + ("" if kind == "lift" else f" can be tipped by its {kind} face")
    attrs = {"class": "edge", "data-kind": kind, "data-from": j, "data-to": i, "data-gone": str(gone)}
    return Group([line], attrs, title)


FACE_AXIS = {"left": (0, -1), "right": (0, +1), "front": (1, -1), "back": (1, +1)}


def side_arrow(at_j, size_j, at_i, size_i, kind: str, reach: float) -> tuple[tuple[float, ...], tuple[float, ...]]:
    """World end points of a short arrow from box j across face `kind` of box i.

    The arrow crosses i's face at the middle of the shared patch, `reach` deep into each box;
    an arrow towards a low face runs a little lower than one towards a high face, so two
    boxes that block each other show two separate arrows.
    """
    axis, side = FACE_AXIS[kind]
    dim = len(at_i)
    mid = []
    for k in range(dim):
        lo, hi = max(at_j[k], at_i[k]), min(at_j[k] + size_j[k], at_i[k] + size_i[k])
        frac = (0.35 if side < 0 else 0.65) if k == dim - 1 else 0.5
        mid.append(lo + (hi - lo) * frac)
    face = at_i[axis] if side < 0 else at_i[axis] + size_i[axis]
    d = min(reach, 0.4 * size_j[axis], 0.4 * size_i[axis])
    a, b = list(mid), list(mid)
    a[axis] = face + side * d  # inside j
    b[axis] = face - side * d  # inside i
    return tuple(a), tuple(b)


def height_mark_attrs(rp: Replay, key: Key, offset) -> dict[str, str]:
    """Attributes of a packed-height mark drawn at the final height: `data-dy` is the vertical
    pixel shift that puts it at the height after each move (0 = start), `data-h` the height."""
    heights = [0.0] + [s.heights.get(key, 0.0) for s in rp.steps]
    return {"class": "height-mark", "data-container": f"{key[0]}#{key[1]}",
            "data-dy": " ".join(f"{offset(h):.2f}" for h in heights),
            "data-h": " ".join(num(round(h, 6)) for h in heights)}
