"""Tests of benchmarks.suites (what a run covers)."""
from __future__ import annotations

import json

import pytest

from benchmarks.suites import instance_hash, load_suite, load_suites, select
from instances.errors import InputError
from instances.drop import drop_plan
from instances.io import instance_to_dict, plan_to_dict, write_json
from tests.test_bench import strip_instance


def test_directory_without_manifest_takes_instances_and_sets_from_subfolders(tmp_path):
    top = tmp_path / "suite"
    write_json(top / "a.json", instance_to_dict(strip_instance("a", [(1, 1)], 1)))
    write_json(top / "wide" / "b.json", instance_to_dict(strip_instance("b", [(2, 1)], 2)))
    write_json(top / "wide" / "b.plan.json", plan_to_dict(drop_plan(strip_instance("b", [(2, 1)], 2))))  # not an instance
    (top / "notes.txt").write_text("ignored")
    entries = load_suite(top)
    assert [e.key for e in entries] == ["suite/a", "wide/b"]
    assert entries[1].file == top / "wide" / "b.json"


def test_our_manifest_lists_files_with_optional_sets(tmp_path):
    write_json(tmp_path / "x.json", instance_to_dict(strip_instance("x", [(1, 1)], 1)))
    write_json(tmp_path / "y.json", instance_to_dict(strip_instance("y", [(1, 1)], 1)))
    manifest = {"format": "stackproof/suite", "version": 1, "set": "mine", "instances": ["x.json", {"file": "y.json", "set": "other"}]}
    (tmp_path / "MANIFEST.json").write_text(json.dumps(manifest))
    assert [e.key for e in load_suite(tmp_path)] == ["mine/x", "other/y"]
    assert [e.key for e in load_suite(tmp_path / "MANIFEST.json")] == ["mine/x", "other/y"]
    (tmp_path / "MANIFEST.json").write_text(json.dumps(dict(manifest, instances=[{"file": "x.json", "sett": "typo"}])))
    with pytest.raises(InputError, match=r"instances\[0\]"):
        load_suite(tmp_path)
    (tmp_path / "MANIFEST.json").write_text(json.dumps(dict(manifest, extra=1)))
    with pytest.raises(InputError, match="unknown key 'extra'"):
        load_suite(tmp_path)
    (tmp_path / "MANIFEST.json").write_text(json.dumps(dict(manifest, instances=["missing.json"])))
    with pytest.raises(InputError, match="missing.json"):
        load_suite(tmp_path)


def test_single_instance_file_duplicate_names_and_filters(tmp_path):
    write_json(tmp_path / "s" / "one.json", instance_to_dict(strip_instance("one", [(1, 1)], 1)))
    (entry,) = load_suite(tmp_path / "s" / "one.json")
    assert entry.key == "s/one"
    with pytest.raises(InputError, match="names must be unique"):
        load_suites([tmp_path / "s", tmp_path / "s" / "one.json"])
    assert select([entry], ["s/*"]) == [entry] and select([entry], ["one"]) == [entry] and select([entry], ["two*"]) == []
    (tmp_path / "empty").mkdir()
    with pytest.raises(InputError, match="no instance files"):
        load_suite(tmp_path / "empty")


def test_instance_hash_is_about_content_not_layout():
    a = strip_instance("h", [(1, 1), (2, 1)], 2)
    assert instance_hash(a) == instance_hash(strip_instance("h", [(1, 1), (2, 1)], 2))
    assert instance_hash(a) != instance_hash(strip_instance("h", [(1, 1), (2, 2)], 2))


def test_a_generated_folder_is_a_suite_through_its_manifest(tmp_path):
    from benchmarks.cli import main

    assert main(["generate", "planted", "--dim", "2", "--boxes", "4", "--count", "2", "--seed", "3", "-o", str(tmp_path)]) == 0
    manifest = json.loads((tmp_path / "MANIFEST.json").read_text())
    entries = load_suite(tmp_path)
    assert sorted(e.file.name for e in entries) == sorted(item["file"] for item in manifest["instances"])
    assert all(e.instance.known is not None for e in entries)
