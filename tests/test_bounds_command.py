"""`stackproof bound`: the table, the JSON document, infeasibility and bad input."""
from __future__ import annotations

import json
import subprocess
import sys

import pytest

from instances.demo import demo_instance_path
from tests.worked_examples import FORMATS_INSTANCE


def run(*args):
    return subprocess.run([sys.executable, "-m", "benchmarks.cli", "bound", *map(str, args)],
                          capture_output=True, text=True)


def test_json_has_best_and_every_bound_and_stays_below_the_worked_optimum(tmp_path):
    # FORMATS.md worked example: optimum 5 (invented example, argued by hand there).
    path = tmp_path / "inst.json"
    path.write_text(json.dumps(FORMATS_INSTANCE))
    out = run(path, "--json")
    assert out.returncode == 0, out.stderr
    doc = json.loads(out.stdout)
    assert set(doc) == {"best", "bounds"}
    assert doc["best"] == max(doc["bounds"].values())
    assert {"area", "tallest", "stack", "dff", "bar", "order"} <= set(doc["bounds"])
    assert all(v <= 5 for v in doc["bounds"].values())
    # area: (4*2 + 3*3 + 6*1) / 6 = 23/6, rounded up (integer sizes): 4
    assert doc["bounds"]["area"] == 4


def test_table_lists_each_bound_with_its_time_and_the_best():
    out = run(demo_instance_path())
    assert out.returncode == 0, out.stderr
    lines = out.stdout.splitlines()
    assert lines[0].split()[:3] == ["bound", "value", "seconds"]
    names = [line.split()[0] for line in lines[1:-1]]
    assert "area" in names and "bar" in names
    assert lines[-1].split()[0] == "best"


def test_infeasible_instance_prints_null_in_json(tmp_path):
    doc = json.loads(json.dumps(FORMATS_INSTANCE))
    doc["boxes"][2]["orientations"] = ["xy"]  # crate-c (6 wide) may not be tipped
    doc["containers"][0]["size"] = [5, None]  # and the van is 5 wide
    path = tmp_path / "wide.json"
    path.write_text(json.dumps(doc))
    out = run(path, "--json")
    assert out.returncode == 0, out.stderr
    got = json.loads(out.stdout)
    assert got == {"best": None, "bounds": {"fit": None}}
    table = run(path)
    assert "infeasible" in table.stdout


@pytest.mark.parametrize("content, field", [("{", "$"), (json.dumps({**FORMATS_INSTANCE, "dim": 4}), "dim")])
def test_bad_input_names_the_file_and_field_and_exits_2(tmp_path, content, field):
    path = tmp_path / "bad.json"
    path.write_text(content)
    out = run(path)
    assert out.returncode == 2
    assert str(path) in out.stderr and field in out.stderr
    assert "Traceback" not in out.stderr


def test_reasons_speak_of_area_in_2d_and_volume_in_3d(tmp_path):
    out = run(demo_instance_path())  # the demo is 2D
    reasons = {line.split()[0]: line for line in out.stdout.splitlines()[1:-1]}
    assert "area " in reasons["area"] and "width" in reasons["area"] and "volume" not in out.stdout
    doc = {"format": "stackproof/instance", "version": 1, "dim": 3,
           "boxes": [{"id": "a", "size": [2, 2, 2]}, {"id": "b", "size": [2, 2, 1]}], "containers": [{"id": "c", "size": [2, 2, None]}]}
    path = tmp_path / "cube.json"
    path.write_text(json.dumps(doc))
    line = next(x for x in run(path).stdout.splitlines() if x.startswith("area"))
    assert "volume 12 of 2 boxes over the base of c" in line
