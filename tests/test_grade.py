"""Tests of benchmarks.grade and the `grade` command: plans from a folder or a heuristic,
checked, and measured against proven optima, known optima or bounds."""
from __future__ import annotations

import json
import sys
from dataclasses import replace

import pytest

from benchmarks.cli import main
from benchmarks.grade import Graded, gap_to, gold_value, summary
from benchmarks.published import published_folder
from benchmarks.runner import RunConfig, run_bench
from benchmarks.suites import load_suite
from instances.drop import drop_plan
from instances.io import plan_to_dict, write_json
from instances.model import Known
from tests.test_bench import DROP, strip_instance, write_suite

FOLDER = published_folder()
needs_folder = pytest.mark.skipif(FOLDER is None, reason="shared/benchmarks/published not found (set STACKPROOF_SHARED)")

BAD_HEURISTIC = '''
from instances.model import Move, Plan

def stack_all_at_origin(instance):
    """Every box at the origin of the first container: overlapping, so infeasible."""
    c = instance.containers[0].id
    return Plan(instance.name, tuple(Move(b.id, (c, 0), b.orientations[0], (0.0,) * instance.dim) for b in instance.boxes))

def explode(instance):
    raise RuntimeError("no idea")

def peek(instance):
    assert instance.known is None, "a heuristic must not see the known optimum"
    from instances.drop import drop_plan
    return drop_plan(instance)
'''


@pytest.fixture
def user_module(tmp_path, monkeypatch):
    (tmp_path / "my_heuristics.py").write_text(BAD_HEURISTIC)
    monkeypatch.chdir(tmp_path)
    monkeypatch.syspath_prepend(str(tmp_path))
    yield "my_heuristics"
    sys.modules.pop("my_heuristics", None)


def test_an_infeasible_heuristic_is_graded_as_such_with_reasons(tmp_path, user_module, capsys):
    suite = write_suite(tmp_path / "s", [strip_instance("two", [(1, 1)] * 2, 2)])
    code = main(["grade", str(suite), "--heuristic", f"{user_module}:stack_all_at_origin", "--json"])
    assert code == 1
    doc = json.loads(capsys.readouterr().out)
    (row,) = doc["instances"]
    assert row["name"] == "two" and row["feasible"] is False and row["objective"] is None
    assert any("overlap" in v for v in row["violations"])
    assert doc["summary"]["feasible_share"] == 0.0 and doc["summary"]["infeasible_reasons"].get("overlap", 0) >= 1
    # the table form lists the reasons too
    assert main(["grade", str(suite), "--heuristic", f"{user_module}:stack_all_at_origin"]) == 1
    out = capsys.readouterr().out
    assert "overlap" in out and "feasible 0/1" in out


def test_a_raising_heuristic_is_graded_not_crashed(tmp_path, user_module, capsys):
    suite = write_suite(tmp_path / "s", [strip_instance("two", [(1, 1)] * 2, 2)])
    assert main(["grade", str(suite), "--heuristic", f"{user_module}:explode", "--json"]) == 1
    (row,) = json.loads(capsys.readouterr().out)["instances"]
    assert row["violations"] == ["heuristic raised RuntimeError: no idea"]
    assert main(["grade", str(suite), "--heuristic", "no_such_module_here:f"]) == 2


@needs_folder
def test_drop_heuristic_on_published_instances_against_known_optima(user_module, capsys):
    # known optima: Hopper & Turton (2001) EJOR 128(1) Table 1 (C1 height 20); Martello & Vigo (1998)
    # (ngcut4 bins 2, from memory per manifest).
    code = main(["grade", str(FOLDER), "--filter", "C1_1", "--filter", "ngcut4_bin", "--heuristic", f"{user_module}:peek", "--json"])
    doc = json.loads(capsys.readouterr().out)
    assert code == 0
    rows = {r["name"]: r for r in doc["instances"]}
    assert rows["C1_1"]["gold"] == 20 and rows["C1_1"]["gold_kind"] == "known"
    assert rows["ngcut4_bin"]["gold"] == 2
    for r in rows.values():
        assert r["feasible"] and r["objective"] >= r["gold"]
        assert r["gap"] == pytest.approx((r["objective"] - r["gold"]) / r["objective"])
    s = doc["summary"]
    assert s["feasible_share"] == 1.0 and s["max_gap"] == max(r["gap"] for r in rows.values())
    assert s["optimal"] == sum(r["objective"] == r["gold"] for r in rows.values())


def test_plans_folder_matched_by_file_name(tmp_path, capsys):
    a, b = strip_instance("alpha", [(1, 1)] * 2, 2), strip_instance("beta", [(2, 1)] * 2, 2)
    suite = write_suite(tmp_path / "s", [a, b])
    plans = tmp_path / "plans"
    write_json(plans / "alpha.json", plan_to_dict(drop_plan(a)))
    assert main(["grade", str(suite), "--plans", str(plans), "--json"]) == 1
    doc = json.loads(capsys.readouterr().out)
    rows = {r["name"]: r for r in doc["instances"]}
    assert rows["alpha"]["feasible"] and rows["alpha"]["objective"] == 1
    assert not rows["beta"]["feasible"] and "no plan file" in rows["beta"]["violations"][0]
    (plans / "beta.json").write_text("{not json")
    assert main(["grade", str(suite), "--plans", str(plans), "--json"]) == 1
    rows = {r["name"]: r for r in json.loads(capsys.readouterr().out)["instances"]}
    assert "unreadable plan" in rows["beta"]["violations"][0]


def test_gold_kinds_proven_then_known_then_bound(tmp_path):
    # invented: 3 boxes 1x1 in width 2 -> area bound ceil(1.5) = 2, drop reaches 2: proven.
    plain = strip_instance("plain", [(1, 1)] * 3, 2)
    suite = write_suite(tmp_path / "s", [plain])
    (entry,) = load_suite(suite)
    value, kind = gold_value(entry, [])
    assert kind == "bound" and value <= 2  # bounds.best (or no bound at all) without gold records
    gold = run_bench([entry], RunConfig(time_limit=2, solver=DROP), results=tmp_path / "g.jsonl", progress=False)
    assert gold_value(entry, gold) == (2.0, "proven")
    kentry = replace(entry, instance=replace(entry.instance, known=Known(source="by hand: area bound 2 is reached", optimum=2)))
    assert gold_value(kentry, []) == (2, "known")
    assert gold_value(kentry, gold) == (2.0, "proven")  # a proven optimum in the gold file comes first


def test_gap_and_summary_numbers():
    assert gap_to(4.0, 3.0) == 0.25 and gap_to(0.0, 0.0) == 0.0
    suite_rows = [Graded("s/a", "a", True, [], 4.0, 3.0, "known", 0.25), Graded("s/b", "b", True, [], 2.0, 2.0, "proven", 0.0),
                  Graded("s/c", "c", False, ["move 0 (x): overlap: boxes overlap"], None, 1.0, "bound", None)]
    s = summary(suite_rows)
    assert s["feasible"] == 2 and s["optimal"] == 1 and s["mean_gap"] == 0.125 and s["median_gap"] == 0.125
    assert s["max_gap"] == 0.25 and s["infeasible_reasons"] == {"overlap": 1}


def test_several_heuristics_are_compared_with_a_profile(tmp_path, user_module, capsys):
    suite = write_suite(tmp_path / "s", [strip_instance("two", [(1, 1)] * 2, 2), strip_instance("four", [(1, 2)] * 4, 2)])
    out = tmp_path / "rep"
    code = main(["grade", str(suite), "--heuristic", f"{user_module}:peek", "--heuristic", f"{user_module}:stack_all_at_origin",
                 "--report", str(out), "--json"])
    assert code == 1
    doc = json.loads(capsys.readouterr().out)
    assert [s["source"] for s in doc["sources"]] == [f"{user_module}:peek", f"{user_module}:stack_all_at_origin"]
    assert doc["sources"][0]["summary"]["feasible"] == 2 and doc["sources"][1]["summary"]["feasible"] == 0
    page = (out / "grade.html").read_text()
    assert page.count("data:image/png;base64,") == 2 and "Performance profile" in page
    assert len((out / "grade.csv").read_text().splitlines()) == 5
    assert main(["grade", str(suite)]) == 2


def test_a_folder_written_by_generate_grades_its_plans_not_its_instances(tmp_path, capsys):
    # the plan-file naming rule: NAME.plan.json before NAME.json, and an instance file is never a plan
    folder = tmp_path / "set"
    assert main(["generate", "planted", "--dim", "2", "--boxes", "5", "--count", "2", "-o", str(folder)]) == 0
    capsys.readouterr()
    assert main(["grade", str(folder), "--plans", str(folder), "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)["instances"]
    assert len(rows) == 2 and all(r["feasible"] and r["gold_kind"] == "known" and r["gap"] == 0 for r in rows)
    for plan in folder.glob("*.plan.json"):
        plan.unlink()
    assert main(["grade", str(folder), "--plans", str(folder), "--json"]) == 1
    rows = json.loads(capsys.readouterr().out)["instances"]
    assert all("no plan file" in r["violations"][0] for r in rows)  # the instance X.json is not taken as X's plan


def test_the_table_shows_gaps_in_percent_and_moves_from_1(tmp_path, capsys):
    a = strip_instance("alpha", [(1, 1)] * 2, 2, Known("invented: two unit squares side by side", 1.0))
    suite = write_suite(tmp_path / "s", [a])
    plans = tmp_path / "plans"
    tall = plan_to_dict(drop_plan(a))
    tall["moves"][1]["at"] = [0, 1]  # stacked: height 2 against the known 1, a 50 % gap
    write_json(plans / "alpha.plan.json", tall)
    assert main(["grade", str(suite), "--plans", str(plans)]) == 0
    out = capsys.readouterr().out
    assert "50.00%" in out and "gap mean 50.00%" in out
    tall["moves"][1]["at"] = [0, 0]  # now both at the origin: move 2 overlaps move 1
    write_json(plans / "alpha.plan.json", tall)
    assert main(["grade", str(suite), "--plans", str(plans), "--json"]) == 1
    row = json.loads(capsys.readouterr().out)["instances"][0]
    assert row["violations"][0].startswith("move 2 (box b1): overlap")
