"""A scripted tour of every command, as a new user would take it from a fresh clone: good runs
end cleanly; every output option, given a path that cannot be written, stops with one line naming
the option and the path, exit 2, no traceback, and nothing written."""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from benchmarks.cli import _command_modules
from instances.demo import demo_instance_path, demo_plan_path
from tests.test_io import readonly_place

REPO = Path(__file__).resolve().parents[1]
DEMO, PLAN = demo_instance_path(), demo_plan_path()
DROP = "tests.test_bench_solvers:drop_solve"


def run(*args, cwd=None):
    env = dict(os.environ, PYTHONPATH=str(REPO))
    return subprocess.run([sys.executable, "-m", "benchmarks.cli", *map(str, args)], capture_output=True, text=True,
                          cwd=cwd, env=env, timeout=300)


def clean(out, code: int = 0):
    assert "Traceback" not in out.stderr + out.stdout, out.stderr
    assert out.returncode == code, out.stderr + out.stdout
    return out


def one_line_error(out, option: str, path) -> str:
    clean(out, 2)
    lines = [line for line in out.stderr.splitlines() if line.strip()]
    assert len(lines) == 1, out.stderr
    assert option in lines[0] and str(path) in lines[0], lines[0]
    return lines[0]


@pytest.fixture(scope="module")
def planted(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("planted")
    clean(run("generate", "planted", "--dim", "2", "--boxes", "5", "--count", "2", "-o", folder))
    return folder


def test_good_tour_of_every_command(tmp_path, planted):
    seen = set()
    out = clean(run("--version"))
    assert out.stdout.startswith("stackproof 0.1")
    clean(run("validate", DEMO)); seen.add("validate")
    assert "edges" in json.loads(clean(run("graph", DEMO)).stdout); seen.add("graph")
    assert clean(run("check", DEMO, PLAN)).stdout.startswith("feasible"); seen.add("check")
    out = clean(run("solve", DEMO, "-o", tmp_path / "out" / "r.json", "--export-model", tmp_path / "out" / "m.lp"))
    assert "status=optimal" in out.stdout and "gap=0.00%" in out.stdout; seen.add("solve")
    assert (tmp_path / "out" / "m.lp").stat().st_size > 0
    clean(run("check", DEMO, tmp_path / "out" / "r.json"))
    out = clean(run("bound", DEMO)); seen.add("bound")
    assert "area" in out.stdout and "volume" not in out.stdout  # the demo is 2D
    clean(run("generate", "random", "--dim", "2", "--boxes", "4", "-o", tmp_path / "gen")); seen.add("generate")
    bench = ["bench", planted, "--solver", DROP, "--time-limit", "5", "--results", tmp_path / "b" / "r.jsonl",
             "--junit", tmp_path / "b" / "j.xml", "--report", tmp_path / "b" / "rep"]
    out = clean(run(*bench)); seen.add("bench")
    assert out.stdout.startswith("2 instances:")
    assert "resuming" in clean(run(*bench)).stderr  # a rerun says it skipped the finished instances
    out = clean(run("grade", planted, "--plans", planted, "--report", tmp_path / "g")); seen.add("grade")
    assert "known" in out.stdout and "0.00%" in out.stdout
    assert sorted(p.name for p in (tmp_path / "g").iterdir()) == ["grade.csv", "grade.html"]
    clean(run("draw", DEMO, PLAN, "-o", tmp_path / "pic.svg")); seen.add("draw")
    assert seen == {m.NAME for m in _command_modules()}  # a new command must join the tour


# (command arguments before the output, option, file name or None for a folder output, arguments after)
OUTPUTS = [
    (["solve", DEMO, "--time-limit", "30"], "-o", "r.json", []),
    (["solve", DEMO, "--time-limit", "30"], "--export-model", "m.lp", []),
    (["draw", DEMO, PLAN], "-o", "p.svg", []),
    (["bench", DEMO, "--solver", DROP, "--time-limit", "5"], "--results", "r.jsonl", []),
    (["bench", DEMO, "--solver", DROP, "--time-limit", "5"], "--junit", "j.xml", []),
    (["bench", DEMO, "--solver", DROP, "--time-limit", "5"], "--report", None, []),
    (["grade", DEMO, "--heuristic", "instances.drop:drop_plan"], "--report", None, []),
    (["generate", "planted", "--dim", "2", "--boxes", "4"], "-o", None, []),
]


@pytest.mark.parametrize("before, option, name, after", OUTPUTS, ids=[f"{o[0][0]} {o[1]}" for o in OUTPUTS])
def test_every_output_that_cannot_be_written_stops_cleanly(tmp_path, before, option, name, after):
    ro = readonly_place(tmp_path)
    work = tmp_path / "work"
    work.mkdir()
    (work / "adir").mkdir()
    (work / "afile").write_text("keep")
    bad = [ro / "missing" / (name or "dir"), ro / (name or "dir")]  # a missing parent in a read-only place; unwritable
    bad.append(work / "adir" if name else work / "afile")  # a folder given as a file; a file given as a folder
    for path in bad:
        one_line_error(run(*before, option, path, *after, cwd=work), option, path)
    assert sorted(p.name for p in work.rglob("*")) == ["adir", "afile"]  # nothing half-written
    assert (work / "afile").read_text() == "keep"


def test_bad_input_on_the_tour_is_one_clear_line(tmp_path, planted):
    other = REPO / "instances" / "demo" / "scenarios" / "bakery-two-rounds.plan.json"
    line = one_line_error(run("check", DEMO, other), "instance", other)
    assert "another instance" in line
    one_line_error(run("bench", planted, "--solver", "no_such_module:solve"), "--solver", "no_such_module")
    one_line_error(run("solve", tmp_path / "missing.json"), "file not found", tmp_path / "missing.json")
