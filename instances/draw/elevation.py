"""The 2D view: source and target containers side by side at one scale (dim 2 instances).

Each box appears once on the source side and once (where the plan puts it) on the target
side, labelled with its id and move number; lift and side edges of the precedence graph
are drawn over the source, faces against a wall are marked, tipped boxes carry a flag.
"""
from __future__ import annotations

import math
from typing import Optional

import networkx as nx

from ..precedence import lift_graph
from . import palette
from ..model import Result
from .timeline import Replay, Step
from .shapes import LINE, Group, Item, Line, Poly, Scene, Text, fit_label, rect
from .views import (HEADER, Colours, Content, Labels, Notes, Panel, base_panels, box_attrs, box_title, choose_scale,
                    colours, edge_group, flow, ghost_attrs, heading, height_mark_attrs, layout, legend, lift_arrows, num,
                    panel_width, side_arrows, smallest_side, title_lines, vertical_stretch)


HEIGHT_LABEL = 46.0  # pixels right of a target panel for its packed height


class Frame:
    """Maps world coordinates of one panel (y up, heights `lo`..`hi` shown) to pixels (y down)."""

    def __init__(self, x: float, y: float, scale: float, lo: float, hi: float, stretch: float = 1.0):
        self.x, self.y, self.s, self.lo, self.hi = x, y, scale, lo, hi
        self.sy = scale * stretch  # vertical pixels per unit

    def px(self, wx: float, wy: float) -> tuple[float, float]:
        return self.x + wx * self.s, self.y + HEADER + (self.hi - wy) * self.sy

    def box(self, at, ext) -> tuple[float, float, float, float]:
        """Pixel (left, top, width, height) of a box at `at` with extents `ext`."""
        left, top = self.px(at[0], at[1] + ext[1])
        return left, top, ext[0] * self.s, ext[1] * self.sy


def scene(rp: Replay, color_by: str = "destination", result: Optional[Result] = None) -> Scene:
    """The whole 2D picture of `rp` (instance, precedence graph and, if any, the plan)."""
    inst = rp.instance
    col = colours(rp, color_by)
    panels = base_panels(rp, _shelf)
    base = choose_scale([p.size[0] for p in panels], [p.size[1] for p in panels])
    stretch = vertical_stretch(base, max(p.size[1] for p in panels))
    scale, panels = layout(panels, lambda size: (size[0], size[1] * stretch), smallest_side(rp) if stretch == 1.0 else math.inf)
    if stretch != 1.0:
        scale = base
    sizes = [(panel_width(p.name, p.shown[0] * scale) + (HEIGHT_LABEL if p.kind == "target" else 0),
              p.shown[1] * scale * stretch + HEADER) for p in panels]
    corners, width, height = flow(sizes)
    frames = [Frame(x, y, scale, p.lo, p.top, stretch) for (x, y), p in zip(corners, panels)]

    back: list[Item] = []
    bodies: list[Item] = []
    edges: list[Item] = []
    labels = Labels()
    notes = Notes(moves=bool(rp.steps), cut=any(p.part for p in panels), ghosts=any(p.ghosts for p in panels))
    where: dict[str, int] = {}  # source box -> index of the panel (part) drawing it
    for n, (frame, p) in enumerate(zip(frames, panels)):
        back.append(_outline(frame, p))
        for g in p.ghosts:
            back.append(_ghost(frame, g))
        for c in p.contents:
            body, label = _box(rp, col, frame, c)
            bodies.append(body)
            labels.add(label)
            if c.side == "source":
                where[c.box] = n
            notes.tips = notes.tips or (c.step is not None and c.step.tipped)
        if p.kind == "target":
            back.append(_height_mark(rp, frame, p))
    if inst.source is not None:
        edges = _edges(rp, frames, where, labels)
        notes.edges = True
    notes.labels, notes.unlabelled = len(labels.groups), labels.unlabelled()
    if stretch != 1.0:
        notes.extra.append(f"Vertical scale stretched x{stretch:.3g} (the boxes are very flat).")
    keys, key_h = legend(col, rp, 20.0, height + 14, max(width - 40, 600.0), notes)
    items = heading(rp, result) + back + bodies + edges + labels.groups + keys
    return Scene(max(width, 640.0), height + 14 + key_h + 16, items, title_lines(rp, result)[0])


def _outline(frame: Frame, p: Panel) -> Group:
    """A panel's background, walls (an open top dashed; a cut dotted) and title."""
    w = p.size[0]
    (x0, y0), (x1, y1) = frame.px(0, p.lo), frame.px(w, p.top)
    items: list[Item] = [rect(x0, y1, x1 - x0, y0 - y1, fill="#FAFAFA", stroke="none", width=0, cls="floor")]
    last = p.part is None or p.part[0] == p.part[1]
    if p.kind != "given":  # boxes with no source stand in no container: no walls
        floor = Line((x0, y0), (x1, y0), "#444444", 2) if p.lo == 0 else Line((x0, y0), (x1, y0), "#888888", 1, dash="1 3", cls="cut")
        if last:
            rim = Line((x0, y1), (x1, y1), "#444444", 1 if p.open_top else 2, dash="4 3" if p.open_top else None)
        else:
            rim = Line((x0, y1), (x1, y1), "#888888", 1, dash="1 3", cls="cut")
        items += [Line((x0, y1), (x0, y0), "#444444", 2), floor, Line((x1, y0), (x1, y1), "#444444", 2), rim]
    if p.part is not None:  # where this part's cut lies
        yc = frame.px(0, p.start)[1]
        items += [Line((x0 - 4, yc), (x0, yc), "#555555", 1, cls="cut"),
                  Text(x0 - 5, yc, num(round(p.start, 6)), 9, "#555555", anchor="end", cls="cut-text")]
    items.append(Text(x0, frame.y + HEADER / 2, p.name, 12, anchor="start", weight="bold", cls="panel-title"))
    return Group(items, {"class": "panel", "data-panel": p.data_id})


def _ghost(frame: Frame, c: Content) -> Group:
    """The part of a box drawn in another part of this container, faint and unlabelled."""
    left, top, w, h = frame.box(c.at, c.ext)
    return Group([rect(left, top, w, h, fill=palette.GHOST, stroke=palette.GHOST_EDGE, width=0.8, dash="2 2", cls="ghost")],
                 ghost_attrs(c))


def _box(rp: Replay, col: Colours, frame: Frame, c: Content) -> tuple[Group, Group]:
    """The body group (shape, tip flag, wall marks) and the label group of one box on one side."""
    box_id, step, side = c.box, c.step, c.side
    left, top, w, h = frame.box(c.at, c.ext)
    fill = col.of(box_id)
    attrs = box_attrs(rp, box_id, side, step)
    bad = "data-bad" in attrs
    # a box whose move broke a rule is see-through, so an overlap shows what lies beneath
    opacity = 0.7 if bad and side == "target" else 1.0
    items: list[Item] = [rect(left, top, w, h, fill=fill, stroke=palette.OUTLINE, width=1, cls="body", opacity=opacity)]
    tip = 0.0
    if step is not None and step.tipped:
        tip = min(w, h, max(8.0, min(16.0, 0.45 * min(w, h))))
        items.append(Poly([(left + w - tip, top), (left + w, top), (left + w, top + tip)], fill=palette.OUTLINE, stroke="none", width=0, cls="tip-mark"))
    if side == "source" and box_id in rp.graph:
        for face in sorted(rp.graph.nodes[box_id]["wall_blocked"]):
            x = left + 2 if face == "left" else left + w - 2
            items.append(Line((x, top + 1), (x, top + h - 1), palette.WALL, 3.5, dash="3 2", cls="wall-block"))
    if bad:
        items.append(rect(left + 1.5, top + 1.5, max(w - 3, 1), max(h - 3, 1), fill="none", stroke=palette.VIOLATION, width=2.5, dash="4 2", cls="violation"))
    body = Group(items, attrs, box_title(rp, box_id, side))
    label = Group(box_labels(box_id, step, left, top, w, h, palette.text_colour(fill), tip), {**attrs, "class": "label"})
    return body, label


def box_labels(box_id: str, step: Optional[Step], left: float, top: float, w: float, h: float, colour: str,
               tip: float = 0.0) -> list[Item]:
    """Id and move number inside a box: both on two lines, else the move number alone (turned
    upright in a tall narrow box), else nothing. Labels keep 2 px off the edges and off the tip mark."""
    tag = str(step.number) if step is not None else ""
    texts = [(box_id, "normal"), (tag, "bold")] if tag else [(box_id, "normal")]
    # below the tip mark (full width) or beside it (full height)
    areas = [(left + 2, top + 2 + tip, w - 4, h - 4 - tip), (left + 2 + tip, top + 2, w - 4 - 2 * tip, h - 4)] if tip else \
        [(left + 2, top + 2, w - 4, h - 4)]
    for x, y, aw, ah in areas:
        cx, cy = x + aw / 2, y + ah / 2
        if len(texts) == 2:
            sizes = [fit_label(t, aw, ah / 2, bold=b == "bold") for t, b in texts]
            if all(sizes):
                size = min(sizes)  # type: ignore[type-var]
                return [Text(cx, cy - size * LINE / 2, box_id, size, colour),
                        Text(cx, cy + size * LINE / 2, tag, size, colour, weight="bold")]
        for text, weight in reversed(texts) if tag else texts:
            size = fit_label(text, aw, ah, bold=weight == "bold")
            if size:
                return [Text(cx, cy, text, size, colour, weight=weight)]
            size = fit_label(text, ah, aw, bold=weight == "bold")
            if size and ah > aw:
                return [Text(cx, cy, text, size, colour, weight=weight, rotate=90)]
    return []


def _edges(rp: Replay, frames: list[Frame], where: dict[str, int], labels: Labels) -> list[Item]:
    """Lift edges (transitive reduction: the direct ones) and side edges over the source, each a
    short arrow across the boxes' common edge, routed off the labels."""
    inst = rp.instance
    g = rp.graph
    lifts = nx.transitive_reduction(lift_graph(g))
    out: list[Item] = []
    for j, i in sorted(lifts.edges):
        bj, bi = inst.box(j), inst.box(i)
        frame = frames[where[j]]
        reach = 14.0 / frame.sy
        cands = [(frame.px(*a), frame.px(*_above(b, frame))) for a, b in lift_arrows(bj.at, bj.size, bi.at, bi.size, reach)]
        a, b = labels.route(cands)
        out.append(edge_group(rp, j, i, "lift", Line(a, b, palette.EDGE_LIFT, 1.4, arrow="solid", cls="lift", halo=True)))
    for j, i, kind in sorted(g.edges(data="kind")):
        if kind == "lift":
            continue
        bj, bi = inst.box(j), inst.box(i)
        frame = frames[where[j] if bj.at[-1] >= bi.at[-1] else where[i]]
        cands = [(frame.px(*a), frame.px(*b)) for a, b in side_arrows(bj.at, bj.size, bi.at, bi.size, kind, 22.0 / frame.s)]
        a, b = labels.route(cands)
        out.append(edge_group(rp, j, i, kind, Line(a, b, palette.EDGE_SIDE, 1.4, dash="4 2", arrow="open", cls="side", halo=True)))
    return out


def _above(p, frame: Frame):
    """A world point kept inside the part a frame shows (an arrow's lower end in a cut source)."""
    return (p[0], max(p[1], frame.lo))


def _height_mark(rp: Replay, frame: Frame, p: Panel) -> Group:
    """A dashed line at the container's packed height; the page moves it with the slider (and
    shows it only in the part of a cut container that holds that height)."""
    final = rp.steps[-1].heights.get(p.key, 0.0)  # type: ignore[arg-type]
    y = frame.px(0, final)[1]
    x0, x1 = frame.px(0, 0)[0], frame.px(p.size[0], 0)[0]
    items: list[Item] = [Line((x0 - 6, y), (x1 + 6, y), "#000000", 1, dash="2 2", cls="height-line"),
                         Text(x1 + 8, y, num(round(final, 6)), 10, anchor="start", cls="height-text")]
    return Group(items, height_mark_attrs(rp, p, lambda h: frame.px(0, h)[1] - y))


def _shelf(rp: Replay) -> tuple[list[Content], tuple[float, float]]:
    """Boxes with no source: rows left to right, rows stacked upwards, gaps between."""
    boxes = rp.instance.boxes
    gap = max(max(b.size) for b in boxes) * 0.1
    rows = max(1, round(math.sqrt(len(boxes)) / 2))
    row_len = max(max(b.size[0] for b in boxes), sum(b.size[0] + gap for b in boxes) / rows)
    out, x, y, tallest = [], 0.0, 0.0, 0.0
    for b in boxes:
        if x > 0 and x + b.size[0] > row_len:
            x, y, tallest = 0.0, y + tallest + gap, 0.0
        out.append(Content(b.id, (x, y), tuple(b.size), None, "source"))
        x += b.size[0] + gap
        tallest = max(tallest, b.size[1])
    size = (max(c.at[0] + c.ext[0] for c in out), max(c.at[1] + c.ext[1] for c in out) * 1.04)
    return out, size
