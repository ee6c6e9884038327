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
from .timeline import Key, Replay, Step
from .shapes import Group, Item, Line, Poly, Scene, Text, fit_label, rect
from .views import (HEADER, Colours, box_attrs, box_title, choose_scale, colours, container_size, edge_group, flow,
                    height_mark_attrs, legend, num, panel_name, panel_width, side_arrow, source_size, vertical_stretch)


HEIGHT_LABEL = 46.0  # pixels right of a target panel for its packed height


class Frame:
    """Maps world coordinates of one panel (y up) to pixels (y down)."""

    def __init__(self, x: float, y: float, scale: float, height: float, stretch: float = 1.0):
        self.x, self.y, self.s, self.h = x, y, scale, height
        self.sy = scale * stretch  # vertical pixels per unit

    def px(self, wx: float, wy: float) -> tuple[float, float]:
        return self.x + wx * self.s, self.y + HEADER + (self.h - wy) * self.sy

    def box(self, at, ext) -> tuple[float, float, float, float]:
        """Pixel (left, top, width, height) of a box at `at` with extents `ext`."""
        left, top = self.px(at[0], at[1] + ext[1])
        return left, top, ext[0] * self.s, ext[1] * self.sy


def scene(rp: Replay, color_by: str = "destination") -> Scene:
    """The whole 2D picture of `rp` (instance, precedence graph and, if any, the plan)."""
    inst = rp.instance
    col = colours(rp, color_by)
    panels: list[tuple[str, object, tuple[float, float], bool]] = []  # (kind, key, size, open)
    if inst.source is not None:
        size, open_top = source_size(inst)
        panels.append(("source", None, size, open_top))
    elif not rp.steps:
        panels.append(("given", None, _shelf_size(rp), True))
    if rp.steps:
        for key in rp.keys:
            size, open_top = container_size(inst, rp, key)
            panels.append(("target", key, size, open_top))
    else:
        for c in inst.containers:
            size, open_top = container_size(inst, rp, (c.id, 0))
            panels.append(("type", (c.id, c.count), size, open_top))
    scale = choose_scale([p[2][0] for p in panels], [p[2][1] for p in panels])
    stretch = vertical_stretch(scale, max(p[2][1] for p in panels))
    sizes = [(panel_width(panel_name(p[0], p[1], p[3]), p[2][0] * scale) + (HEIGHT_LABEL if p[0] == "target" else 0),
              p[2][1] * scale * stretch + HEADER) for p in panels]
    corners, width, height = flow(sizes)
    frames = [Frame(x, y, scale, p[2][1], stretch) for (x, y), p in zip(corners, panels)]

    back: list[Item] = []
    bodies: list[Item] = []
    edges: list[Item] = []
    labels: list[Item] = []
    for frame, (kind, key, size, open_top) in zip(frames, panels):
        back.append(_outline(frame, kind, key, size, open_top, rp))
        if kind == "source":
            for b in inst.boxes:
                body, label = _box(rp, col, frame, b.id, b.at, b.size, "source", rp.step_for(b.id))
                bodies.append(body)
                labels.append(label)
            edges.extend(_edges(rp, frame))
        elif kind == "given":
            for b, at in zip(inst.boxes, _shelf(rp)):
                body, label = _box(rp, col, frame, b.id, at, b.size, "source", None)
                bodies.append(body)
                labels.append(label)
        elif kind == "target":
            for s in rp.steps:
                if s.key == key and s.extents is not None:
                    body, label = _box(rp, col, frame, s.move.box, s.move.at, s.extents, "target", s)
                    bodies.append(body)
                    labels.append(label)
            back.append(_height_mark(rp, frame, key, size[0]))
    keys, key_h = legend(col, rp, 20.0, height + 14, max(width - 40, 600.0), edges=bool(edges) or inst.source is not None)
    if stretch != 1.0:
        keys.append(Text(20.0, height + 14 + key_h + 8, f"vertical scale stretched x{stretch:.3g} (the boxes are very flat)", 11,
                         anchor="start", cls="stretch-note"))
        key_h += 18
    title = inst.name or "instance"
    return Scene(max(width, 640.0), height + 14 + key_h + 16, back + bodies + edges + labels + keys, title)


def _outline(frame: Frame, kind: str, key, size, open_top: bool, rp: Replay) -> Group:
    """A panel's background, walls (an open top dashed) and title."""
    w, h = size
    (x0, y0), (x1, y1) = frame.px(0, 0), frame.px(w, h)
    items: list[Item] = [rect(x0, y1, x1 - x0, y0 - y1, fill="#FAFAFA", stroke="none", width=0, cls="floor")]
    if kind != "given":  # boxes with no source stand in no container: no walls
        items += [Line((x0, y1), (x0, y0), "#444444", 2), Line((x0, y0), (x1, y0), "#444444", 2),
                  Line((x1, y0), (x1, y1), "#444444", 2),
                  Line((x0, y1), (x1, y1), "#444444", 1 if open_top else 2, dash="4 3" if open_top else None)]
    name = panel_name(kind, key, open_top)
    items.append(Text(x0, frame.y + HEADER / 2, name, 12, anchor="start", weight="bold", cls="panel-title"))
    attrs = {"class": "panel", "data-panel": "source" if kind in ("source", "given") else f"{key[0]}#{key[1]}"}
    return Group(items, attrs)


def _box(rp: Replay, col: Colours, frame: Frame, box_id: str, at, ext, side: str, step: Optional[Step]) -> tuple[Group, Group]:
    """The body group (shape, tip flag, wall marks) and the label group of one box on one side."""
    left, top, w, h = frame.box(at, ext)
    fill = col.of(box_id)
    attrs = box_attrs(rp, box_id, side, step)
    bad = "data-bad" in attrs
    # a box whose move broke a rule is see-through, so an overlap shows what lies beneath
    opacity = 0.7 if bad and side == "target" else 1.0
    items: list[Item] = [rect(left, top, w, h, fill=fill, stroke=palette.OUTLINE, width=1, cls="body", opacity=opacity)]
    if step is not None and step.tipped:
        t = max(4.0, min(10.0, w / 3, h / 3))
        items.append(Poly([(left + w - t, top), (left + w, top), (left + w, top + t)], fill=palette.OUTLINE, stroke="none", width=0, cls="tip-mark"))
    if side == "source" and box_id in rp.graph:
        for face in sorted(rp.graph.nodes[box_id]["wall_blocked"]):
            x = left + 2 if face == "left" else left + w - 2
            items.append(Line((x, top + 1), (x, top + h - 1), palette.WALL, 3.5, dash="3 2", cls="wall-block"))
    if bad:
        items.append(rect(left + 1.5, top + 1.5, max(w - 3, 1), max(h - 3, 1), fill="none", stroke=palette.VIOLATION, width=2.5, dash="4 2", cls="violation"))
    body = Group(items, attrs, box_title(rp, box_id, side))
    label = Group(_labels(box_id, step, left, top, w, h, palette.text_colour(fill)), {**attrs, "class": "label"})
    return body, label


def _labels(box_id: str, step: Optional[Step], left: float, top: float, w: float, h: float, colour: str) -> list[Item]:
    cx, cy = left + w / 2, top + h / 2
    tag = f"#{step.number}" if step is not None else ""
    both = fit_label(box_id, w - 4, h / 2 - 1), fit_label(tag, w - 4, h / 2 - 1)
    if tag and both[0] and both[1]:
        size = min(both)
        return [Text(cx, cy - size * 0.6, box_id, size, colour), Text(cx, cy + size * 0.6, tag, size, colour, weight="bold")]
    for text in (tag, box_id) if tag else (box_id,):
        size = fit_label(text, w - 4, h - 2)
        if size:
            return [Text(cx, cy, text, size, colour, weight="bold" if text == tag else "normal")]
    return []


def _edges(rp: Replay, frame: Frame) -> list[Item]:
    """Lift edges (transitive reduction: the direct ones) and side edges over the source."""
    inst = rp.instance
    g = rp.graph
    lifts = nx.transitive_reduction(lift_graph(g))
    out: list[Item] = []
    for j, i in sorted(lifts.edges):
        bj, bi = inst.box(j), inst.box(i)
        lo, hi = max(bj.at[0], bi.at[0]), min(bj.at[0] + bj.size[0], bi.at[0] + bi.size[0])
        x = (lo + hi) / 2
        a = frame.px(x, bj.at[1] + bj.size[1] * 0.3)
        b = frame.px(x, bi.at[1] + bi.size[1] * 0.7)
        out.append(edge_group(rp, j, i, "lift", Line(a, b, palette.EDGE_LIFT, 1.4, arrow="solid", cls="lift", halo=True)))
    for j, i, kind in sorted(g.edges(data="kind")):
        if kind == "lift":
            continue
        bj, bi = inst.box(j), inst.box(i)
        a, b = side_arrow(bj.at, bj.size, bi.at, bi.size, kind, 22.0 / frame.s)
        line = Line(frame.px(*a), frame.px(*b), palette.EDGE_SIDE, 1.4, dash="4 2", arrow="open", cls="side", halo=True)
        out.append(edge_group(rp, j, i, kind, line))
    return out


def _height_mark(rp: Replay, frame: Frame, key: Key, width: float) -> Group:
    """A dashed line at the container's packed height; the page moves it with the slider."""
    final = rp.steps[-1].heights.get(key, 0.0)
    y = frame.px(0, final)[1]
    x0, x1 = frame.px(0, 0)[0], frame.px(width, 0)[0]
    items: list[Item] = [Line((x0 - 6, y), (x1 + 6, y), "#000000", 1, dash="2 2", cls="height-line"),
                         Text(x1 + 8, y, num(round(final, 6)), 10, anchor="start", cls="height-text")]
    return Group(items, height_mark_attrs(rp, key, lambda h: frame.px(0, h)[1] - y))


def _shelf(rp: Replay) -> list[tuple[float, float]]:
    """Positions for boxes with no source: rows left to right, rows stacked upwards, gaps between."""
    boxes = rp.instance.boxes
    gap = max(max(b.size) for b in boxes) * 0.1
    rows = max(1, round(math.sqrt(len(boxes)) / 2))
    row_len = max(max(b.size[0] for b in boxes), sum(b.size[0] + gap for b in boxes) / rows)
    out, x, y, tallest = [], 0.0, 0.0, 0.0
    for b in boxes:
        if x > 0 and x + b.size[0] > row_len:
            x, y, tallest = 0.0, y + tallest + gap, 0.0
        out.append((x, y))
        x += b.size[0] + gap
        tallest = max(tallest, b.size[1])
    return out


def _shelf_size(rp: Replay) -> tuple[float, float]:
    at = _shelf(rp)
    boxes = rp.instance.boxes
    return (max(a[0] + b.size[0] for a, b in zip(at, boxes)), max(a[1] + b.size[1] for a, b in zip(at, boxes)) * 1.04)
