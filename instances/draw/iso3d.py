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
from ..model import Result
from .timeline import Replay
from .shapes import LINE, SMALLEST, Group, Item, Line, Poly, Scene, Text, text_width
from .views import (GAP, HEADER, MAX_ROW, TITLE, Colours, Content, Labels, Notes, Panel, base_panels, box_attrs,
                    box_title, colours, edge_group, flow, ghost_attrs, heading, height_mark_attrs, layout, legend, lift_arrows,
                    move_table, num, panel_width, side_arrows, smallest_side, title_lines)

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
    """Maps world points of one panel (heights `lo`..`hi` shown) to pixels: isometric projection, scale, offset."""

    def __init__(self, x: float, y: float, scale: float, size: Vec3, lo: float = 0.0):
        xs = [project(c)[0] for c in _corners((0, 0, 0), size)]
        ys = [project(c)[1] for c in _corners((0, 0, 0), size)]
        self.x0, self.ytop, self.s = x - min(xs) * scale, y + HEADER + max(ys) * scale, scale
        self.left, self.top, self.lo = x, y, lo

    def px(self, p: Vec3) -> tuple[float, float]:
        u, v = project((p[0], p[1], p[2] - self.lo))
        return self.x0 + u * self.s, self.ytop - v * self.s


def panel_extent(size: Vec3) -> tuple[float, float]:
    """Width and height of a panel's projection at scale 1."""
    pts = [project(c) for c in _corners((0, 0, 0), size)]
    return max(p[0] for p in pts) - min(p[0] for p in pts), max(p[1] for p in pts) - min(p[1] for p in pts)


def _corners(lo: Vec3, hi: Vec3) -> list[tuple[float, float, float]]:
    return [(x, y, z) for x in (lo[0], hi[0]) for y in (lo[1], hi[1]) for z in (lo[2], hi[2])]


def scene(rp: Replay, color_by: str = "destination", result: Optional[Result] = None) -> Scene:
    """The whole 3D picture of `rp`: source (or the boxes laid out), the target containers, and a
    table of the moves (the order of boxes hidden behind others reads there)."""
    inst = rp.instance
    col = colours(rp, color_by)
    scale, panels = layout(base_panels(rp, _shelf), panel_extent, smallest_side(rp))
    sizes = [(panel_width(p.name, panel_extent(p.shown)[0] * scale), panel_extent(p.shown)[1] * scale + HEADER) for p in panels]
    corners, width, height = flow(sizes)
    items: list[Item] = []
    overlay: list[Item] = []
    labels = Labels()
    notes = Notes(moves=bool(rp.steps), cut=any(p.part for p in panels), ghosts=any(p.ghosts for p in panels))
    frames: list[Frame] = []
    where: dict[str, int] = {}
    for n, ((x, y), p) in enumerate(zip(corners, panels)):
        frame = Frame(x, y, scale, p.shown, p.lo)
        frames.append(frame)
        back, front = _outline(frame, p)
        items.append(back)
        drawn = [(c, False) for c in p.contents] + [(g, True) for g in p.ghosts]
        boxes = [(c.at, tuple(a + e for a, e in zip(c.at, c.ext))) for c, _ in drawn]
        order = depth_order(boxes, inst.rules.tolerance)
        hulls = [silhouette(*boxes[k]) for k in order]
        for rank, k in enumerate(order):
            c, ghost = drawn[k]
            if ghost:
                items.append(_ghost(frame, *boxes[k], c))
                continue
            nearer = [_to_px(frame, h) for h in hulls[rank + 1:]]
            body, label = _box(rp, col, frame, c, boxes[k][0], boxes[k][1], nearer)
            items += [body, labels.add(label)]
            if c.side == "source":
                where[c.box] = n
            notes.tips = notes.tips or (c.step is not None and c.step.tipped)
        items.append(front)
        if p.kind == "target":
            items.append(_height_mark(rp, frame, p))
    if inst.source is not None:
        overlay.extend(_edges(rp, frames, where, labels))
        notes.edges = True
    notes.labels, notes.unlabelled = len(labels.groups), labels.unlabelled()
    table: list[Item] = []
    if rp.steps:
        tx, ty = (width + GAP, 20.0 + TITLE) if width + GAP + 420 <= MAX_ROW + 200 else (20.0, height + GAP)
        table, tw, th = move_table(rp, tx, ty, max(height - ty, 600.0), max(width, MAX_ROW) - tx)
        width, height = max(width, tx + tw + 20), max(height, ty + th)
        notes.extra.append("The move table lists every move (boxes hidden behind others included); "
                           "at = lowest corner (x, y, z) in the container.")
    keys, key_h = legend(col, rp, 20.0, height + 14, max(width - 40, 600.0), notes)
    return Scene(max(width, 640.0), height + 14 + key_h + 16, heading(rp, result) + items + overlay + table + keys,
                 title_lines(rp, result)[0])


def _to_px(frame: Frame, hull) -> list[tuple[float, float]]:
    """A silhouette at scale 1 (from `silhouette`) in the frame's pixels."""
    _, v0 = project((0, 0, frame.lo))
    return [(frame.x0 + u * frame.s, frame.ytop - (v - v0) * frame.s) for u, v in hull]


def _outline(frame: Frame, p: Panel) -> tuple[Group, Group]:
    """The container drawn behind the boxes (floor, back edges) and in front of them (front edges)."""
    X, Y, _ = p.size
    lo, Z = p.lo, p.top
    P = frame.px
    last = p.part is None or p.part[0] == p.part[1]
    floor_style = {"stroke": "#444444", "width": 1.2} if lo == 0 else {"stroke": "#888888", "width": 1.0, "dash": "1 3"}
    floor = Poly([P((0, 0, lo)), P((X, 0, lo)), P((X, Y, lo)), P((0, Y, lo))], fill="#F2F2F2", cls="floor", **floor_style)
    back = [floor, Line(P((0, Y, lo)), P((0, Y, Z)), "#888888", 1), Line(P((0, Y, lo)), P((X, Y, lo)), "#444444", 1.2),
            Line(P((0, 0, lo)), P((0, Y, lo)), "#444444", 1.2)]
    rim_dash = "4 3" if p.open_top and last else ("1 3" if not last else None)
    front = [Line(P((X, 0, lo)), P((X, 0, Z)), "#888888", 1, dash="2 3"), Line(P((0, 0, lo)), P((0, 0, Z)), "#888888", 1, dash="2 3"),
             Line(P((X, Y, lo)), P((X, Y, Z)), "#888888", 1, dash="2 3")]
    rim = [(0, 0, Z), (X, 0, Z), (X, Y, Z), (0, Y, Z)]
    for a, b in zip(rim, rim[1:] + rim[:1]):
        front.append(Line(P(a), P(b), "#888888", 1, dash=rim_dash or "2 3"))
    if p.part is not None:  # where this part's cut lies
        x, y = P((0, 0, p.start))
        back += [Line((x - 4, y), (x, y), "#555555", 1, cls="cut"),
                 Text(x - 5, y, num(round(p.start, 6)), 9, "#555555", anchor="end", cls="cut-text")]
    back.append(Text(frame.left, frame.top + HEADER / 2, p.name, 12, anchor="start", weight="bold", cls="panel-title"))
    return Group(back, {"class": "panel", "data-panel": p.data_id}), Group(front, {"class": "panel-front", "data-panel": p.data_id})


def _height_mark(rp: Replay, frame: Frame, p: Panel) -> Group:
    """A dashed rim around the container at its packed height; the page moves it with the slider."""
    X, Y, _ = p.size
    h = rp.steps[-1].heights.get(p.key, 0.0)  # type: ignore[arg-type]
    rim = [frame.px(q) for q in ((0, 0, h), (X, 0, h), (X, Y, h), (0, Y, h))]
    items: list[Item] = [Line(a, b, "#000000", 1.2, dash="2 2", cls="height-line") for a, b in zip(rim, rim[1:] + rim[:1])]
    x, y = rim[2]
    items.append(Text(x + 6, y, num(round(h, 6)), 10, anchor="start", cls="height-text"))
    base = frame.px((0, 0, h))[1]
    return Group(items, height_mark_attrs(rp, p, lambda z: frame.px((0, 0, z))[1] - base))


def _faces(frame: Frame, lo: Vec3, hi: Vec3):
    (x0, y0, z0), (x1, y1, z1) = lo, hi
    P = frame.px
    top = [P((x0, y0, z1)), P((x1, y0, z1)), P((x1, y1, z1)), P((x0, y1, z1))]
    front = [P((x0, y0, z0)), P((x1, y0, z0)), P((x1, y0, z1)), P((x0, y0, z1))]
    right = [P((x1, y0, z0)), P((x1, y1, z0)), P((x1, y1, z1)), P((x1, y0, z1))]
    return top, front, right


def _ghost(frame: Frame, lo: Vec3, hi: Vec3, c: Content) -> Group:
    """The part of a box drawn in another part of this container: faint faces, no label."""
    top, front, right = _faces(frame, lo, hi)
    polys: list[Item] = [Poly(f, fill=palette.GHOST, stroke=palette.GHOST_EDGE, width=0.7, dash="2 2", cls="ghost") for f in (front, right, top)]
    return Group(polys, ghost_attrs(c))


def _box(rp: Replay, col: Colours, frame: Frame, c: Content, lo: Vec3, hi: Vec3, nearer: list) -> tuple[Group, Group]:
    """The faces and marks of one box on one side, and its labels (move number on the top face,
    id on the front face), each kept inside its face and clear of nearer boxes and the tip mark."""
    box_id, side, step = c.box, c.side, c.step
    (x0, y0, z0), (x1, y1, z1) = lo, hi
    P = frame.px
    fill = col.of(box_id)
    top, front, right = _faces(frame, lo, hi)
    attrs = box_attrs(rp, box_id, side, step)
    items: list[Item] = [Poly(front, fill=fill, stroke=palette.OUTLINE, width=0.8, cls="body"),
                         Poly(right, fill=palette.shade(fill, 0.72), stroke=palette.OUTLINE, width=0.8, cls="face"),
                         Poly(top, fill=palette.mix(fill, "#FFFFFF", 0.35), stroke=palette.OUTLINE, width=0.8, cls="face")]
    obstacles = list(nearer)
    if step is not None and step.tipped:
        # in the corner nearest the viewer, on the top face or, when the box is shallow, the front face
        corner, along = P((x1, y0, z1)), P((x0, y0, z1))
        other = max((P((x1, y1, z1)), P((x1, y0, z0))), key=lambda q: math.dist(corner, q))
        t = max(10.0, min(18.0, 0.5 * math.dist(corner, along), 0.5 * math.dist(corner, other)))
        mark = [corner, _toward(corner, along, t), _toward(corner, other, t)]
        items.append(Poly(mark, fill=palette.OUTLINE, stroke="none", width=0, cls="tip-mark"))
        obstacles.append(mark)
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
    # the move number on the top face; where that is hidden, under the id on the front face
    number = [] if step is None else face_label([(str(step.number), True)], top, obstacles,
                                                 palette.text_colour(palette.mix(fill, "#FFFFFF", 0.35)))
    ink = palette.text_colour(fill)
    if step is not None and not number:
        front_text = (face_label([(box_id, False), (str(step.number), True)], front, obstacles, ink)
                      or face_label([(str(step.number), True)], front, obstacles, ink))
    else:
        front_text = face_label([(box_id, False)], front, obstacles, ink)
    return body, Group(number + front_text, {**attrs, "class": "label"})


def face_label(lines: list[tuple[str, bool]], face: list[tuple[float, float]], obstacles: list, colour: str) -> list[Item]:
    """Lines of text (text, bold) stacked at the centre of a (convex) face, as large as fits inside
    it (13 px at most) and off every obstacle polygon; nothing when under 7 px would be needed."""
    cx, cy = sum(p[0] for p in face) / len(face), sum(p[1] for p in face) / len(face)
    em = max(text_width(text, 1.0, bold) for text, bold in lines)
    size = 13.0
    while size >= SMALLEST:
        w, h = em * size + 2, size * LINE * len(lines)
        box = [(cx - w / 2, cy - h / 2), (cx + w / 2, cy - h / 2), (cx + w / 2, cy + h / 2), (cx - w / 2, cy + h / 2)]
        if all(_inside(q, face) for q in box) and not any(_convex_overlap(box, o, 0.0) for o in obstacles if _near(box, o)):
            top = cy - h / 2 + size * LINE / 2
            return [Text(cx, top + n * size * LINE, text, size, colour, weight="bold" if bold else "normal")
                    for n, (text, bold) in enumerate(lines)]
        size -= 0.5
    return []


def _inside(q: tuple[float, float], poly: list[tuple[float, float]]) -> bool:
    """Is point q inside the convex polygon (either winding)?"""
    sign = 0.0
    for k in range(len(poly)):
        (x0, y0), (x1, y1) = poly[k], poly[(k + 1) % len(poly)]
        cross = (x1 - x0) * (q[1] - y0) - (y1 - y0) * (q[0] - x0)
        if abs(cross) < 1e-9:
            continue
        if sign == 0.0:
            sign = cross
        elif (cross > 0) != (sign > 0):
            return False
    return True


def _near(a: list, b: list) -> bool:
    return not (max(p[0] for p in a) < min(p[0] for p in b) or max(p[0] for p in b) < min(p[0] for p in a) or
                max(p[1] for p in a) < min(p[1] for p in b) or max(p[1] for p in b) < min(p[1] for p in a))


def _toward(a: tuple[float, float], b: tuple[float, float], t: float) -> tuple[float, float]:
    d = math.hypot(b[0] - a[0], b[1] - a[1]) or 1.0
    f = min(t / d, 0.45)
    return a[0] + (b[0] - a[0]) * f, a[1] + (b[1] - a[1]) * f


def _edges(rp: Replay, frames: list[Frame], where: dict[str, int], labels: Labels) -> list[Item]:
    """Precedence edges over the source, each a short arrow where the two boxes meet, routed off
    the labels: direct lift edges solid, side edges dashed."""
    inst = rp.instance
    lifts = nx.transitive_reduction(lift_graph(rp.graph))
    out: list[Item] = []
    for j, i in sorted(lifts.edges):
        bj, bi = inst.box(j), inst.box(i)
        frame = frames[where[j]]
        cands = [(frame.px(a), frame.px(b[:2] + (max(b[2], frame.lo),)))
                 for a, b in lift_arrows(bj.at, bj.size, bi.at, bi.size, 14.0 / frame.s)]
        a, b = labels.route(cands)
        out.append(edge_group(rp, j, i, "lift", Line(a, b, palette.EDGE_LIFT, 1.4, arrow="solid", cls="lift", halo=True)))
    for j, i, kind in sorted(rp.graph.edges(data="kind")):
        if kind == "lift":
            continue
        bj, bi = inst.box(j), inst.box(i)
        frame = frames[where[j] if bj.at[-1] >= bi.at[-1] else where[i]]
        cands = [(frame.px(a), frame.px(b)) for a, b in side_arrows(bj.at, bj.size, bi.at, bi.size, kind, 22.0 / frame.s)]
        a, b = labels.route(cands)
        out.append(edge_group(rp, j, i, kind, Line(a, b, palette.EDGE_SIDE, 1.4, dash="4 2", arrow="open", cls="side", halo=True)))
    return out


def _shelf(rp: Replay) -> tuple[list[Content], tuple[float, float, float]]:
    """Boxes with no source, laid out in rows on the floor (x along rows, rows along y)."""
    boxes = rp.instance.boxes
    gap = max(max(b.size) for b in boxes) * 0.15
    row_len = max(max(b.size[0] for b in boxes), sum(b.size[0] + gap for b in boxes) / max(1, round(math.sqrt(len(boxes)))))
    contents, x, y, depth, width = [], 0.0, 0.0, 0.0, 0.0
    for b in boxes:
        if x > 0 and x + b.size[0] > row_len:
            x, y, depth = 0.0, y + depth + gap, 0.0
        contents.append(Content(b.id, (x, y, 0.0), tuple(b.size), None, "source"))
        width = max(width, x + b.size[0])
        x += b.size[0] + gap
        depth = max(depth, b.size[1])
    size = (width, y + depth, max(b.size[2] for b in boxes) * 1.08)
    return contents, size
