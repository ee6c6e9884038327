"""The 3D view: isometric pictures of the source and the targets, boxes shaded by face.

The viewer looks from the front-right-top, along (1, -1, 1): the top, front and right faces
show. Projection (isometric, common practice): screen right = (x + y) / sqrt 2, screen up =
(y - x + 2 z) / sqrt 6. Boxes are drawn back to front in a depth order (a topological order of
"drawn before" between boxes whose outlines overlap), so no face is wrongly hidden.
"""
from __future__ import annotations

import math
from typing import Optional, Sequence

import networkx as nx

from ..precedence import lift_graph
from . import palette
from .timeline import Replay, Step
from .shapes import Group, Item, Line, Poly, Scene, Text, fit_label
from .views import (HEADER, Colours, box_attrs, box_title, choose_scale, colours, container_size, edge_group, flow,
                    height_mark_attrs, legend, num, panel_name, panel_width, side_arrow, source_size)

VIEW = (1.0, -1.0, 1.0)  # towards the viewer
R2, R6 = math.sqrt(2.0), math.sqrt(6.0)
Vec3 = Sequence[float]


def project(p: Vec3) -> tuple[float, float]:
    """Isometric screen coordinates (right, up) of the world point p, at scale 1."""
    x, y, z = p
    return (x + y) / R2, (y - x + 2 * z) / R6


def silhouette(lo: Vec3, hi: Vec3) -> list[tuple[float, float]]:
    """The outline of a box on screen (a convex hexagon, at scale 1)."""
    (x0, y0, z0), (x1, y1, z1) = lo, hi
    corners = [(x0, y0, z0), (x1, y0, z0), (x1, y1, z0), (x1, y1, z1), (x0, y1, z1), (x0, y0, z1)]
    return [project(c) for c in corners]


def _convex_overlap(a: list[tuple[float, float]], b: list[tuple[float, float]], eps: float) -> bool:
    """Separating-axis test: do two convex polygons overlap by more than `eps`?"""
    for poly in (a, b):
        for k in range(len(poly)):
            (x0, y0), (x1, y1) = poly[k], poly[(k + 1) % len(poly)]
            nx_, ny_ = y0 - y1, x1 - x0
            norm = math.hypot(nx_, ny_)
            if norm == 0:
                continue
            pa = [(px * nx_ + py * ny_) / norm for px, py in a]
            pb = [(px * nx_ + py * ny_) / norm for px, py in b]
            if max(pa) <= min(pb) + eps or max(pb) <= min(pa) + eps:
                return False
    return True


def depth_order(boxes: Sequence[tuple[Vec3, Vec3]], tol: float = 1e-9) -> list[int]:
    """Indices of `boxes` ((lo, hi) corners) in back-to-front drawing order.

    For two boxes whose outlines overlap, an axis on which they are apart says which is nearer
    the viewer; the order is a topological sort of those relations (ties by distance from the
    viewer). Overlapping boxes (an infeasible plan) or a cycle fall back to that distance.
    """
    n = len(boxes)
    key = [sum(v * (l + h) / 2 for v, l, h in zip(VIEW, lo, hi)) for lo, hi in boxes]
    outlines = [silhouette(lo, hi) for lo, hi in boxes]
    spans = [(min(p[0] for p in o), max(p[0] for p in o), min(p[1] for p in o), max(p[1] for p in o)) for o in outlines]
    by_left = sorted(range(n), key=lambda i: spans[i][0])
    g = nx.DiGraph()
    g.add_nodes_from(range(n))
    for pos, a in enumerate(by_left):  # sweep on screen x: only outlines that share an x range can overlap
        for b in by_left[pos + 1:]:
            if spans[b][0] >= spans[a][1]:
                break
            if spans[b][2] >= spans[a][3] or spans[a][2] >= spans[b][3]:
                continue
            if not _convex_overlap(outlines[a], outlines[b], 1e-9):
                continue
            (la, ha), (lb, hb) = boxes[a], boxes[b]
            for k in range(3):
                if ha[k] <= lb[k] + tol:  # a lies below b on axis k
                    g.add_edge(a, b) if VIEW[k] > 0 else g.add_edge(b, a)
                    break
                if hb[k] <= la[k] + tol:
                    g.add_edge(b, a) if VIEW[k] > 0 else g.add_edge(a, b)
                    break
    try:
        return list(nx.lexicographical_topological_sort(g, key=lambda i: (key[i], i)))
    except nx.NetworkXUnfeasible:
        return sorted(range(n), key=lambda i: (key[i], i))


class Frame:
    """Maps world points of one panel to pixels: isometric projection, scale, offset."""

    def __init__(self, x: float, y: float, scale: float, size: Vec3):
        xs = [project(c)[0] for c in _corners((0, 0, 0), size)]
        ys = [project(c)[1] for c in _corners((0, 0, 0), size)]
        self.x0, self.ytop, self.s = x - min(xs) * scale, y + HEADER + max(ys) * scale, scale
        self.left, self.top = x, y

    def px(self, p: Vec3) -> tuple[float, float]:
        u, v = project(p)
        return self.x0 + u * self.s, self.ytop - v * self.s


def panel_extent(size: Vec3) -> tuple[float, float]:
    """Width and height of a panel's projection at scale 1."""
    pts = [project(c) for c in _corners((0, 0, 0), size)]
    return max(p[0] for p in pts) - min(p[0] for p in pts), max(p[1] for p in pts) - min(p[1] for p in pts)


def _corners(lo: Vec3, hi: Vec3) -> list[tuple[float, float, float]]:
    return [(x, y, z) for x in (lo[0], hi[0]) for y in (lo[1], hi[1]) for z in (lo[2], hi[2])]


def scene(rp: Replay, color_by: str = "destination") -> Scene:
    """The whole 3D picture of `rp`: source (or the boxes laid out) and the target containers."""
    inst = rp.instance
    col = colours(rp, color_by)
    panels: list[tuple[str, object, tuple[float, ...], bool, list]] = []  # kind, key, size, open, contents
    if inst.source is not None:
        size, open_top = source_size(inst)
        contents = [(b.id, b.at, b.size, rp.step_for(b.id), "source") for b in inst.boxes]
        panels.append(("source", None, size, open_top, contents))
    elif not rp.steps:
        contents, size = _shelf(rp)
        panels.append(("given", None, size, True, contents))
    if rp.steps:
        for key in rp.keys:
            size, open_top = container_size(inst, rp, key)
            contents = [(s.move.box, s.move.at, s.extents, s, "target") for s in rp.steps
                        if s.key == key and s.extents is not None]
            panels.append(("target", key, size, open_top, contents))
    else:
        for c in inst.containers:
            size, open_top = container_size(inst, rp, (c.id, 0))
            panels.append(("type", (c.id, c.count), size, open_top, []))
    extents = [panel_extent(p[2]) for p in panels]
    scale = choose_scale([e[0] for e in extents], [e[1] for e in extents])
    sizes = [(panel_width(panel_name(p[0], p[1], p[3]), e[0] * scale), e[1] * scale + HEADER) for p, e in zip(panels, extents)]
    corners, width, height = flow(sizes)
    items: list[Item] = []
    overlay: list[Item] = []
    for (x, y), (kind, key, size, open_top, contents) in zip(corners, panels):
        frame = Frame(x, y, scale, size)
        back, front = _outline(frame, kind, key, size, open_top)
        items.append(back)
        boxes = [(at, tuple(a + e for a, e in zip(at, ext))) for _, at, ext, _, _ in contents]
        for n in depth_order(boxes, inst.rules.tolerance):
            box_id, at, ext, step, side = contents[n]
            items.extend(_box(rp, col, frame, box_id, boxes[n][0], boxes[n][1], side, step))
        items.append(front)
        if kind == "target":
            items.append(_height_mark(rp, frame, key, size))
        if kind == "source":
            overlay.extend(_edges(rp, frame))
    keys, key_h = legend(col, rp, 20.0, height + 14, max(width - 40, 600.0), edges=inst.source is not None)
    return Scene(max(width, 640.0), height + 14 + key_h + 16, items + overlay + keys, inst.name or "instance")


def _outline(frame: Frame, kind: str, key, size: Vec3, open_top: bool) -> tuple[Group, Group]:
    """The container drawn behind the boxes (floor, back edges) and in front of them (front edges)."""
    X, Y, Z = size
    P = frame.px
    floor = Poly([P((0, 0, 0)), P((X, 0, 0)), P((X, Y, 0)), P((0, Y, 0))], fill="#F2F2F2", stroke="#444444", width=1.2, cls="floor")
    back = [floor, Line(P((0, Y, 0)), P((0, Y, Z)), "#888888", 1), Line(P((0, Y, 0)), P((X, Y, 0)), "#444444", 1.2),
            Line(P((0, 0, 0)), P((0, Y, 0)), "#444444", 1.2)]
    rim_dash = "4 3" if open_top else None
    front = [Line(P((X, 0, 0)), P((X, 0, Z)), "#888888", 1, dash="2 3"), Line(P((0, 0, 0)), P((0, 0, Z)), "#888888", 1, dash="2 3"),
             Line(P((X, Y, 0)), P((X, Y, Z)), "#888888", 1, dash="2 3")]
    rim = [(0, 0, Z), (X, 0, Z), (X, Y, Z), (0, Y, Z)]
    for a, b in zip(rim, rim[1:] + rim[:1]):
        front.append(Line(P(a), P(b), "#888888", 1, dash=rim_dash or "2 3"))
    name = panel_name(kind, key, open_top)
    back.append(Text(frame.left, frame.top + HEADER / 2, name, 12, anchor="start", weight="bold", cls="panel-title"))
    panel = "source" if kind in ("source", "given") else f"{key[0]}#{key[1]}"
    return Group(back, {"class": "panel", "data-panel": panel}), Group(front, {"class": "panel-front", "data-panel": panel})


def _height_mark(rp: Replay, frame: Frame, key, size: Vec3) -> Group:
    """A dashed rim around the container at its packed height; the page moves it with the slider."""
    X, Y, _ = size
    h = rp.steps[-1].heights.get(key, 0.0)
    rim = [frame.px(p) for p in ((0, 0, h), (X, 0, h), (X, Y, h), (0, Y, h))]
    items: list[Item] = [Line(a, b, "#000000", 1.2, dash="2 2", cls="height-line") for a, b in zip(rim, rim[1:] + rim[:1])]
    x, y = rim[2]
    items.append(Text(x + 6, y, num(round(h, 6)), 10, anchor="start", cls="height-text"))
    base = frame.px((0, 0, h))[1]
    return Group(items, height_mark_attrs(rp, key, lambda z: frame.px((0, 0, z))[1] - base))


def _box(rp: Replay, col: Colours, frame: Frame, box_id: str, lo: Vec3, hi: Vec3, side: str, step: Optional[Step]) -> list[Group]:
    """The faces, marks and labels of one box on one side, as one group (its labels on top)."""
    (x0, y0, z0), (x1, y1, z1) = lo, hi
    P = frame.px
    fill = col.of(box_id)
    top = [P((x0, y0, z1)), P((x1, y0, z1)), P((x1, y1, z1)), P((x0, y1, z1))]
    front = [P((x0, y0, z0)), P((x1, y0, z0)), P((x1, y0, z1)), P((x0, y0, z1))]
    right = [P((x1, y0, z0)), P((x1, y1, z0)), P((x1, y1, z1)), P((x1, y0, z1))]
    attrs = box_attrs(rp, box_id, side, step)
    items: list[Item] = [Poly(front, fill=fill, stroke=palette.OUTLINE, width=0.8, cls="body"),
                         Poly(right, fill=palette.shade(fill, 0.72), stroke=palette.OUTLINE, width=0.8, cls="face"),
                         Poly(top, fill=palette.mix(fill, "#FFFFFF", 0.35), stroke=palette.OUTLINE, width=0.8, cls="face")]
    if step is not None and step.tipped:
        c = P((x1, y0, z1))
        t = max(6.0, min(14.0, (x1 - x0) * frame.s / 2, (y1 - y0) * frame.s / 2))
        a, b = P((x0, y0, z1)), P((x1, y1, z1))
        pa = _toward(c, a, t)
        pb = _toward(c, b, t)
        items.append(Poly([c, pa, pb], fill=palette.OUTLINE, stroke="none", width=0, cls="tip-mark"))
    if side == "source" and box_id in rp.graph:
        edges = {"left": ((x0, y0, z1), (x0, y1, z1)), "right": ((x1, y0, z1), (x1, y1, z1)),
                 "front": ((x0, y0, z1), (x1, y0, z1)), "back": ((x0, y1, z1), (x1, y1, z1))}
        for face in sorted(rp.graph.nodes[box_id]["wall_blocked"]):
            a, b = edges[face]
            items.append(Line(P(a), P(b), palette.WALL, 2.5, dash="2 3", cls="wall-block"))
    if "data-bad" in attrs:
        items.append(Poly(front, fill="none", stroke=palette.VIOLATION, width=2.5, dash="4 2", cls="violation"))
        items.append(Poly(top, fill="none", stroke=palette.VIOLATION, width=2.5, dash="4 2", cls="violation"))
    body = Group(items, attrs, box_title(rp, box_id, side))
    s = frame.s
    dx, dy, dz = (x1 - x0) * s, (y1 - y0) * s, (z1 - z0) * s
    labels: list[Item] = []
    if step is not None:
        tag = f"#{step.number}"
        size = fit_label(tag, min(dx, dy) * 0.9, min(dx, dy) * 0.45)
        if size:
            cx = sum(p[0] for p in top) / 4
            cy = sum(p[1] for p in top) / 4
            labels.append(Text(cx, cy, tag, size, palette.text_colour(palette.mix(fill, "#FFFFFF", 0.35)), weight="bold"))
    size = fit_label(box_id, dx * 0.6, dz * 0.55)
    if size:
        cx = sum(p[0] for p in front) / 4
        cy = sum(p[1] for p in front) / 4
        labels.append(Text(cx, cy, box_id, size, palette.text_colour(fill)))
    return [body, Group(labels, {**attrs, "class": "label"})]


def _toward(a: tuple[float, float], b: tuple[float, float], t: float) -> tuple[float, float]:
    d = math.hypot(b[0] - a[0], b[1] - a[1]) or 1.0
    f = min(t / d, 0.45)
    return a[0] + (b[0] - a[0]) * f, a[1] + (b[1] - a[1]) * f


def _centre(b) -> tuple[float, float, float]:
    return tuple(a + s / 2 for a, s in zip(b.at, b.size))  # type: ignore[return-value]


def _edges(rp: Replay, frame: Frame) -> list[Item]:
    """Precedence edges over the source: direct lift edges solid, side edges dashed."""
    inst = rp.instance
    lifts = nx.transitive_reduction(lift_graph(rp.graph))
    out: list[Item] = []
    for j, i in sorted(lifts.edges):
        bj, bi = inst.box(j), inst.box(i)
        a = list(_centre(bj))
        b = list(_centre(bi))
        for k in (0, 1):  # run the arrow through the middle of the shared footprint
            lo, hi = max(bj.at[k], bi.at[k]), min(bj.at[k] + bj.size[k], bi.at[k] + bi.size[k])
            a[k] = b[k] = (lo + hi) / 2
        out.append(edge_group(rp, j, i, "lift", Line(frame.px(a), frame.px(b), palette.EDGE_LIFT, 1.4, arrow="solid", cls="lift", halo=True)))
    for j, i, kind in sorted(rp.graph.edges(data="kind")):
        if kind == "lift":
            continue
        bj, bi = inst.box(j), inst.box(i)
        a, b = side_arrow(bj.at, bj.size, bi.at, bi.size, kind, 22.0 / frame.s)
        line = Line(frame.px(a), frame.px(b), palette.EDGE_SIDE, 1.4, dash="4 2", arrow="open", cls="side", halo=True)
        out.append(edge_group(rp, j, i, kind, line))
    return out


def _shelf(rp: Replay):
    """Boxes with no source, laid out in rows on the floor (x along rows, rows along y)."""
    boxes = rp.instance.boxes
    gap = max(max(b.size) for b in boxes) * 0.15
    row_len = max(max(b.size[0] for b in boxes), sum(b.size[0] + gap for b in boxes) / max(1, round(math.sqrt(len(boxes)))))
    contents, x, y, depth, width = [], 0.0, 0.0, 0.0, 0.0
    for b in boxes:
        if x > 0 and x + b.size[0] > row_len:
            x, y, depth = 0.0, y + depth + gap, 0.0
        contents.append((b.id, (x, y, 0.0), b.size, None, "source"))
        width = max(width, x + b.size[0])
        x += b.size[0] + gap
        depth = max(depth, b.size[1])
    size = (width, y + depth, max(b.size[2] for b in boxes) * 1.08)
    return contents, size
