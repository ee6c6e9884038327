"""The step-through page (instances.draw.page), loaded in headless Chromium.

The page's script runs in a real browser; the DOM it leaves (--dump-dom) says which boxes are
shown at step k. The step is set through the slider's own input handler (from `#step=k`).
Skips only when no chromium binary is found.
"""
from __future__ import annotations

import copy
import re
import shutil
import subprocess
import tempfile
from html.parser import HTMLParser
from pathlib import Path

import pytest

from instances.checker import check_plan
from instances.demo import demo_instance_path, demo_plan_path
from instances.draw import write_page
from instances.drop import drop_plan
from instances.generate import random_instance
from instances.io import instance_from_dict, plan_from_dict, read_instance, read_plan
from instances.precedence import precedence_graph
from tests.worked_examples import FORMATS_INSTANCE, FORMATS_PLAN

CHROMIUM = next((shutil.which(n) for n in ("chromium", "chromium-browser") if shutil.which(n)), None)
needs_browser = pytest.mark.skipif(CHROMIUM is None, reason="no chromium binary found")
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
         "--disable-component-update", "--disable-sync", "--no-first-run"]


def browser(url: str, *extra: str) -> str:
    with tempfile.TemporaryDirectory() as profile:
        out = subprocess.run([CHROMIUM, *FLAGS, f"--user-data-dir={profile}", *extra, url],
                             capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr[-2000:]
    return out.stdout


class _Dom(HTMLParser):
    """Collects the attributes of every element, and the text under chosen ids."""

    def __init__(self):
        super().__init__()
        self.elements: list[tuple[str, dict]] = []
        self.text: dict[str, str] = {}
        self._open: list[str] = []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.elements.append((tag, a))
        self._open.append(a.get("id", ""))

    def handle_endtag(self, tag):
        if self._open:
            self._open.pop()

    def handle_data(self, data):
        for i in self._open:
            if i:
                self.text[i] = self.text.get(i, "") + data


def dom_at(page: Path, step: int | None = None) -> _Dom:
    url = page.resolve().as_uri() + (f"#step={step}" if step is not None else "")
    d = _Dom()
    d.feed(browser(url, "--dump-dom"))
    return d


def shown(d: _Dom, side: str) -> set[str]:
    return {a["data-box"] for t, a in d.elements if t == "g" and a.get("class", "").split()[:1] == ["box"]
            and a.get("data-side") == side and a.get("data-shown") == "1"}


@pytest.fixture
def demo_page(tmp_path):
    inst, plan = read_instance(demo_instance_path()), read_plan(demo_plan_path())
    return inst, plan, write_page(inst, plan, tmp_path / "demo.html")


def test_page_is_self_contained(demo_page):
    _, _, page = demo_page
    html = page.read_text(encoding="utf-8")
    assert "<script src" not in html and "<link" not in html and "@import" not in html
    urls = set(re.findall(r"(?:https?:)?//[A-Za-z0-9.-]+", html))
    assert urls <= {"http://www.w3.org"}, urls  # only the SVG namespace name, never fetched
    assert "url(http" not in html and "@font-face" not in html


@needs_browser
def test_step_k_shows_the_right_boxes_and_the_slider_moves_them(demo_page):
    inst, plan, page = demo_page
    order = [m.box for m in plan.moves]
    everyone = {b.id for b in inst.boxes}
    for k in (0, 4, len(order)):
        d = dom_at(page, k)
        assert shown(d, "target") == set(order[:k])
        assert shown(d, "source") == everyone - set(order[:k])
        assert d.text["count-source"] == str(len(everyone) - k)
        assert d.text["count-target"] == str(k)
    d = dom_at(page, 4)
    assert "Move 4: " + order[3] in d.text["move"]
    assert any(a.get("id") == "slider" and a.get("aria-valuenow") == "4" for t, a in d.elements if t == "input")


@needs_browser
def test_screenshots_differ_between_steps(demo_page, tmp_path):
    _, plan, page = demo_page
    shots = []
    for k in (0, len(plan.moves)):
        shot = tmp_path / f"s{k}.png"
        browser(page.resolve().as_uri() + f"#step={k}", f"--screenshot={shot}", "--window-size=1200,900")
        shots.append(shot.read_bytes())
    assert len(shots[0]) > 1000 and shots[0] != shots[1]


@needs_browser
def test_tips_report_the_face_pair_and_free_faces(tmp_path):
    inst = instance_from_dict(copy.deepcopy(FORMATS_INSTANCE))
    plan = plan_from_dict(copy.deepcopy(FORMATS_PLAN))
    page = write_page(inst, plan, tmp_path / "w.html")
    d = dom_at(page, 2)
    text = d.text["move"]
    assert "left-right" in text and "free then: right" in text and "left: wall" in text
    assert "van-north[0] = 5" in text  # running height after move 2 (FORMATS.md worked example)


@needs_browser
def test_infeasible_plan_shows_its_violation_at_its_move(tmp_path):
    inst = instance_from_dict(copy.deepcopy(FORMATS_INSTANCE))
    bad = copy.deepcopy(FORMATS_PLAN)
    bad["moves"][0], bad["moves"][1] = bad["moves"][1], bad["moves"][0]  # crate-a before crate-c
    plan = plan_from_dict(bad)
    report = check_plan(inst, plan)
    assert {v.rule for v in report.violations if v.move == 0} >= {"lift-order"}
    page = write_page(inst, plan, tmp_path / "bad.html")
    assert "INFEASIBLE" in page.read_text(encoding="utf-8")
    d = dom_at(page, 1)
    assert "lift-order" in d.text.get("violations", "")
    d = dom_at(page, 3)
    assert "lift-order" not in d.text.get("violations", "")


@needs_browser
def test_page_without_plan_shows_instance_and_graph(tmp_path):
    inst = random_instance(3, 7, 11)
    page = write_page(inst, None, tmp_path / "i.html")
    d = dom_at(page)
    assert not any(a.get("id") == "slider" for _, a in d.elements)
    assert shown(d, "source") == {b.id for b in inst.boxes}
    assert not shown(d, "target")
    rows = [a["data-box"] for t, a in d.elements if t == "tr" and a.get("class") == "box-row"]
    assert rows == [b.id for b in inst.boxes]
    assert "No plan given" in d.text["move"]


@needs_browser
def test_3d_page_steps(tmp_path):
    inst = random_instance(3, 6, 2)
    plan = drop_plan(inst)
    assert plan is not None
    page = write_page(inst, plan, tmp_path / "p3.html")
    d = dom_at(page, 2)
    assert shown(d, "target") == {m.box for m in plan.moves[:2]}


class _Rows(HTMLParser):
    """The cells of every table row of class box-row."""

    def __init__(self):
        super().__init__()
        self.rows: list[list[str]] = []
        self._cell: list[str] | None = None

    def handle_starttag(self, tag, attrs):
        if tag == "tr" and dict(attrs).get("class") == "box-row":
            self.rows.append([])
        elif tag == "td" and self.rows is not None:
            self._cell = []

    def handle_endtag(self, tag):
        if tag == "td" and self._cell is not None and self.rows:
            self.rows[-1].append("".join(self._cell))
            self._cell = None

    def handle_data(self, data):
        if self._cell is not None:
            self._cell.append(data)


def test_precedence_table_matches_the_graph(demo_page):
    """Rows against networkx: direct lift predecessors (transitive reduction), all of them
    (ancestors), and per face the touching boxes or the wall, as `precedence_graph` has them."""
    import networkx as nx

    from instances.precedence import face_blockers, lift_graph

    inst, _, page = demo_page
    g = precedence_graph(inst)
    lifts = lift_graph(g)
    reduced = nx.transitive_reduction(lifts)
    p = _Rows()
    p.feed(page.read_text(encoding="utf-8"))
    assert [r[0] for r in p.rows] == [b.id for b in inst.boxes]
    for box, above, count, left, right in p.rows:
        assert above == (", ".join(sorted(reduced.predecessors(box))) or "-")
        assert int(count) == len(nx.ancestors(lifts, box))
        for face, cell in (("left", left), ("right", right)):
            if face in g.nodes[box]["wall_blocked"]:
                assert cell == "wall"
            else:
                assert cell == (", ".join(sorted(face_blockers(g, box).get(face, ()))) or "free")
