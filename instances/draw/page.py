"""The step-through page: one self-contained HTML file that replays a plan move by move.

A slider (and the keys left/right) steps through the moves: the source loses boxes, the
targets fill, each tip says which face pair it needed and which faces were free, the running
heights move, and an infeasible plan's violations appear at the move where they occur.
No network, no external scripts or fonts: the picture is inline SVG, the data inline JSON.
Open `page.html#step=K` to start at move K.
"""
from __future__ import annotations

import json
from html import escape
from typing import Optional

import networkx as nx

from ..checker import objective_value
from ..model import FACES, Instance, Plan, Result
from ..precedence import face_blockers, lift_graph
from .timeline import Replay, grip_text, replay
from .svg import to_svg
from .views import container_label, num, plural, title_lines


def page_html(instance: Instance, plan: Optional[Plan] = None, color_by: str = "destination",
              result: Optional[Result] = None) -> str:
    """The whole page as text; `result`, when given, adds what the solver claimed (status, bound, gap)."""
    from . import scene_of

    rp = replay(instance, plan)
    picture = to_svg(scene_of(rp, color_by, result), standalone=False)
    data = json.dumps(page_data(rp), ensure_ascii=False, separators=(",", ":"))
    data = data.replace("&", "\\u0026").replace("<", "\\u003c").replace(">", "\\u003e")
    title = escape(instance.name or "instance")
    headline = escape(" — ".join(title_lines(rp, result)))
    n = len(rp.steps)
    controls = ""
    if rp.plan is not None:
        controls = f"""<section id="controls" aria-label="step through the plan">
<button type="button" id="prev" title="previous move (left arrow)">&#9664;</button>
<input type="range" id="slider" min="0" max="{n}" value="0" step="1" aria-label="move">
<button type="button" id="next" title="next move (right arrow)">&#9654;</button>
<button type="button" id="play">play</button>
<span id="step-label">start</span>
<span class="counts">in the source: <output id="count-source">?</output>, packed: <output id="count-target">?</output></span>
</section>"""
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{headline}</title>
<style>{_CSS}</style>
</head>
<body>
<header><h1>{title}</h1><p id="summary">{escape(summary(rp))}</p>{claims_html(result)}</header>
{controls}
<section id="info" aria-live="polite"><div id="move"></div><div id="violations"></div></section>
<div id="picture">{picture}</div>
<section id="graph"><h2>Precedence</h2>{graph_html(rp)}</section>
<script type="application/json" id="replay-data">{data}</script>
<script>{_JS}</script>
</body>
</html>
"""


def summary(rp: Replay) -> str:
    inst = rp.instance
    parts = [f"{inst.dim}D, {len(inst.boxes)} boxes, {plural(sum(c.count for c in inst.containers), 'target container')}",
             f"objective: {inst.objective.minimise}" + (f" then {inst.objective.then}" if inst.objective.then != "none" else "")]
    if rp.report is None:
        parts.append("no plan: the instance and its precedence graph")
    elif rp.report.feasible:
        parts.append(f"plan feasible (checked), objective {num(rp.report.objective)}, {plural(rp.report.tips, 'tipped box', 'tipped boxes')}")
    else:
        first = min((v.move for v in rp.report.violations if v.move is not None), default=None)
        where = f", first at move {first + 1}" if first is not None else ""
        parts.append(f"plan INFEASIBLE: {plural(len(rp.report.violations), 'violation')}{where}")
    return "; ".join(parts)


def claims_html(result: Optional[Result]) -> str:
    """The solver's own account of the plan; the checker's verdict above is what counts."""
    if result is None:
        return ""
    parts = [f"status {result.status}"]
    for name, value in (("objective", result.objective), ("bound", result.bound)):
        if value is not None:
            parts.append(f"{name} {num(value)}")
    if result.gap is not None:
        parts.append(f"gap {100 * result.gap:.2f}%")
    if result.tiebreak is not None:
        parts.append(f"{result.tiebreak.name} {num(result.tiebreak.value)} ({'proved' if result.tiebreak.proved else 'not proved'})")
    if result.solver is not None:
        parts.append(f"solver {result.solver.backend}")
    notes = "".join(f"<li>{escape(n)}</li>" for n in result.notes)
    return (f"<p id=\"claims\">Result document: {escape(', '.join(parts))}</p>"
            + (f"<ul id=\"notes\">{notes}</ul>" if notes else ""))


def page_data(rp: Replay) -> dict:
    """What the script needs per move (index 0 is the start, before any move)."""
    inst = rp.instance
    moves = []
    for s in rp.steps:
        moves.append({
            "box": s.move.box,
            "container": container_label(s.key),
            "orientation": s.move.orientation,
            "at": [num(v) for v in s.move.at],
            "tip": grip_text(s),
            "tipped": s.tipped,
            "faces": s.faces,
            "heights": [[container_label(k), num(round(s.heights[k], 9))] for k in rp.keys if k in s.heights],
            "objective": num(round(objective_value(inst, s.heights), 9)) if s.heights else "0",
            "violations": [f"{v.rule}: {v.detail}" for v in s.violations],
        })
    final = [f"{v.box}: {v.rule}: {v.detail}" for v in rp.plan_violations]
    return {"moves": moves, "plan_violations": final, "objective": inst.objective.minimise,
            "feasible": None if rp.report is None else rp.report.feasible,
            "boxes": len(inst.boxes)}


def graph_html(rp: Replay) -> str:
    """The precedence graph as a table, one row per box: the boxes directly above it (the
    transitive reduction of the lift edges) and, per side face, the boxes touching it or the wall."""
    inst, g = rp.instance, rp.graph
    if inst.source is None:
        return "<p>No source: every box can be taken at any time, in any orientation.</p>"
    lifts = nx.transitive_reduction(lift_graph(g))
    faces = FACES[inst.dim]
    head = "".join(f"<th>{f} face</th>" for f in faces)
    rows = []
    for b in inst.boxes:
        above = sorted(lifts.predecessors(b.id))
        blockers = face_blockers(g, b.id)
        walls = g.nodes[b.id]["wall_blocked"]
        cells = []
        for f in faces:
            if f in walls:
                cells.append("<td class=\"wall\">wall</td>")
            else:
                cells.append(f"<td>{escape(', '.join(sorted(blockers.get(f, ()))) or 'free')}</td>")
        n_all = len(nx.ancestors(lifts, b.id))
        rows.append(f"<tr class=\"box-row\" data-box=\"{escape(b.id)}\"><td>{escape(b.id)}</td>"
                    f"<td>{escape(', '.join(above)) or '-'}</td><td>{n_all}</td>{''.join(cells)}</tr>")
    note = ("<p>Lift: a box leaves only after every box above it (the ones directly above are listed; "
            "the count includes those above them). A side face is free once the boxes touching it have "
            "left; a face against the source wall is never free." +
            (" Access rule \"none\": any box may be tipped once lifted." if inst.rules.access == "none" else "") + "</p>")
    return (note + f"<table><thead><tr><th>box</th><th>directly above</th><th>above in all</th>{head}</tr></thead><tbody>"
            + "".join(rows) + "</tbody></table>")


_CSS = """
body { font-family: "DejaVu Sans", Verdana, Arial, sans-serif; margin: 16px; color: #111; }
h1 { font-size: 20px; margin: 0 0 4px 0; } h2 { font-size: 16px; }
#summary { margin: 0 0 10px 0; color: #333; }
#controls { display: flex; align-items: center; gap: 8px; flex-wrap: wrap; margin-bottom: 8px; }
#slider { width: min(60vw, 600px); }
#step-label { font-weight: bold; min-width: 9em; }
.counts { color: #333; }
#info { min-height: 5.5em; border: 1px solid #ccc; padding: 6px 10px; margin-bottom: 8px; background: #fafafa; }
#info table { border-collapse: collapse; } #info td { padding: 0 10px 0 0; }
#violations .violation { color: #000; background: #ffe9a8; border-left: 4px solid #000; padding: 2px 6px; margin: 3px 0; }
#picture { overflow: auto; }
#picture svg { max-width: 100%; height: auto; max-height: 85vh; }
#graph table { border-collapse: collapse; font-size: 13px; }
#graph td, #graph th { border: 1px solid #ccc; padding: 2px 6px; text-align: left; }
svg .hidden { display: none; }
svg g.move-row.current text { fill: #0046A0; font-weight: bold; }
svg g.move-row.pending text { fill-opacity: 0.45; }
svg g.box.current > polygon.body, svg g.box.current > polygon.face { stroke: #000; stroke-width: 3px; }
svg g.box.next > polygon.body { stroke: #000; stroke-width: 2.5px; stroke-dasharray: 6 3; }
"""

_JS = r"""
(function () {
  "use strict";
  var data = JSON.parse(document.getElementById("replay-data").textContent);
  var n = data.moves.length;
  var slider = document.getElementById("slider");
  var svg = document.getElementById("drawing");
  var shapes = Array.prototype.slice.call(svg.querySelectorAll("g[data-side]"));
  var edges = Array.prototype.slice.call(svg.querySelectorAll("g.edge"));
  var marks = Array.prototype.slice.call(svg.querySelectorAll("g.height-mark"));
  var rows = Array.prototype.slice.call(svg.querySelectorAll("g.move-row"));
  function el(tag, text, cls) {
    var e = document.createElement(tag);
    if (text !== undefined) e.textContent = text;
    if (cls) e.className = cls;
    return e;
  }
  function setShown(g, on) {
    g.setAttribute("data-shown", on ? "1" : "0");
    if (on) g.classList.remove("hidden"); else g.classList.add("hidden");
  }
  function show(k) {
    k = Math.max(0, Math.min(n, k | 0));
    var inSource = 0, packed = 0;
    shapes.forEach(function (g) {
      var s = +g.getAttribute("data-step");
      var on = g.getAttribute("data-side") === "source" ? (s === 0 || s > k) : (s <= k);
      setShown(g, on);
      if (g.classList.contains("box")) {
        g.classList.toggle("current", k > 0 && s === k && g.getAttribute("data-side") === "target");
        g.classList.toggle("next", s === k + 1 && g.getAttribute("data-side") === "source");
        if (on && g.getAttribute("data-side") === "source") inSource++;
        if (on && g.getAttribute("data-side") === "target") packed++;
      }
    });
    edges.forEach(function (g) {
      var gone = +g.getAttribute("data-gone");
      setShown(g, gone === 0 || gone > k);
    });
    rows.forEach(function (g) {
      var r = +g.getAttribute("data-row");
      g.classList.toggle("current", r === k);
      g.classList.toggle("pending", r > k);
    });
    marks.forEach(function (g) {
      var dy = g.getAttribute("data-dy").split(" "), hs = g.getAttribute("data-h").split(" ");
      if (dy[k] === "-") { g.setAttribute("display", "none"); } else { g.removeAttribute("display"); g.setAttribute("transform", "translate(0," + dy[k] + ")"); }
      var text = g.querySelector("text.height-text");
      if (text) text.textContent = hs[k];
    });
    if (slider) {
      slider.value = String(k);
      slider.setAttribute("aria-valuenow", String(k));
      document.getElementById("step-label").textContent = k === 0 ? "start (move 0 of " + n + ")" : "move " + k + " of " + n;
      document.getElementById("count-source").textContent = String(inSource);
      document.getElementById("count-target").textContent = String(packed);
    }
    info(k);
  }
  function info(k) {
    var box = document.getElementById("move"), viol = document.getElementById("violations");
    box.textContent = ""; viol.textContent = "";
    if (!slider) { box.appendChild(el("p", "No plan given: the picture shows the source arrangement and its precedence graph.")); return; }
    if (k === 0) {
      box.appendChild(el("p", "Start: " + data.boxes + " boxes in the source, nothing packed. Move the slider or press the right arrow."));
    } else {
      var m = data.moves[k - 1];
      box.appendChild(el("p", "Move " + k + ": " + m.box + " to " + m.container + ", orientation " + m.orientation + ", at (" + m.at.join(", ") + ")", "what"));
      box.appendChild(el("p", m.tip, "tip"));
      var faces = Object.keys(m.faces).map(function (f) { return f + ": " + m.faces[f]; }).join("; ");
      if (faces && m.tipped) box.appendChild(el("p", "Faces when it left the source: " + faces, "faces"));
      var t = el("table", undefined, "heights"), row = el("tr");
      row.appendChild(el("td", "running height:"));
      m.heights.forEach(function (h) { row.appendChild(el("td", h[0] + " = " + h[1])); });
      row.appendChild(el("td", "objective (" + data.objective + ") so far = " + m.objective));
      t.appendChild(row); box.appendChild(t);
      m.violations.forEach(function (v) { viol.appendChild(el("div", "Move " + k + " breaks a rule: " + v, "violation")); });
    }
    if (k === n && data.feasible !== null) {
      data.plan_violations.forEach(function (v) { viol.appendChild(el("div", "Plan: " + v, "violation")); });
      box.appendChild(el("p", data.feasible ? "End: the checker accepts the plan." : "End: the checker rejects the plan.", "verdict"));
    }
  }
  var timer = null;
  function stop() { if (timer) { clearInterval(timer); timer = null; document.getElementById("play").textContent = "play"; } }
  if (slider) {
    slider.addEventListener("input", function () { show(+slider.value); });
    document.getElementById("prev").addEventListener("click", function () { stop(); show(+slider.value - 1); });
    document.getElementById("next").addEventListener("click", function () { stop(); show(+slider.value + 1); });
    document.getElementById("play").addEventListener("click", function () {
      if (timer) { stop(); return; }
      if (+slider.value >= n) show(0);
      this.textContent = "pause";
      timer = setInterval(function () { if (+slider.value >= n) stop(); else show(+slider.value + 1); }, 700);
    });
    document.addEventListener("keydown", function (e) {
      if (e.target === slider) return;
      if (e.key === "ArrowRight") { stop(); show(+slider.value + 1); }
      if (e.key === "ArrowLeft") { stop(); show(+slider.value - 1); }
    });
  }
  var match = /(?:^#|&)step=(\d+)/.exec(location.hash);
  if (slider && match) {
    slider.value = match[1];
    slider.dispatchEvent(new Event("input"));
  } else {
    show(0);
  }
})();
"""
