"""What the 2D and the 3D views share: box colours, container sizes, panel layout, legend."""
from __future__ import annotations

import math
import statistics
from dataclasses import dataclass, field, replace
from typing import Callable, Optional

from ..model import Instance, Result
from . import palette
from .timeline import Key, Replay, Step
from .shapes import Group, Item, Line, Poly, Text, rect

COLOR_BY = ("destination", "step")
GAP = 36.0  # pixels between panels
HEADER = 24.0  # pixels above a panel for its title
MAX_ROW = 1400.0  # pixels before panels wrap to a new row
MAX_KEYS = 12  # destinations listed in the legend at most
TITLE = 52.0  # pixels at the top for the picture's title and subtitle
READABLE = 24.0  # pixels the median box's smallest side should span, so boxes never draw as slivers
BAND = 760.0  # pixels: a taller container is cut into parts placed side by side
MAX_PANEL = 520.0  # pixels: widest panel when the scale is raised for readability
MAX_AREA = 16e6  # square pixels of boxes and containers at most (the canvas stays loadable)


@dataclass(frozen=True)
class Content:
    """One box drawn in a panel: where (lower corner, extents), its move (if any), which side."""

    box: str
    at: tuple[float, ...]
    ext: tuple[float, ...]
    step: Optional[Step]
    side: str  # "source" or "target"

    @property
    def bottom(self) -> float:
        return self.at[-1]

    @property
    def top(self) -> float:
        return self.at[-1] + self.ext[-1]


@dataclass(frozen=True)
class Panel:
    """A container (or the source, or part of one) as drawn: the vertical range `lo`..`hi` shown,
    the boxes whose bottom lies in it (`contents`) and clipped parts of the others (`ghosts`)."""

    kind: str  # "source", "given" (boxes with no source), "target", "type" (a container type, no plan)
    key: object
    size: tuple[float, ...]  # the whole container's display size
    open_top: bool
    contents: tuple[Content, ...]
    lo: float = 0.0
    hi: Optional[float] = None
    part: Optional[tuple[int, int]] = None  # (k, parts), k from 1, when the container is cut
    ghosts: tuple[Content, ...] = ()
    until: Optional[float] = None  # where the next part's cut lies (heights from there on show there)
    start: float = 0.0  # where this part's cut lies (its boxes' bottoms are at or above it)

    def holds(self, h: float) -> bool:
        """Is height `h` shown in this part? The parts' [start, until) ranges cover every height once;
        an uncut panel shows every height."""
        if self.part is None:
            return True
        return self.start - 1e-9 <= h and (self.until is None or h < self.until - 1e-9)

    @property
    def top(self) -> float:
        return self.size[-1] if self.hi is None else self.hi

    @property
    def shown(self) -> tuple[float, ...]:
        """Display size of this panel: the container's floor and the vertical range shown."""
        return tuple(self.size[:-1]) + (self.top - self.lo,)

    @property
    def name(self) -> str:
        if self.part is None:
            return panel_name(self.kind, self.key, self.open_top)
        return f"{panel_name(self.kind, self.key, False)} {self.part[0]}/{self.part[1]}"

    @property
    def data_id(self) -> str:
        return "source" if self.kind in ("source", "given") else f"{self.key[0]}#{self.key[1]}"  # type: ignore[index]


def base_panels(rp: Replay, shelf: Callable[[Replay], tuple[list[Content], tuple[float, ...]]]) -> list[Panel]:
    """The source (or the boxes laid out by `shelf`) and every target container, uncut."""
    inst = rp.instance
    out: list[Panel] = []
    if inst.source is not None:
        size, open_top = source_size(inst)
        contents = tuple(Content(b.id, tuple(b.at), tuple(b.size), rp.step_for(b.id), "source") for b in inst.boxes)  # type: ignore[arg-type]
        out.append(Panel("source", None, size, open_top, contents))
    elif not rp.steps:
        contents, size = shelf(rp)
        out.append(Panel("given", None, size, True, tuple(contents)))
    if rp.steps:
        for key in rp.keys:
            size, open_top = container_size(inst, rp, key)
            contents = tuple(Content(s.move.box, tuple(s.move.at), s.extents, s, "target") for s in rp.steps
                             if s.key == key and s.extents is not None)
            out.append(Panel("target", key, size, open_top, contents))
    else:
        for c in inst.containers:
            size, open_top = container_size(inst, rp, (c.id, 0))
            out.append(Panel("type", (c.id, c.count), size, open_top, ()))
    return out


def smallest_side(rp: Replay) -> float:
    """The median over boxes of each box's smallest side (what must stay readable)."""
    return statistics.median(min(b.size) for b in rp.instance.boxes)


def layout(panels: list[Panel], extent: Callable[[tuple[float, ...]], tuple[float, float]], small: float) -> tuple[float, list[Panel]]:
    """One scale (pixels per unit) for every panel, and the panels after cutting tall ones.

    The scale fits the panels in about 1100 x 900 pixels; where that would leave the median box
    under `READABLE` pixels it is raised (within `MAX_PANEL` and `MAX_AREA`), and a container
    taller than `BAND` pixels is cut into parts placed side by side (each box drawn in the part
    where its bottom lies, so none is split).
    """
    sizes = [extent(p.size) for p in panels]
    scale = choose_scale([w for w, _ in sizes], [h for _, h in sizes])
    need = READABLE / small
    if scale >= need:
        return scale, panels
    cap = min(MAX_PANEL / max(w for w, _ in sizes), math.sqrt(MAX_AREA / sum(w * h for w, h in sizes)))
    scale = max(scale, min(need, cap))
    out: list[Panel] = []
    for p, (_, h) in zip(panels, sizes):
        parts = math.ceil(h * scale / BAND - 1e-9)
        out.extend(cut(p, parts, margin=min(small, p.size[-1] / parts) * 0.6) if parts > 1 else [p])
    return scale, out


def cut(p: Panel, parts: int, margin: float) -> list[Panel]:
    """`p` cut at equal heights into at most `parts` panels; parts with no box are left out.

    A part shows from `margin` below its cut (what its lowest boxes stand on) to the top of its
    highest box; the parts of other boxes in that range are its ghosts.
    """
    height = p.size[-1]
    step = nice_step(height / parts)
    parts = max(1, math.ceil(height / step - 1e-9))
    cuts = [step * k for k in range(parts)] + [height]
    groups: list[list[Content]] = [[] for _ in range(parts)]
    for c in p.contents:
        k = min(parts - 1, max(0, int(c.bottom / height * parts))) if height > 0 else 0
        while k + 1 < parts and c.bottom >= cuts[k + 1]:
            k += 1
        while k > 0 and c.bottom < cuts[k]:
            k -= 1
        groups[k].append(c)
    kept = [k for k in range(parts) if groups[k]] or [0]
    if len(kept) > 1 and max(c.top for c in groups[kept[-1]]) - cuts[kept[-1]] <= 0.5 * step:
        groups[kept[-2]] += groups[kept[-1]]  # a last part with little in it joins the one below
        kept.pop()
    out = []
    for n, k in enumerate(kept, 1):
        last = n == len(kept)
        lo = 0.0 if n == 1 else max(0.0, cuts[k] - margin)
        hi = max([cuts[k + 1]] + [c.top for c in groups[k]])
        if last:  # a lid is shown; an open top just above the highest box
            hi = max(c.top for c in groups[k]) * 1.02 if p.open_top and groups[k] else max(hi, height)
        members = set(id(c) for c in groups[k])
        ghosts = tuple(clip(c, lo, hi) for c in p.contents if id(c) not in members and c.bottom < hi and c.top > lo)
        until = None if last else cuts[kept[n]]
        out.append(replace(p, contents=tuple(groups[k]), lo=lo, hi=hi, part=(n, len(kept)), ghosts=ghosts, until=until,
                           start=cuts[k] if n > 1 else 0.0))
    return out


def nice_step(x: float) -> float:
    """The largest round number (1, 1.5, 2, 2.5, 3, 4, 5, 6 or 8 times a power of ten) not above x,
    so cut heights read as round numbers and no part grows taller than asked."""
    p = 10.0 ** math.floor(math.log10(x))
    return max(m * p for m in (1.0, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0) if m * p <= x * (1 + 1e-12))


def clip(c: Content, lo: float, hi: float) -> Content:
    """The part of a box between heights lo and hi."""
    bottom, top = max(c.bottom, lo), min(c.top, hi)
    return replace(c, at=tuple(c.at[:-1]) + (bottom,), ext=tuple(c.ext[:-1]) + (top - bottom,))


def title_lines(rp: Replay, result: Optional[Result] = None) -> tuple[str, str]:
    """The picture's title (the instance's name) and a subtitle: size, objective and its value,
    the checker's verdict on the plan, and the solver's status, bound and gap when a result is drawn."""
    inst = rp.instance
    then = inst.objective.then != "none"
    parts = [f"{inst.dim}D, {len(inst.boxes)} boxes"]
    if rp.report is None:
        obj = inst.objective.minimise + (f" then {inst.objective.then}" if then else "")
        parts.append(f"minimise {obj}; no plan (the instance and its precedence graph)")
    else:
        parts.append(f"minimise {inst.objective.minimise} = {num(rp.report.objective)}"
                     + (f", then {inst.objective.then} = {rp.report.tips}" if then else ""))
        parts.append("plan checked: feasible" if rp.report.feasible else
                     f"plan INFEASIBLE: {plural(len(rp.report.violations), 'violation')}")
    if result is not None:
        claim = [f"solver status {result.status}"]
        if result.bound is not None:
            claim.append(f"bound {num(result.bound)}")
        if result.gap is not None:
            claim.append(f"gap {100 * result.gap:.2f}%")
        parts.append(", ".join(claim))
    return inst.name or "instance", "  ·  ".join(parts)


def heading(rp: Replay, result: Optional[Result], left: float = 20.0) -> list[Item]:
    """The title block drawn at the top of every picture."""
    title, sub = title_lines(rp, result)
    return [Text(left, 18, title, 16, anchor="start", weight="bold", cls="picture-title"),
            Text(left, 38, sub, 12, anchor="start", cls="picture-subtitle")]


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
    """A target container as people read it: type and index as in the plan file, `van[0]`."""
    return f"{key[0]}[{key[1]}]"


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


def flow(sizes: list[tuple[float, float]], left: float = 20.0, top: float = 20.0 + TITLE) -> tuple[list[tuple[float, float]], float, float]:
    """Place panels of pixel `sizes` (including headers) left to right, wrapping rows.

    Returns the top-left corner of each panel and the width and height used.
    """
    x, y, row_h, width = left, top, 0.0, left
    out: list[tuple[float, float]] = []
    rows: list[list[int]] = [[]]
    for n, (w, h) in enumerate(sizes):
        if x > left and x + w > MAX_ROW:
            _floor(out, rows[-1], sizes, row_h)
            x, y, row_h = left, y + row_h + GAP, 0.0
            rows.append([])
        out.append((x, y))
        rows[-1].append(n)
        x += w + GAP
        row_h = max(row_h, h)
        width = max(width, x - GAP)
    _floor(out, rows[-1], sizes, row_h)
    return out, width + left, y + row_h


def _floor(corners: list[tuple[float, float]], row: list[int], sizes: list[tuple[float, float]], row_h: float) -> None:
    """Lower the panels of one row so their floors line up (pictures read from the floor up)."""
    for n in row:
        corners[n] = (corners[n][0], corners[n][1] + row_h - sizes[n][1])


@dataclass
class Notes:
    """What the legend must explain beyond colours: which marks appear, labels left off."""

    edges: bool = False
    tips: bool = False
    ghosts: bool = False
    moves: bool = False
    labels: int = 0  # boxes drawn
    unlabelled: int = 0  # of those, boxes whose label did not fit and was left off
    cut: bool = False
    extra: list[str] = field(default_factory=list)


def legend(col: Colours, rp: Replay, x0: float, y0: float, width: float, notes: Notes) -> tuple[list[Item], float]:
    """The key below the panels, and the height it takes."""
    entries: list[tuple[list[Item], str]] = []
    for colour, label in col.legend:
        entries.append(([rect(0, -6, 14, 12, fill=colour, stroke=palette.OUTLINE)], label))
    if notes.moves:
        entries.append(([Text(7, 0, "7", 12, weight="bold")], "move number (1 = first box out)"))
    if notes.edges:
        entries.append(([Line((0, 0), (22, 0), palette.EDGE_LIFT, 1.4, arrow="solid")], "lift: must leave first"))
        entries.append(([Line((0, 0), (22, 0), palette.EDGE_SIDE, 1.4, dash="5 3", arrow="open")], "side: frees that face for a tip"))
        entries.append(([Line((7, -7), (7, 7), palette.WALL, 3.5, dash="3 2")], "face against a wall"))
    if notes.tips:
        entries.append(([Poly([(0, -7), (14, -7), (14, 7)], fill=palette.OUTLINE, stroke="none", width=0)], "tipped"))
    if notes.ghosts:
        entries.append(([rect(0, -6, 14, 12, fill=palette.GHOST, stroke=palette.GHOST_EDGE, dash="2 2")],
                        "box drawn in the next or previous part"))
    if rp.report is not None and rp.report.violations:
        entries.append(([rect(0, -6, 14, 12, fill="#FFFFFF", stroke=palette.VIOLATION, width=2.5, dash="4 2")], "breaks a rule"))
    items: list[Item] = []
    x, y = x0, y0 + 10
    for glyph, label in entries:
        w = 30 + 6.4 * len(label) + 18
        if x > x0 and x + w > x0 + width:
            x, y = x0, y + 20
        items.append(Group(_shift(glyph, x, y), {"class": "legend-glyph"}))
        items.append(Text(x + 28, y, label, 11, anchor="start", cls="legend"))
        x += w
    lines = ["Panels: container type[index] as in the plan file."] if rp.steps else \
        ["Panels: the source and each container type (x count; no plan given)."]
    if notes.cut:
        lines.append("Tall containers are cut into parts k/n, shown left to right from the bottom up, heights at the "
                     "left; each box is drawn in the part where its bottom lies.")
    if notes.unlabelled:
        lines.append(f"Labels left off {notes.unlabelled} of {notes.labels} drawn boxes (too small to read at this scale); "
                     "hover a box in the SVG or the page for its id and move.")
    lines += notes.extra
    y += 20
    for line in lines:
        items.append(Text(x0, y, line, 11, anchor="start", cls="legend-note"))
        y += 16
    height = y - y0
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
        elif isinstance(it, Text):
            out.append(replace(it, x=it.x + dx, y=it.y + dy))
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


def plural(n: int, word: str, words: Optional[str] = None) -> str:
    """`1 violation`, `2 violations` (`words` for an irregular plural)."""
    return f"{n} {word if n == 1 else (words or word + 's')}"


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


def ghost_attrs(c: Content) -> dict[str, str]:
    """A ghost shows and hides with its box on the page (same side and move as the box)."""
    return {"class": "ghost", "data-box": c.box, "data-side": c.side, "data-step": str(c.step.number if c.step else 0)}


def edge_group(rp: Replay, j: str, i: str, kind: str, line: Line) -> Group:
    """A precedence edge j -> i; `data-gone` is the move after which it no longer binds."""
    steps = [rp.step_of[b] for b in (j, i) if b in rp.step_of]
    gone = min(steps) if steps else 0
    title = f"{j} must leave before {i}" + ("" if kind == "lift" else f" can be tipped by its {kind} face")
    attrs = {"class": "edge", "data-kind": kind, "data-from": j, "data-to": i, "data-gone": str(gone)}
    return Group([line], attrs, title)


FACE_AXIS = {"left": (0, -1), "right": (0, +1), "front": (1, -1), "back": (1, +1)}


FRACTIONS = (0.5, 0.3, 0.7, 0.15, 0.85, 0.05, 0.95)


def side_arrows(at_j, size_j, at_i, size_i, kind: str, reach: float) -> list[tuple[tuple[float, ...], tuple[float, ...]]]:
    """Candidate world end points of a short arrow from box j across face `kind` of box i.

    The first crosses i's face at the middle of the shared patch (an arrow towards a low face a
    little lower than one towards a high face, so two boxes that block each other show two
    arrows), `reach` deep into each box; the others slide along the patch, for a caller that
    must keep the arrow off the labels.
    """
    axis, side = FACE_AXIS[kind]
    dim = len(at_i)
    spans = [(max(at_j[k], at_i[k]), min(at_j[k] + size_j[k], at_i[k] + size_i[k])) for k in range(dim)]
    first = 0.35 if side < 0 else 0.65
    vertical = [first] + [f for f in FRACTIONS if f != 0.5]
    across = [k for k in range(dim - 1) if k != axis]  # the other horizontal axis (3D only)
    face = at_i[axis] if side < 0 else at_i[axis] + size_i[axis]
    d = min(reach, 0.4 * size_j[axis], 0.4 * size_i[axis])
    out = []
    for fa in (FRACTIONS[:5] if across else (0.5,)):
        for fv in vertical:
            mid = []
            for k, (lo, hi) in enumerate(spans):
                f = fv if k == dim - 1 else (fa if k in across else 0.5)
                mid.append(lo + (hi - lo) * f)
            a, b = list(mid), list(mid)
            a[axis] = face + side * d  # inside j
            b[axis] = face - side * d  # inside i
            out.append((tuple(a), tuple(b)))
    return out


def lift_arrows(at_j, size_j, at_i, size_i, reach: float) -> list[tuple[tuple[float, ...], tuple[float, ...]]]:
    """Candidate world end points of a short downward arrow from box j into box i below it,
    crossing where they meet, through points of their shared footprint (middle first)."""
    dim = len(at_i)
    spans = [(max(at_j[k], at_i[k]), min(at_j[k] + size_j[k], at_i[k] + size_i[k])) for k in range(dim - 1)]
    grid = [(f,) for f in FRACTIONS] if dim == 2 else sorted(
        ((fx, fy) for fx in FRACTIONS[:5] for fy in FRACTIONS[:5]), key=lambda f: abs(f[0] - 0.5) + abs(f[1] - 0.5))
    down_j = min(reach, 0.4 * size_j[-1])
    down_i = min(reach, 0.4 * size_i[-1])
    out = []
    for r in (1.0, 0.5):
        for fr in grid:
            foot = [lo + (hi - lo) * f for (lo, hi), f in zip(spans, fr)]
            out.append((tuple(foot) + (at_j[-1] + down_j * r,), tuple(foot) + (at_i[-1] + size_i[-1] - down_i * r,)))
    return out


def route(candidates: list[tuple[tuple[float, float], tuple[float, float]]], labels) -> tuple[tuple[float, float], tuple[float, float], list[int]]:
    """The first candidate pixel segment that crosses no label in `labels` (a RectIndex); failing
    that, the one crossing fewest, with the labels it crosses (the caller leaves those off)."""
    best = None
    for a, b in candidates:
        hits = labels.hits(a, b)
        if not hits:
            return a, b, []
        if best is None or len(hits) < len(best[2]):
            best = (a, b, hits)
    assert best is not None
    return best


def height_mark_attrs(rp: Replay, p: Panel, offset) -> dict[str, str]:
    """Attributes of a packed-height mark drawn at the final height: `data-dy` is the vertical
    pixel shift that puts it at the height after each move (0 = start), `-` where that height
    shows in another part of a cut container; `data-h` the height."""
    key = p.key
    heights = [0.0] + [s.heights.get(key, 0.0) for s in rp.steps]  # type: ignore[arg-type]
    attrs = {"class": "height-mark", "data-container": f"{key[0]}#{key[1]}",  # type: ignore[index]
             "data-dy": " ".join(f"{offset(h):.2f}" if p.holds(h) else "-" for h in heights),
             "data-h": " ".join(num(round(h, 6)) for h in heights)}
    if not p.holds(heights[-1]):
        attrs["display"] = "none"  # the final height shows in another part
    return attrs


class Labels:
    """Every label drawn, in a rectangle index, so arrows can keep off them (or leave one off)."""

    def __init__(self) -> None:
        from .shapes import RectIndex

        self.index = RectIndex()
        self.owner: list[tuple[Group, Text]] = []
        self.groups: list[Group] = []

    def add(self, group: Group) -> Group:
        self.groups.append(group)
        for it in group.items:
            if isinstance(it, Text):
                self.index.add(it.bounds())
                self.owner.append((group, it))
        return group

    def route(self, candidates) -> tuple[tuple[float, float], tuple[float, float]]:
        """`route` among candidate pixel segments, leaving off any label the chosen one crosses."""
        a, b, hits = route(candidates, self.index)
        for k in hits:
            group, text = self.owner[k]
            group.items = [t for t in group.items if t is not text]
            self.index.rects[k] = (math.inf, math.inf, math.inf, math.inf)
        return a, b

    def unlabelled(self) -> int:
        return sum(1 for g in self.groups if not any(isinstance(t, Text) for t in g.items))


TABLE_ROW = 15.0  # pixels per row of the move table
TABLE_HEAD = ("move", "box", "container", "at", "turn", "tip")


def move_table(rp: Replay, x0: float, y0: float, max_height: float, max_width: float = MAX_ROW) -> tuple[list[Item], float, float]:
    """Every move as a row (number, box, container, lowest corner, orientation, tipped), in
    columns of at most `max_height` pixels (taller when `max_width` holds too few columns);
    returns the items, width and height used."""
    from .shapes import text_width

    rows = [(str(s.number), s.move.box, container_label(s.key), "(" + ", ".join(num(v) for v in s.move.at) + ")",
             s.move.orientation, "tipped" if s.tipped else "") for s in rp.steps]
    widths = [max([text_width(r[k], 11, k == 0) for r in rows] + [text_width(TABLE_HEAD[k], 11, True)]) + 10
              for k in range(len(TABLE_HEAD))]
    col_w = sum(widths) + 24
    per_col = max(10, int((max_height - 2 * TABLE_ROW) // TABLE_ROW))
    per_col = max(per_col, -(-len(rows) // max(1, int(max_width // col_w))))
    items: list[Item] = [Text(x0, y0 + 6, "Moves", 12, anchor="start", weight="bold", cls="table-title")]
    for start in range(0, len(rows), per_col):
        cx = x0 + (start // per_col) * col_w
        y = y0 + 6 + TABLE_ROW * 1.3
        for row, weight, cls in [(TABLE_HEAD, "bold", "table-head")] + [(r, "normal", "table-row") for r in rows[start:start + per_col]]:
            x = cx
            cells: list[Item] = []
            for k, cell in enumerate(row):
                if k == 0:
                    cells.append(Text(x + widths[0] - 10, y, cell, 11, anchor="end", weight="bold", cls=cls))
                else:
                    cells.append(Text(x, y, cell, 11, anchor="start", weight=weight, cls=cls))
                x += widths[k]
            # the page marks the current move's row and greys the moves still to come
            items.append(Group(cells, {"class": "move-row", "data-row": row[0]}) if cls == "table-row" else Group(cells))
            y += TABLE_ROW
    columns = -(-len(rows) // per_col)
    used = min(len(rows), per_col) + 1
    return [Group(items, {"class": "move-table"})], columns * col_w, 6 + TABLE_ROW * (used + 1.3)
