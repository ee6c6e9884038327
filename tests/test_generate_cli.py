"""`stackproof generate` (benchmarks/commands/generate.py): files, manifest, determinism, errors."""
from __future__ import annotations

import json

import pytest

from benchmarks.cli import main
from instances.checker import check_plan
from instances.io import read_instance, read_plan


def _files(folder):
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


def test_planted_writes_instances_plans_and_manifest(tmp_path):
    out = tmp_path / "set"
    rc = main(["generate", "planted", "--dim", "2", "--boxes", "9", "--count", "3", "--seed", "5",
               "--targets", "2", "--tipped", "0.4", "-o", str(out)])
    assert rc == 0
    manifest = json.loads((out / "MANIFEST.json").read_text())
    assert manifest["format"] == "stackproof/generated" and manifest["version"] == 1
    assert manifest["generator"] == "planted" and manifest["parameters"]["targets"] == 2
    assert [e["seed"] for e in manifest["instances"]] == [5, 6, 7]
    for e in manifest["instances"]:
        inst = read_instance(out / e["file"])
        plan = read_plan(out / e["plan"])
        report = check_plan(inst, plan)
        assert report.feasible and report.objective == e["known"] == inst.known.optimum
    assert len(list(out.iterdir())) == 7


def test_random_writes_instances_without_plans(tmp_path):
    out = tmp_path / "r"
    rc = main(["generate", "random", "--dim", "3", "--boxes", "6", "--count", "2", "--class", "wide",
               "--targets", "2", "--shares", "2,1", "--must-tip", "0.3", "--source-ratio", "2", "-o", str(out)])
    assert rc == 0
    manifest = json.loads((out / "MANIFEST.json").read_text())
    assert manifest["parameters"]["size_class"] == "wide" and manifest["parameters"]["shares"] == [2.0, 1.0]
    for e in manifest["instances"]:
        assert "plan" not in e and e["known"] is None
        inst = read_instance(out / e["file"])
        assert sum(1 for b in inst.boxes if b.target == "dest-1") == 4
        assert e["features"]["boxes"] == 6 and e["features"]["only_tipped"] == pytest.approx(2 / 6, abs=1e-6)


@pytest.mark.parametrize("kind", ["random", "planted"])
def test_same_arguments_give_byte_identical_folders(tmp_path, kind):
    args = ["generate", kind, "--dim", "3", "--boxes", "8", "--count", "2", "--seed", "3", "--upright", "0.25"]
    assert main(args + ["-o", str(tmp_path / "a")]) == 0
    assert main(args + ["-o", str(tmp_path / "b")]) == 0
    assert _files(tmp_path / "a") == _files(tmp_path / "b")


@pytest.mark.parametrize(
    "extra, option",
    [
        (["random", "--must-tip", "0.5", "--source-ratio", "1"], "--must-tip"),
        (["random", "--class", "huge"], "--class"),
        (["planted", "--targets", "4", "--boxes", "3"], "--boxes"),
        (["planted", "--count", "0"], "--count"),
    ],
)
def test_bad_arguments_exit_2_naming_the_option(tmp_path, capsys, extra, option):
    kind, rest = extra[0], extra[1:]
    args = ["generate", kind, "--dim", "2", "--boxes", "5", "-o", str(tmp_path / "x")] + rest
    assert main(args) == 2
    err = capsys.readouterr().err
    assert option in err
    assert not (tmp_path / "x" / "MANIFEST.json").exists()


@pytest.mark.parametrize("kind, extra", [("planted", ["--tipped", "0.5"]), ("random", ["--must-tip", "0.2", "--source-ratio", "2"])])
def test_identical_bytes_across_processes_with_different_hash_seeds(tmp_path, kind, extra):
    """Set iteration order varies with PYTHONHASHSEED; the output must not."""
    import os
    import subprocess
    import sys
    from pathlib import Path

    root = Path(__file__).resolve().parents[1]
    for k, hs in enumerate(("1", "2")):
        env = dict(os.environ, PYTHONHASHSEED=hs, PYTHONPATH=str(root))
        subprocess.run([sys.executable, "-m", "benchmarks.cli", "generate", kind, "--dim", "3", "--boxes", "10",
                        "--targets", "2", *extra, "-o", str(tmp_path / str(k))], check=True, env=env, cwd=root,
                       capture_output=True)
    assert _files(tmp_path / "0") == _files(tmp_path / "1")


@pytest.mark.parametrize("kind", ["random", "planted"])
def test_every_option_has_help_text(kind):
    from benchmarks.cli import build_parser

    parser = build_parser()
    sub = next(a for a in parser._subparsers._group_actions[0].choices["generate"]._actions if a.dest == "kind")
    for action in sub.choices[kind]._actions:
        assert action.help, f"generate {kind} {action.option_strings} has no help text"


def test_onto_an_existing_file_is_refused_and_the_file_kept(tmp_path, capsys):
    target = tmp_path / "taken"
    target.write_text("keep")
    assert main(["generate", "random", "--dim", "2", "--boxes", "3", "-o", str(target)]) == 2
    assert f"{target}: -o: is a file, not a folder" in capsys.readouterr().err
    assert target.read_text() == "keep"


def test_a_failed_draw_leaves_no_files_behind(tmp_path, monkeypatch, capsys):
    import benchmarks.commands.generate as command

    real = command.planted_instance

    def second_fails(dim, boxes, seed, **kw):
        if seed == 1:
            raise ValueError("cannot cut the container for this seed (injected)")
        return real(dim, boxes, seed, **kw)

    monkeypatch.setattr(command, "planted_instance", second_fails)
    out = tmp_path / "set"
    assert main(["generate", "planted", "--dim", "2", "--boxes", "4", "--count", "3", "-o", str(out)]) == 2
    assert "injected" in capsys.readouterr().err
    assert not out.exists() or not any(out.iterdir())  # the first instance was not written on its own
