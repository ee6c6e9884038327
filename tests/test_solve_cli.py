"""`stackproof solve`: the demo, result files, exit codes, bad input, summary line."""
from __future__ import annotations

import json

import pytest

from benchmarks.cli import main
from instances.checker import check_plan
from instances.demo import demo_instance_path
from instances.io import read_instance, read_result
from tests.worked_examples import FORMATS_INSTANCE


@pytest.fixture
def formats_file(tmp_path):
    path = tmp_path / "dock.json"
    path.write_text(json.dumps(FORMATS_INSTANCE))
    return path


def test_demo_writes_a_checked_result(tmp_path, capsys):
    out = tmp_path / "demo.result.json"
    assert main(["solve", "--demo", "-o", str(out), "--time-limit", "60"]) == 0
    line = capsys.readouterr().out.strip()
    assert line.startswith("status=optimal") and "gap=0.00%" in line
    result = read_result(out)
    inst = read_instance(demo_instance_path())
    report = check_plan(inst, result.plan)
    assert report.feasible and report.objective == result.objective
    assert result.status == "optimal" and result.checked


def test_result_document_on_stdout_without_output(formats_file, capsys):
    assert main(["solve", str(formats_file), "--time-limit", "20"]) == 0
    captured = capsys.readouterr()
    doc = json.loads(captured.out)
    assert doc["format"] == "stackproof/result" and doc["status"] == "optimal" and doc["objective"] == 5
    assert doc["tiebreak"] == {"name": "tips", "value": 1, "proved": True}
    assert "status=optimal" in captured.err


def test_infeasible_exits_0_with_the_reason(tmp_path, capsys):
    doc = dict(FORMATS_INSTANCE)
    doc["containers"] = [{"id": "van-north", "size": [2, None], "count": 1}]  # crate-c (6 wide) fits only tipped
    doc["boxes"] = [dict(b) for b in doc["boxes"]]
    doc["boxes"][2]["orientations"] = ["xy"]
    path = tmp_path / "narrow.json"
    path.write_text(json.dumps(doc))
    out = tmp_path / "r.json"
    assert main(["solve", str(path), "-o", str(out)]) == 0
    assert "status=infeasible" in capsys.readouterr().out
    assert read_result(out).status == "infeasible"


def test_bad_instance_exits_2_and_writes_nothing(tmp_path, capsys):
    doc = dict(FORMATS_INSTANCE, dim=4)
    path = tmp_path / "bad.json"
    path.write_text(json.dumps(doc))
    out = tmp_path / "r.json"
    assert main(["solve", str(path), "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert "bad.json" in err and "dim" in err
    assert not out.exists()


@pytest.mark.parametrize("args, word", [
    (["--backend", "glpk"], "command line: --backend: must be one of"),
    (["--time-limit", "-1"], "command line: --time-limit: must be a positive"),
    (["--export-model", "m.txt"], "command line: --export-model: file name must end in .lp or .mps"),
])
def test_bad_options_exit_2(formats_file, tmp_path, capsys, args, word):
    out = tmp_path / "r.json"
    assert main(["solve", str(formats_file), "-o", str(out), *args]) == 2
    assert word in capsys.readouterr().err
    assert not out.exists()


def test_instance_and_demo_together_is_bad_input(formats_file, capsys):
    assert main(["solve", str(formats_file), "--demo"]) == 2
    assert main(["solve"]) == 2


def test_unknown_exits_3(formats_file, tmp_path, monkeypatch):
    import milp.pipeline as pipeline
    from milp.backends import Outcome

    monkeypatch.setattr(pipeline, "best_incumbent", lambda *a, **k: None)
    monkeypatch.setattr(pipeline.backends, "run", lambda *a, **k: Outcome("unknown", None, None, 0, 0.01))
    out = tmp_path / "r.json"
    assert main(["solve", str(formats_file), "-o", str(out), "--time-limit", "1"]) == 3
    assert read_result(out).status == "unknown"


def test_error_exits_1(formats_file, tmp_path, monkeypatch):
    import milp.pipeline as pipeline
    from instances.model import Plan

    monkeypatch.setattr(pipeline, "best_incumbent", lambda *a, **k: None)
    monkeypatch.setattr(pipeline, "extract_plan", lambda m: Plan("dock-7-morning", ()))
    out = tmp_path / "r.json"
    assert main(["solve", str(formats_file), "-o", str(out)]) == 1
    assert read_result(out).status == "error"


def test_export_model_and_cbc(formats_file, tmp_path):
    model = tmp_path / "dock.mps"
    out = tmp_path / "r.json"
    assert main(["solve", str(formats_file), "-o", str(out), "--backend", "cbc", "--export-model", str(model),
                 "--seed", "2", "--threads", "1"]) == 0
    assert model.read_text().startswith("*") or "ROWS" in model.read_text()
    result = read_result(out)
    assert result.solver.backend == "cbc" and result.solver.seed == 2 and result.objective == 5


def test_ctrl_c_writes_the_best_checked_plan(tmp_path):
    # A real SIGINT to a real solve of an instance that does not close within the limit
    # (generated strip, n=14, seed 4: measured open after 60 s): exit 0 with a checked plan.
    # stderr is a pseudo-terminal, so the progress line shows when an incumbent exists; the
    # signal is sent then (not after a fixed sleep, which a loaded machine can outrun).
    import os
    import pty
    import re
    import select
    import signal
    import subprocess
    import sys
    import time

    from benchmarks.speed import make_instance
    from instances.io import instance_to_dict, write_json

    inst_path, out = tmp_path / "hard.json", tmp_path / "r.json"
    write_json(inst_path, instance_to_dict(make_instance("strip", 2, 14, 4)))
    master, slave = pty.openpty()
    proc = subprocess.Popen([sys.executable, "-m", "benchmarks.cli", "solve", str(inst_path), "-o", str(out),
                             "--time-limit", "300"], stdout=subprocess.PIPE, stderr=slave,
                            preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))
    os.close(slave)
    seen, deadline = b"", time.monotonic() + 120
    while time.monotonic() < deadline and not re.search(rb"incumbent \d", seen):
        if select.select([master], [], [], 0.5)[0]:
            try:
                seen += os.read(master, 4096)
            except OSError:
                break
    assert re.search(rb"incumbent \d", seen), seen[-500:]
    proc.send_signal(signal.SIGINT)
    t0 = time.time()
    # HiGHS looks at the interrupt flag between phases; its presolve on this model takes ~25 s
    while proc.poll() is None and time.time() - t0 < 200:
        if select.select([master], [], [], 0.5)[0]:
            try:
                os.read(master, 4096)  # keep the terminal drained
            except OSError:
                pass
    os.close(master)
    assert proc.wait(timeout=10) == 0
    assert time.time() - t0 < 150
    result = read_result(out)
    assert result.status in ("feasible", "optimal") and result.checked
    report = check_plan(read_instance(inst_path), result.plan)
    assert report.feasible and report.objective == result.objective


def test_a_bad_output_is_refused_before_the_solve_starts(formats_file, tmp_path, monkeypatch, capsys):
    import milp

    def must_not_run(*a, **k):
        raise AssertionError("the solve ran before the output path was checked")

    monkeypatch.setattr(milp, "solve", must_not_run)
    (tmp_path / "adir").mkdir()
    (tmp_path / "afile").write_text("x")
    for option, path in (("-o", tmp_path / "adir"), ("--export-model", tmp_path / "adir"),
                         ("-o", tmp_path / "afile" / "r.json"), ("--export-model", tmp_path / "afile" / "m.lp")):
        assert main(["solve", str(formats_file), option, str(path)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 4 and "-o: is a folder" in err and "--export-model:" in err


def test_a_result_that_cannot_be_written_after_the_solve_goes_to_stdout(formats_file, tmp_path, monkeypatch, capsys):
    import benchmarks.commands.solve as command

    def fail(path, doc):
        raise OSError(28, "No space left on device", str(path))

    monkeypatch.setattr(command, "write_json", fail)
    assert main(["solve", str(formats_file), "-o", str(tmp_path / "r.json"), "--quiet"]) == 2
    captured = capsys.readouterr()
    assert json.loads(captured.out)["status"] == "optimal"  # the solve is not lost
    assert "no space left on device" in captured.err and "printed to stdout" in captured.err


def test_progress_line_on_a_terminal_only(formats_file, tmp_path, monkeypatch):
    import io
    import sys

    class Terminal(io.StringIO):
        def isatty(self):
            return True

    for quiet, expect in (([], True), (["--quiet"], False)):
        tty = Terminal()
        monkeypatch.setattr(sys, "stderr", tty)
        assert main(["solve", str(formats_file), "-o", str(tmp_path / "r.json"), *quiet]) == 0
        assert ("incumbent" in tty.getvalue()) == expect
        assert ("gap" in tty.getvalue()) == expect
