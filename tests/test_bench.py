"""Tests of the benchmark runner (benchmarks.runner, verify, junit, baseline and the `bench` command).

Runner mechanics use the stand-in solvers of tests/test_bench_solvers.py (fast and predictable);
the end-to-end checks against published optima use the real MILP (`milp:solve`).
"""
from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
import xml.etree.ElementTree as ET
from dataclasses import replace
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from benchmarks.baseline import regressions
from benchmarks.cli import main
from benchmarks.published import load_published, published_folder
from benchmarks.results import ResultsFile, is_proven
from benchmarks.runner import RunConfig, run_bench
from benchmarks.suites import load_suite, load_suites, select
from benchmarks.verify import contradictions
from instances.io import instance_to_dict, write_json
from instances.model import Box, ContainerType, Instance, Known, Objective, Rules, Support

REPO = Path(__file__).resolve().parents[1]
FOLDER = published_folder()
needs_folder = pytest.mark.skipif(FOLDER is None, reason="shared/benchmarks/published not found (set STACKPROOF_SHARED)")
DROP = "tests.test_bench_solvers:drop_solve"

try:
    from milp import solve as _milp_solve  # noqa: F401

    HAVE_MILP = True
except ImportError:
    HAVE_MILP = False
needs_milp = pytest.mark.skipif(not HAVE_MILP, reason="milp.solve not available")


def strip_instance(name: str, sizes, width: float, known: Known | None = None) -> Instance:
    """A classic strip instance (invented data for runner mechanics)."""
    return Instance(
        dim=2,
        boxes=tuple(Box(f"b{k}", (float(w), float(h)), ("xy",)) for k, (w, h) in enumerate(sizes)),
        containers=(ContainerType("strip", (float(width), None)),),
        rules=Rules(support=Support("none"), loading="any", access="none", integer_positions=True),
        objective=Objective("height"),
        name=name,
        known=known,
    )


def write_suite(folder: Path, instances) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    for inst in instances:
        write_json(folder / f"{inst.name}.json", instance_to_dict(inst))
    return folder


def small_suite(folder: Path, count: int = 3) -> Path:
    # invented: k boxes 2x1 in a strip of width 2 (drop packs them side by side, height k/2)
    return write_suite(folder, [strip_instance(f"pair{k}", [(1, 1)] * (2 * k), 2) for k in range(1, count + 1)])


def lines(path: Path) -> list[dict]:
    return [json.loads(x) for x in path.read_text().splitlines() if x.strip()]


# ---------------------------------------------------------------- end to end with the MILP


@needs_folder
@needs_milp
def test_published_subset_reaches_the_published_optima(tmp_path):
    # Martello & Vigo (1998) Management Science 44(3), literature table: ngcut4 bins = 2, ngcut7 = 1;
    # Martello, Monaci & Vigo (2003) INFORMS J. Computing 15(3): strip cgcut1 = 23.
    # (All three values recalled from memory by the data curator and proven by own LB = UB, per MANIFEST.json.)
    results, report, junit = tmp_path / "r.jsonl", tmp_path / "rep", tmp_path / "j.xml"
    code = main(["bench", str(FOLDER), "--filter", "ngcut4_bin", "--filter", "ngcut7_bin", "--filter", "cgcut1",
                 "--time-limit", "30", "--results", str(results), "--report", str(report), "--junit", str(junit), "--quiet"])
    assert code == 0
    recs = {r["name"]: r for r in lines(results)}
    assert set(recs) == {"ngcut4_bin", "ngcut7_bin", "cgcut1"}
    expected = {"ngcut4_bin": 2, "ngcut7_bin": 1, "cgcut1": 23}
    for name, r in recs.items():
        assert r["checked"] and r["objective"] == expected[name], r
        assert r["bound"] is None or r["bound"] <= expected[name]
        assert r["contradictions"] == [] and r["problems"] == []
    assert all(is_proven(r) for r in recs.values())
    tree = ET.parse(junit)
    assert len(tree.getroot().findall(".//testcase")) == 3
    assert (report / "summary.md").read_text().count("beasley_ngcut") == 1
    page = (report / "report.html").read_text()
    pages = sorted((report / "plans").glob("*.html")) if (report / "plans").is_dir() else []
    assert page.count(">drawing</a>") == len(pages)  # every drawing written is linked
    for p in pages:
        assert f"href='plans/{p.name}'" in page


@needs_folder
@needs_milp
def test_wrong_known_value_is_a_contradiction_and_exit_1(tmp_path):
    # ngcut4_bin needs 2 bins (Martello & Vigo 1998, from memory per manifest; proven here by the
    # area bound 2 and the MILP): a deliberately wrong known value of 3 must be contradicted.
    entry = load_published(FOLDER, names=["ngcut4_bin"])[0]
    wrong = replace(entry.instance, known=Known(source="deliberately wrong for a test", optimum=3))
    suite = write_suite(tmp_path / "wrong", [wrong])
    results, junit = tmp_path / "r.jsonl", tmp_path / "j.xml"
    code = main(["bench", str(suite), "--time-limit", "20", "--results", str(results), "--junit", str(junit), "--quiet"])
    assert code == 1
    (rec,) = lines(results)
    assert rec["status"] == "optimal" and rec["objective"] == 2
    assert any("differs from the known optimum 3" in c for c in rec["contradictions"])
    assert any("beats the known optimum 3" in c for c in rec["contradictions"])
    failures = ET.parse(junit).getroot().findall(".//failure")
    assert len(failures) == 1 and failures[0].get("type") == "contradiction"


# ---------------------------------------------------------------- verification rules


def test_contradiction_rules():
    inst = strip_instance("x", [(1, 1)], 1, Known(source="test", optimum=5))
    assert contradictions(inst, "optimal", 5.0, 5.0) == []
    assert contradictions(inst, "feasible", 6.0, 4.0) == []
    assert any("differs" in c for c in contradictions(inst, "optimal", 6.0, 6.0))
    assert any("beats" in c for c in contradictions(inst, "feasible", 4.0, 3.0))
    assert any("exceeds" in c for c in contradictions(inst, "feasible", 7.0, 5.5))
    assert any("infeasible" in c for c in contradictions(inst, "infeasible", None, None))
    named = contradictions(inst, "feasible", 6.0, 5.0, {"area": 4.0, "dff": 5.5})
    assert len(named) == 1 and "'dff' = 5.5 exceeds" in named[0]
    none_known = strip_instance("x", [(1, 1)], 1, Known(source="test", infeasible=True))
    assert contradictions(none_known, "infeasible", None, None) == []
    assert contradictions(none_known, "feasible", 3.0, None) != []
    assert contradictions(strip_instance("x", [(1, 1)], 1), "optimal", 1.0, 9.0) == []


@settings(max_examples=200, deadline=None)
@given(opt=st.integers(1, 50), obj=st.one_of(st.none(), st.integers(1, 60)), bound=st.one_of(st.none(), st.integers(0, 60)),
       status=st.sampled_from(["optimal", "feasible", "unknown", "infeasible"]))
def test_contradiction_exactly_when_inconsistent_with_the_known_optimum(opt, obj, bound, status):
    inst = strip_instance("x", [(1, 1)], 1, Known(source="property test", optimum=opt))
    consistent = (
        (obj is None or obj >= opt)
        and (bound is None or bound <= opt)
        and not (status == "optimal" and obj is not None and obj != opt)
        and status != "infeasible"
    )
    assert (contradictions(inst, status, obj, bound) == []) == consistent


def test_wrong_known_with_the_stand_in_solver(tmp_path):
    # invented: 4 unit squares in a strip of width 2: area bound 2 and drop plan of height 2.
    low = strip_instance("low", [(1, 1)] * 4, 2, Known(source="deliberately too low", optimum=1))
    high = strip_instance("high", [(1, 1)] * 4, 2, Known(source="deliberately too high", optimum=3))
    right = strip_instance("right", [(1, 1)] * 4, 2, Known(source="by hand: area bound 2 is reached", optimum=2))
    suite = write_suite(tmp_path / "s", [low, high, right])
    results = tmp_path / "r.jsonl"
    assert main(["bench", str(suite), "--solver", DROP, "--results", str(results), "--quiet"]) == 1
    recs = {r["name"]: r for r in lines(results)}
    assert any("exceeds the known optimum 1" in c for c in recs["low"]["contradictions"])
    assert any("beats the known optimum 3" in c for c in recs["high"]["contradictions"])
    assert recs["right"]["contradictions"] == [] and is_proven(recs["right"])


def test_a_plan_the_checker_rejects_is_unchecked_and_fails(tmp_path):
    suite = small_suite(tmp_path / "s", 1)
    results, junit = tmp_path / "r.jsonl", tmp_path / "j.xml"
    code = main(["bench", str(suite), "--solver", "tests.test_bench_solvers:bogus_solve", "--results", str(results),
                 "--junit", str(junit), "--quiet"])
    assert code == 1
    (rec,) = lines(results)
    assert not rec["checked"] and rec["objective"] is None and rec["claimed_objective"] is not None
    assert any("rejected by the checker" in p for p in rec["problems"]) and rec["violations"]
    assert not is_proven(rec)
    (failure,) = ET.parse(junit).getroot().findall(".//failure")
    assert failure.get("type") == "unchecked"


# ---------------------------------------------------------------- isolation and limits


def test_hung_and_crashing_solves_are_errors_and_the_run_goes_on(tmp_path):
    folder = write_suite(tmp_path / "s", [strip_instance("calm", [(1, 1)] * 2, 2), strip_instance("will-hang", [(1, 1)] * 2, 2)])
    entries = load_suite(folder)
    start = time.monotonic()
    recs = run_bench(entries, RunConfig(time_limit=1, solver="tests.test_bench_solvers:hang_solve", hard_limit=4),
                     results=tmp_path / "r.jsonl", jobs=2, progress=False)
    assert time.monotonic() - start < 30
    by = {r["name"]: r for r in recs}
    assert by["calm"]["status"] == "optimal" and by["calm"]["checked"]
    assert by["will-hang"]["status"] == "error" and "hard wall-clock limit" in by["will-hang"]["notes"][0]
    crash = run_bench(entries[:1], RunConfig(time_limit=1, solver="tests.test_bench_solvers:crash_solve"), progress=False)
    assert crash[0]["status"] == "error" and "deliberate crash" in crash[0]["notes"][0]
    assert len(lines(tmp_path / "r.jsonl")) == 2


def test_records_carry_provenance_and_resume_skips_finished_instances(tmp_path):
    suite = small_suite(tmp_path / "s", 3)
    results = tmp_path / "r.jsonl"
    first = run_bench(load_suite(suite), RunConfig(time_limit=2, solver=DROP), results=results, progress=False)
    assert len(lines(results)) == 3
    for r in first:
        for field in ("hash", "status", "objective", "bound", "gap", "seconds", "solver", "version", "time_limit", "seed", "date", "plan"):
            assert field in r
        assert r["checked"] and r["time_limit"] == 2 and r["solver"] == DROP
    again = run_bench(load_suite(suite), RunConfig(time_limit=2, solver=DROP), results=results, progress=False)
    assert len(lines(results)) == 3 and [r["date"] for r in again] == [r["date"] for r in first]
    # another configuration is another run
    run_bench(load_suite(suite)[:1], RunConfig(time_limit=2, solver=DROP, seed=7), results=results, progress=False)
    assert len(lines(results)) == 4


def test_torn_last_line_is_dropped_on_resume(tmp_path):
    results = tmp_path / "r.jsonl"
    results.write_text('{"run_key": "a", "key": "s/a"}\n{"run_key": "b", "ke')
    assert [r["run_key"] for r in ResultsFile(results).read()] == ["a"]
    assert results.read_text() == '{"run_key": "a", "key": "s/a"}\n'


@settings(max_examples=40, deadline=None)
@given(records=st.lists(st.dictionaries(st.sampled_from(["a", "b", "c"]), st.one_of(st.integers(), st.text(max_size=8))), min_size=1, max_size=4),
       cut=st.floats(0.0, 1.0))
def test_a_file_torn_anywhere_keeps_exactly_its_complete_records(tmp_path_factory, records, cut):
    path = tmp_path_factory.mktemp("torn") / "r.jsonl"
    store = ResultsFile(path)
    for r in records:
        store.append(r)
    data = path.read_bytes()
    at = int(cut * len(data))
    path.write_bytes(data[:at])
    complete = data[:at].count(b"\n")
    assert store.read() == records[:complete]
    store.append({"a": "next"})
    assert store.read() == records[:complete] + [{"a": "next"}]


def test_sigkill_mid_run_then_resume_loses_and_duplicates_nothing(tmp_path):
    suite = small_suite(tmp_path / "s", 5)
    results = tmp_path / "r.jsonl"
    cmd = [sys.executable, "-m", "benchmarks.cli", "bench", str(suite), "--solver", "tests.test_bench_solvers:slow_drop_solve",
           "--results", str(results), "--time-limit", "5", "--quiet"]
    env = dict(os.environ, PYTHONPATH=str(REPO), STACKPROOF_TEST_DELAY="1.0")
    proc = subprocess.Popen(cmd, cwd=REPO, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline and (not results.exists() or len(results.read_text().splitlines()) < 2):
        time.sleep(0.05)
    children = child_pids(proc.pid)
    proc.send_signal(signal.SIGKILL)
    proc.wait()
    assert all_gone(children)  # the solve in flight dies with the runner (no orphans)
    before = results.read_text()
    done_before = len(before.splitlines())
    assert 2 <= done_before < 5
    proc2 = subprocess.run(cmd, cwd=REPO, env=dict(env, STACKPROOF_TEST_DELAY="0"), capture_output=True, text=True, timeout=120)
    assert proc2.returncode == 0, proc2.stderr
    after = results.read_text()
    assert after.startswith(before)  # nothing lost, nothing rewritten
    keys = [r["key"] for r in lines(results)]
    assert len(keys) == 5 and len(set(keys)) == 5  # nothing duplicated


def child_pids(pid: int) -> list[int]:
    """Processes whose parent is `pid` (Linux /proc; empty elsewhere)."""
    out = []
    for stat in Path("/proc").glob("[0-9]*/stat"):
        try:
            fields = stat.read_text().rsplit(")", 1)[1].split()
        except OSError:
            continue
        if int(fields[1]) == pid:
            out.append(int(stat.parent.name))
    return out


def all_gone(pids: list[int], wait: float = 10.0) -> bool:
    deadline = time.monotonic() + wait
    while time.monotonic() < deadline:
        alive = [p for p in pids if Path(f"/proc/{p}").exists() and "Z" not in Path(f"/proc/{p}/stat").read_text().rsplit(")", 1)[1].split()[0]]
        if not alive:
            return True
        time.sleep(0.1)
    return False


@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="needs Linux /proc")
def test_interrupt_stops_the_solves_in_flight(tmp_path):
    suite = write_suite(tmp_path / "s", [strip_instance("a-hang", [(1, 1)] * 2, 2), strip_instance("b-hang", [(1, 1)] * 2, 2)])
    cmd = [sys.executable, "-m", "benchmarks.cli", "bench", str(suite), "--solver", "tests.test_bench_solvers:hang_solve",
           "--jobs", "2", "--hard-limit", "120", "--results", str(tmp_path / "r.jsonl"), "--quiet"]
    proc = subprocess.Popen(cmd, cwd=REPO, env=dict(os.environ, PYTHONPATH=str(REPO)), stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    deadline = time.monotonic() + 30
    while time.monotonic() < deadline and len(child_pids(proc.pid)) < 2:
        time.sleep(0.1)
    children = child_pids(proc.pid)
    assert len(children) == 2
    time.sleep(1.0)
    proc.send_signal(signal.SIGINT)
    proc.wait(timeout=30)
    assert proc.returncode == 130
    assert all_gone(children)
    assert not (tmp_path / "r.jsonl").exists() or (tmp_path / "r.jsonl").read_text() == ""


def test_ctrl_c_prints_no_traceback_and_the_same_command_resumes(tmp_path):
    suite = small_suite(tmp_path / "s", 3)
    results = tmp_path / "r.jsonl"
    cmd = [sys.executable, "-m", "benchmarks.cli", "bench", str(suite), "--solver", "tests.test_bench_solvers:slow_drop_solve",
           "--results", str(results), "--time-limit", "5"]
    env = dict(os.environ, PYTHONPATH=str(REPO), STACKPROOF_TEST_DELAY="2.0")
    proc = subprocess.Popen(cmd, cwd=REPO, env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline and (not results.exists() or not results.read_text().strip()):
        time.sleep(0.05)
    proc.send_signal(signal.SIGINT)
    out, err = proc.communicate(timeout=60)
    assert proc.returncode == 130, err
    assert "Traceback" not in err and "KeyboardInterrupt" not in err
    assert "interrupted" in err and str(results) in err and "resume" in err
    done = len(lines(results))
    assert 1 <= done < 3
    again = subprocess.run(cmd, cwd=REPO, env=dict(env, STACKPROOF_TEST_DELAY="0"), capture_output=True, text=True, timeout=120)
    assert again.returncode == 0, again.stderr
    assert f"{done} of 3 instances already done" in again.stderr  # the resumed run says what it skipped
    assert sorted(r["name"] for r in lines(results)) == ["pair1", "pair2", "pair3"]


def test_a_run_without_any_checked_result_fails(tmp_path, capsys):
    suite = small_suite(tmp_path / "s", 2)
    assert main(["bench", str(suite), "--solver", "tests.test_bench_solvers:crash_solve", "--quiet"]) == 1
    captured = capsys.readouterr()
    assert "no instance produced a checked result" in captured.err and "deliberate crash" in captured.err
    assert main(["bench", str(suite), "--solver", DROP, "--quiet"]) == 0  # the same suite with a working solver passes
    assert main(["bench", str(suite), "--solver", "tests.test_bench_solvers:no_such_function", "--quiet"]) == 2
    assert "--solver: cannot load" in capsys.readouterr().err  # refused before any solve starts


# ---------------------------------------------------------------- Dask


def test_dask_local_cluster_gives_the_same_results_as_jobs_1(tmp_path):
    distributed = pytest.importorskip("distributed")
    suite = small_suite(tmp_path / "s", 3)
    entries = load_suite(suite)
    config = RunConfig(time_limit=2, solver=DROP)
    local = run_bench(entries, config, results=tmp_path / "local.jsonl", jobs=1, progress=False)
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=False, dashboard_address=None) as cluster:
        remote = run_bench(entries, config, results=tmp_path / "dask.jsonl", scheduler=cluster.scheduler_address, progress=False)
    fields = ("key", "hash", "status", "objective", "bound", "gap", "checked", "plan", "contradictions")
    assert [{f: r[f] for f in fields} for r in remote] == [{f: r[f] for f in fields} for r in local]
    assert len(lines(tmp_path / "dask.jsonl")) == 3


# ---------------------------------------------------------------- JUnit, baseline, reports, input errors


def test_junit_parses_with_the_standard_library(tmp_path):
    suite = write_suite(tmp_path / "s", [strip_instance("ok", [(1, 1)] * 2, 2),
                                         strip_instance("wrong", [(1, 1)] * 2, 2, Known(source="too low on purpose", optimum=0.5))])
    junit = tmp_path / "out" / "j.xml"
    assert main(["bench", str(suite), "--solver", DROP, "--junit", str(junit), "--quiet"]) == 1
    root = ET.parse(junit).getroot()
    assert root.tag == "testsuites" and root.get("tests") == "2" and root.get("failures") == "1"
    cases = {c.get("name"): c for c in root.iter("testcase")}
    assert cases["ok"].find("failure") is None and cases["wrong"].find("failure") is not None


def test_baseline_comparison_flags_an_injected_regression(tmp_path):
    suite = small_suite(tmp_path / "s", 3)
    results = tmp_path / "now.jsonl"
    assert main(["bench", str(suite), "--solver", DROP, "--results", str(results), "--quiet"]) == 0
    recs = lines(results)
    # the same file as its own baseline: no regression
    assert regressions(recs, recs) == []
    assert main(["bench", str(suite), "--solver", DROP, "--results", str(results), "--baseline", str(results), "--quiet"]) == 0
    # inject: the baseline had a better plan for pair2 and a proof for pair3 that the current run lacks
    base = [dict(r) for r in recs]
    pair2 = next(r for r in base if r["name"] == "pair2")
    pair2["objective"] = pair2["objective"] - 0.5
    pair3 = next(r for r in base if r["name"] == "pair3")
    current = [dict(r) for r in recs]
    weak = next(r for r in current if r["name"] == "pair3")
    weak.update(status="feasible")
    found = regressions(base, current)
    assert {r.key.split("/")[-1] for r in found} == {"pair2", "pair3"}
    assert pair3["status"] == "optimal"
    baseline = tmp_path / "base.jsonl"
    baseline.write_text("".join(json.dumps(r) + "\n" for r in base))
    assert main(["bench", str(suite), "--solver", DROP, "--results", str(results), "--baseline", str(baseline), "--quiet"]) == 1


def test_report_files(tmp_path):
    suite = small_suite(tmp_path / "s", 2)
    results, out = tmp_path / "r.jsonl", tmp_path / "rep"
    run_bench(load_suite(suite), RunConfig(time_limit=2, solver=DROP, seed=1), results=results, progress=False)
    assert main(["bench", str(suite), "--solver", DROP, "--results", str(results), "--report", str(out),
                 "--baseline", str(results), "--quiet"]) == 0
    summary = (out / "summary.md").read_text()
    assert "| s | 2 | 2 | 2 | 0 | 0 | 0 |" in summary
    import csv

    rows = list(csv.DictReader((out / "results.csv").open()))
    assert len(rows) == 4 and {r["status"] for r in rows} == {"optimal"}
    page = (out / "report.html").read_text()
    assert page.count("data:image/png;base64,") == 3  # time, gaps, and a profile: two configurations
    assert "not load-securing advice" in page


def test_bad_input_exits_2_naming_the_problem(tmp_path, capsys):
    assert main(["bench", str(tmp_path / "absent"), "--quiet"]) == 2
    assert "absent" in capsys.readouterr().err
    suite = small_suite(tmp_path / "s", 1)
    assert main(["bench", str(suite), "--time-limit", "-1"]) == 2
    assert "--time-limit" in capsys.readouterr().err
    assert main(["bench", str(suite), "--filter", "nothing*"]) == 2
    if HAVE_MILP:
        assert main(["bench", str(suite), "--backend", "no-such-backend"]) == 2
        assert "backend" in capsys.readouterr().err
    (tmp_path / "s" / "pair1.json").write_text('{"format": "stackproof/instance", "version": 1, "dim": 2, "boxes": [], "containerz": []}')
    assert main(["bench", str(suite)]) == 2
    assert "containerz" in capsys.readouterr().err


@needs_folder
def test_published_folder_as_a_suite_with_filters_and_shuffle():
    entries = select(load_suites([FOLDER]), ["hopper_turton_2001_C/*"])
    assert [e.name for e in entries] == ["C1_1", "C1_2", "C1_3", "C2_1", "C2_2", "C2_3", "C3_1", "C3_2", "C3_3"]
    from benchmarks.suites import shuffled

    a = shuffled(entries[0].instance, 3)
    assert sorted(a.boxes, key=lambda b: b.id) == sorted(entries[0].instance.boxes, key=lambda b: b.id)
    assert a.boxes != entries[0].instance.boxes and shuffled(entries[0].instance, 3) == a
