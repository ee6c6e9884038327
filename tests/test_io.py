"""Reading and writing the three formats: round trips, strictness, atomic writes, clear errors."""
from __future__ import annotations

import copy
import json
import os
import stat
import tempfile
from pathlib import Path

import pytest

from instances.errors import InputError
from instances.io import (
    check_output, instance_from_dict, instance_to_dict, plan_from_dict, plan_to_dict, read_instance,
    read_plan_or_result, result_from_dict, result_to_dict, write_json,
)
from instances.model import Result, SolverInfo, TieBreak
from tests.worked_examples import FORMATS_INSTANCE, FORMATS_PLAN


def problems(doc, **kw):
    with pytest.raises(InputError) as info:
        instance_from_dict(doc, file="case.json", **kw)
    return info.value.problems


def test_instance_round_trip_is_stable():
    inst = instance_from_dict(FORMATS_INSTANCE)
    doc = instance_to_dict(inst)
    assert instance_from_dict(doc) == inst
    assert instance_to_dict(instance_from_dict(doc)) == doc


def test_defaults_follow_formats_md():
    doc = {"format": "stackproof/instance", "version": 1, "dim": 3,
           "boxes": [{"id": "a", "size": [1, 2, 3]}], "containers": [{"id": "c", "size": [4, 4, None]}]}
    inst = instance_from_dict(doc)
    assert len(inst.boxes[0].orientations) == 6
    assert (inst.rules.support.rule, inst.rules.loading, inst.rules.access) == ("center", "from-above", "side-face")
    assert (inst.rules.side_clearance, inst.rules.integer_positions, inst.rules.tolerance) == (0, False, 1e-6)
    assert (inst.objective.minimise, inst.objective.then, inst.containers[0].count) == ("height", "none", 1)


@pytest.mark.parametrize("mutate, path, words", [
    (lambda d: d["boxes"][0].update(sze=[1, 1]), "boxes[0].sze", "unknown key"),
    (lambda d: d["boxes"][1]["size"].__setitem__(1, -3), "boxes[1].size[1]", "greater than 0"),
    (lambda d: d["boxes"][1].update(size=[3, 3, 3]), "boxes[1].size", "must have 2 numbers"),
    (lambda d: d["boxes"][2].update(target="van-south"), "boxes[2].target", "unknown container type"),
    (lambda d: d["boxes"][2].update(at=[0, 3]), "boxes[2].at[1]", "floats"),
    (lambda d: d["boxes"][1].update(at=[3, 0]), "boxes[1].at", "overlaps"),
    (lambda d: d["boxes"][1].update(at=[8, 0]), "boxes[1].at[0]", "sticks out"),
    (lambda d: d["boxes"][1].update(id="crate-a"), "boxes[1].id", "duplicate box id"),
    (lambda d: d["rules"]["support"].update(min_fraction=0.5), "rules.support.min_fraction", "base-fraction"),
    (lambda d: d["rules"].update(support={"rule": "base-fraction"}), "rules.support.min_fraction", "required"),
    (lambda d: d["objective"].update(minimise="bins"), "containers[0].size[1]", "needs containers with a height"),
    (lambda d: d["boxes"][0].update(orientations=["xyz"]), "boxes[0].orientations[0]", "not an orientation in 2D"),
    (lambda d: d.update(version=2), "version", "must be 1"),
    (lambda d: d["source"].update(size=[None, 8]), "source.size[0]", "only the last"),
    (lambda d: d["boxes"][0].pop("at"), "boxes[0].at", "is missing"),
])
def test_bad_instances_name_the_field(mutate, path, words):
    doc = copy.deepcopy(FORMATS_INSTANCE)
    mutate(doc)
    found = problems(doc)
    assert any(p == path and words in m for p, m in found), found


def test_error_text_names_the_file_and_path(tmp_path):
    doc = copy.deepcopy(FORMATS_INSTANCE)
    doc["boxes"][1]["size"][1] = -3
    f = tmp_path / "bay.json"
    f.write_text(json.dumps(doc))
    with pytest.raises(InputError) as info:
        read_instance(f)
    assert str(info.value).startswith(f"{f}: boxes[1].size[1]: ")


def test_truncated_and_non_standard_json(tmp_path):
    f = tmp_path / "cut.json"
    f.write_text(json.dumps(FORMATS_INSTANCE)[:80])
    with pytest.raises(InputError, match="invalid JSON at line 1"):
        read_instance(f)
    f.write_text(json.dumps(FORMATS_INSTANCE).replace("1e-06", "NaN"))
    with pytest.raises(InputError, match="not a JSON number"):
        read_instance(f)
    with pytest.raises(InputError, match="file not found"):
        read_instance(tmp_path / "nowhere.json")


def test_plan_and_result_round_trip_and_result_carries_its_plan(tmp_path):
    plan = plan_from_dict(FORMATS_PLAN)
    assert plan_from_dict(plan_to_dict(plan)) == plan
    result = Result(instance="dock-7-morning", status="optimal", objective=5, bound=5, gap=0.0,
                    tiebreak=TieBreak("tips", 1, True), bounds={"area": 3.834}, plan=plan, checked=True,
                    solver=SolverInfo("highs", "1.0", 60, 0, 0.4, 17), notes=("positions restricted to integers",), seconds=0.5)
    doc = result_to_dict(result)
    assert result_from_dict(doc) == result
    write_json(tmp_path / "r.json", doc)
    got_plan, got_result = read_plan_or_result(tmp_path / "r.json")
    assert got_plan == plan and got_result == result


def test_write_json_is_atomic(tmp_path, monkeypatch):
    target = tmp_path / "out.json"
    write_json(target, {"a": 1})

    class Boom(Exception):
        pass

    def explode(*args, **kwargs):
        raise Boom

    monkeypatch.setattr("instances.io.os.replace", explode)
    with pytest.raises(Boom):
        write_json(target, {"a": 2})
    assert json.loads(target.read_text()) == {"a": 1}
    assert [p.name for p in tmp_path.iterdir()] == ["out.json"]


def test_an_infinite_bound_is_written_as_null_and_left_out_of_bounds(tmp_path):
    result = Result(instance="x", status="infeasible", bound=float("inf"), bounds={"area": 2.0, "dff": float("inf")},
                    notes=("a lower bound proves that no plan exists (dff)",))
    write_json(tmp_path / "r.json", result_to_dict(result))
    doc = json.loads((tmp_path / "r.json").read_text())
    assert doc["bound"] is None and doc["bounds"] == {"area": 2}
    assert result_from_dict(doc).status == "infeasible"


# ---------------------------------------------------------------- permissions and output checks


@pytest.fixture
def umask_027():
    old = os.umask(0o027)
    try:
        yield
    finally:
        os.umask(old)


def test_written_files_follow_the_umask_and_replaced_files_keep_their_mode(tmp_path, umask_027):
    from benchmarks.results import ResultsFile

    new = tmp_path / "sub" / "new.json"
    write_json(new, {"a": 1})
    assert stat.S_IMODE(new.stat().st_mode) == 0o640  # 0666 minus the umask, as open(path, "w") gives
    ResultsFile(tmp_path / "r.jsonl").append({"a": 1})
    assert stat.S_IMODE((tmp_path / "r.jsonl").stat().st_mode) == 0o640  # one rule for JSON lines too
    new.chmod(0o604)
    write_json(new, {"a": 2})
    assert stat.S_IMODE(new.stat().st_mode) == 0o604 and json.loads(new.read_text()) == {"a": 2}


def readonly_place(tmp_path: Path) -> Path:
    """A folder in which nobody can create files: a chmod 0555 folder, or /proc when running as root."""
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o555)
    try:
        fd, probe = tempfile.mkstemp(dir=ro)
    except OSError:
        return ro
    os.close(fd)
    os.unlink(probe)  # root ignores the mode bits
    if Path("/proc/self").is_dir():
        return Path("/proc")
    pytest.skip("no read-only place to test with")


def output_error(path, option, **kw) -> str:
    with pytest.raises(InputError) as info:
        check_output(path, option, **kw)
    (where, message), = info.value.problems
    assert where == option and info.value.file == str(path)
    return message


def test_check_output_names_option_and_path_and_creates_nothing(tmp_path):
    ro = readonly_place(tmp_path)
    (tmp_path / "adir").mkdir()
    (tmp_path / "afile").write_text("x")
    before = sorted(p.name for p in tmp_path.rglob("*"))
    assert "is a folder" in output_error(tmp_path / "adir", "-o")
    assert "is a file, not a folder" in output_error(tmp_path / "afile", "--report", folder=True)
    assert "is a file" in output_error(tmp_path / "afile" / "x.json", "-o")
    assert "cannot be created" in output_error(ro / "missing" / "deeper" / "r.json", "-o")
    assert "cannot write in folder" in output_error(ro / "r.json", "--junit")
    assert "cannot be created" in output_error(ro / "missing", "--report", folder=True)
    assert sorted(p.name for p in tmp_path.rglob("*")) == before  # the probe left nothing behind
    assert check_output(tmp_path / "new" / "deeper" / "r.json", "-o") == tmp_path / "new" / "deeper" / "r.json"
    assert check_output(tmp_path / "adir", "--report", folder=True) == tmp_path / "adir"
    assert not (tmp_path / "new").exists()  # a good path is only checked, not created


def test_check_output_for_appending_needs_a_writable_file(tmp_path):
    store = tmp_path / "r.jsonl"
    store.write_text('{"a": 1}\n')
    assert check_output(store, "--results", append=True) == store
    assert store.read_text() == '{"a": 1}\n'  # opening for append changed nothing
    if Path("/proc/version").is_file():
        assert "cannot be appended to" in output_error(Path("/proc/version"), "--results", append=True)
