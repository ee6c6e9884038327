"""The front door on good and bad input: exit codes, messages naming file and field, no traceback."""
from __future__ import annotations

import copy
import json
import subprocess
import sys

import pytest

from instances.demo import demo_instance_path, demo_plan_path
from tests.worked_examples import FORMATS_INSTANCE, FORMATS_PLAN


def run(*args):
    return subprocess.run([sys.executable, "-m", "benchmarks.cli", *map(str, args)], capture_output=True, text=True)


@pytest.fixture
def files(tmp_path):
    inst, plan = tmp_path / "inst.json", tmp_path / "plan.json"
    inst.write_text(json.dumps(FORMATS_INSTANCE))
    plan.write_text(json.dumps(FORMATS_PLAN))
    return inst, plan


def test_check_demo_and_worked_example_feasible(files):
    out = run("check", demo_instance_path(), demo_plan_path())
    assert out.returncode == 0, out.stderr
    out = run("check", *files, "--json")
    assert out.returncode == 0
    doc = json.loads(out.stdout)
    assert doc["feasible"] and doc["objective"] == 5 and doc["tips"] == 1


def test_check_infeasible_lists_violations_and_exits_1(files, tmp_path):
    bad = copy.deepcopy(FORMATS_PLAN)
    bad["moves"][2]["at"] = [1, 1]
    p = tmp_path / "bad.json"
    p.write_text(json.dumps(bad))
    out = run("check", files[0], p)
    assert out.returncode == 1
    # the third move of the plan is move 3: moves are numbered from 1 in text and JSON alike
    assert "move 3 (box crate-b): overlap" in out.stdout
    assert "infeasible (1 violation);" in out.stdout
    doc = json.loads(run("check", files[0], p, "--json").stdout)
    assert [(v["move"], v["box"], v["rule"]) for v in doc["violations"]] == [(3, "crate-b", "overlap")]


@pytest.mark.parametrize("doc_change, where", [
    (lambda d: d["moves"][0].update(box="crate-z"), "moves[0].box"),
    (lambda d: d["moves"][0].update(container=["van-south", 0]), "moves[0].container[0]"),
    (lambda d: d["moves"][0].update(container=["van-north", 1]), "moves[0].container[1]"),
    (lambda d: d["moves"][0].update(speed=3), "moves[0].speed"),
])
def test_bad_plans_exit_2_naming_file_and_field(files, tmp_path, doc_change, where):
    bad = copy.deepcopy(FORMATS_PLAN)
    doc_change(bad)
    p = tmp_path / "bad.json"
    p.write_text(json.dumps(bad))
    out = run("check", files[0], p)
    assert out.returncode == 2
    assert f"{p}: {where}:" in out.stderr and "Traceback" not in out.stderr


@pytest.mark.parametrize("text, where", [
    (json.dumps(FORMATS_INSTANCE)[:50], "$: invalid JSON"),
    (json.dumps({**FORMATS_INSTANCE, "colour": "red"}), "colour: unknown key"),
])
def test_validate_bad_instances_exit_2(tmp_path, text, where):
    f = tmp_path / "i.json"
    f.write_text(text)
    out = run("validate", f)
    assert out.returncode == 2 and f"{f}: {where}" in out.stderr and "Traceback" not in out.stderr


def test_validate_and_graph_good_instance(files):
    assert run("validate", files[0]).returncode == 0
    out = run("graph", files[0])
    doc = json.loads(out.stdout)
    assert {"from": "crate-c", "to": "crate-a", "kind": "lift"} in doc["edges"]
    dot = run("graph", files[0], "--format", "dot").stdout
    assert dot.startswith("digraph") and '"crate-c" -> "crate-a"' in dot


def test_every_subcommand_has_help():
    from benchmarks.cli import _command_modules

    for module in _command_modules():
        out = run(module.NAME, "--help")
        assert out.returncode == 0 and "usage:" in out.stdout, module.NAME


def write_result(path, plan, value):
    """An `optimal` result document claiming `value` for `plan` (of the FORMATS.md worked example)."""
    result = {"format": "stackproof/result", "version": 1, "instance": "dock-7-morning", "status": "optimal",
              "objective": value, "bound": value, "gap": 0.0, "plan": plan, "checked": True}
    path.write_text(json.dumps(result))
    return result


def test_check_of_a_result_confirms_its_claims(files, tmp_path):
    r = tmp_path / "result.json"
    result = write_result(r, FORMATS_PLAN, 4)
    out = run("check", files[0], r)
    assert out.returncode == 1 and "claims objective 4, the plan scores 5" in out.stdout
    result["objective"] = result["bound"] = 5
    r.write_text(json.dumps(result))
    assert run("check", files[0], r).returncode == 0


def test_version_names_the_package_version():
    from importlib.metadata import version

    out = run("--version")
    assert out.returncode == 0 and out.stdout.startswith(f"stackproof {version('stackproof')}")


def test_check_of_a_plan_or_result_for_another_instance_says_so_first(files, tmp_path):
    other = dict(copy.deepcopy(FORMATS_PLAN), instance="dock-8-evening")
    p = tmp_path / "other.json"
    p.write_text(json.dumps(other))
    out = run("check", files[0], p)
    assert out.returncode == 2 and out.stdout == ""  # nothing replayed
    assert out.stderr.strip() == (f"stackproof check: {p}: instance: this plan is for another instance: it names "
                                  f"\"dock-8-evening\", but {files[0]} holds \"dock-7-morning\"")
    r = tmp_path / "result.json"
    write_result(r, other, 5)
    out = run("check", files[0], r)
    assert out.returncode == 2 and "plan.instance: this result is for another instance" in out.stderr
