"""`stackproof draw` (benchmarks.commands.draw): outputs by extension, bad input exits 2, atomic writes."""
from __future__ import annotations

import copy
import json
import subprocess
import sys
import xml.etree.ElementTree as ET

import pytest

import instances.draw as drawing
from benchmarks.cli import main
from instances.demo import demo_instance_path, demo_plan_path
from instances.io import instance_from_dict
from tests.worked_examples import FORMATS_INSTANCE, FORMATS_PLAN


def run(*args):
    return subprocess.run([sys.executable, "-m", "benchmarks.cli", "draw", *map(str, args)], capture_output=True, text=True)


def test_draws_svg_png_html(tmp_path):
    for ext in ("svg", "png", "html"):
        out = tmp_path / f"demo.{ext}"
        r = run(demo_instance_path(), demo_plan_path(), "-o", out, "--color-by", "step")
        assert r.returncode == 0, r.stderr
        assert out.stat().st_size > 1000
    ET.parse(tmp_path / "demo.svg")
    assert (tmp_path / "demo.png").read_bytes()[:4] == b"\x89PNG"
    assert (tmp_path / "demo.html").read_text(encoding="utf-8").startswith("<!DOCTYPE html>")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["demo.html", "demo.png", "demo.svg"]


def test_instance_alone_and_a_result_document(tmp_path, capsys):
    inst = tmp_path / "i.json"
    inst.write_text(json.dumps(FORMATS_INSTANCE))
    assert main(["draw", str(inst), "-o", str(tmp_path / "i.svg")]) == 0
    result = {"format": "stackproof/result", "version": 1, "instance": "dock-7-morning", "status": "feasible",
              "objective": 5, "bound": 4, "gap": 0.2, "plan": FORMATS_PLAN, "checked": True}
    res = tmp_path / "r.json"
    res.write_text(json.dumps(result))
    assert main(["draw", str(inst), str(res), "-o", str(tmp_path / "r.html")]) == 0
    html = (tmp_path / "r.html").read_text(encoding="utf-8")
    assert "crate-c" in html and "status feasible, objective 5, bound 4, gap 20.00%" in html


def test_bad_extension_exits_2_naming_the_option(tmp_path):
    r = run(demo_instance_path(), "-o", tmp_path / "x.pdf")
    assert r.returncode == 2
    assert "x.pdf" in r.stderr and "-o" in r.stderr and ".svg" in r.stderr
    assert "Traceback" not in r.stderr
    assert not list(tmp_path.iterdir())


def test_bad_instance_exits_2_naming_file_and_field_and_leaves_output_alone(tmp_path):
    doc = copy.deepcopy(FORMATS_INSTANCE)
    doc["boxes"][0]["size"] = [4, -2]
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(doc))
    out = tmp_path / "old.svg"
    out.write_text("previous picture")
    r = run(bad, "-o", out)
    assert r.returncode == 2
    assert "bad.json" in r.stderr and "boxes[0].size" in r.stderr
    assert out.read_text() == "previous picture"


def test_plan_naming_an_unknown_box_exits_2(tmp_path):
    inst = tmp_path / "i.json"
    inst.write_text(json.dumps(FORMATS_INSTANCE))
    plan = copy.deepcopy(FORMATS_PLAN)
    plan["moves"][0]["box"] = "crate-z"
    p = tmp_path / "p.json"
    p.write_text(json.dumps(plan))
    r = run(inst, p, "-o", tmp_path / "o.svg")
    assert r.returncode == 2 and "p.json" in r.stderr and "crate-z" in r.stderr
    assert not (tmp_path / "o.svg").exists()


def test_a_failed_render_leaves_no_file_and_no_temp(tmp_path, monkeypatch):
    inst = instance_from_dict(copy.deepcopy(FORMATS_INSTANCE))
    out = tmp_path / "keep.svg"
    out.write_text("previous")

    def broken(*a, **k):
        raise RuntimeError("disk full")

    monkeypatch.setattr(drawing.os, "fsync", broken)
    with pytest.raises(RuntimeError):
        drawing.draw(inst, None, out)
    assert out.read_text() == "previous"
    assert [p.name for p in tmp_path.iterdir()] == ["keep.svg"]
