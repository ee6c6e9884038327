"""Benchmark suites: which instances a run covers, named `set/name`, with a content hash.

A suite is given as
* a directory with a ``MANIFEST.json`` (the published folder's classic layout, or ours below);
* a directory without one: every instance document (``"format": "stackproof/instance"``) in it
  and its sub-directories; the set is the sub-directory (the directory's own name at the top);
* a manifest file, or a single instance file.

Our manifest is ``{"format": "stackproof/suite", "version": 1, "set": "optional default set",
"instances": ["a.json", {"file": "b.json", "set": "other"}]}`` with files relative to it.
"""
from __future__ import annotations

import fnmatch
import hashlib
import json
import random
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Iterable, Optional, Sequence

from instances.errors import InputError
from instances.io import instance_from_dict, instance_to_dict, load_json
from instances.model import Instance

from .published import MANIFEST, is_published_manifest, load_published

SUITE_FORMAT = "stackproof/suite"
GENERATED_FORMAT = "stackproof/generated"  # what `stackproof generate` writes beside its instances


@dataclass(frozen=True)
class SuiteEntry:
    """One instance of a run: its set, its name, the file it was read from, the instance."""

    set: str
    name: str
    file: Path
    instance: Instance

    @property
    def key(self) -> str:
        return f"{self.set}/{self.name}"


def instance_hash(instance: Instance) -> str:
    """A stable content hash of the instance document (key order and spacing do not matter)."""
    text = json.dumps(instance_to_dict(instance), sort_keys=True, separators=(",", ":"), allow_nan=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:20]


def load_suites(paths: Sequence[str | Path]) -> list[SuiteEntry]:
    """All entries of several suites, in the order given; a `set/name` seen twice is an error."""
    out: list[SuiteEntry] = []
    seen: dict[str, Path] = {}
    for path in paths:
        for entry in load_suite(path):
            if entry.key in seen:
                raise InputError.one(str(entry.file), "$", f"instance {entry.key} also comes from {seen[entry.key]}; names must be unique in a run")
            seen[entry.key] = entry.file
            out.append(entry)
    return out


def load_suite(path: str | Path) -> list[SuiteEntry]:
    """The entries of one suite (directory, manifest file or instance file)."""
    p = Path(path)
    if p.is_dir():
        if (p / MANIFEST).is_file():
            return _from_manifest_file(p / MANIFEST)
        return _from_directory(p)
    if p.is_file():
        return _from_manifest_file(p)
    raise InputError.one(str(p), "$", "no such suite: not a directory or a file")


def _from_manifest_file(path: Path) -> list[SuiteEntry]:
    doc = load_json(path)
    if is_published_manifest(doc):
        return [SuiteEntry(e.set, e.name, e.file, e.instance) for e in load_published(path.parent)]
    if isinstance(doc, dict) and doc.get("format") == "stackproof/instance":
        inst = instance_from_dict(doc, file=str(path))
        return [SuiteEntry(path.parent.name or "suite", inst.name or path.stem, path, inst)]
    if isinstance(doc, dict) and doc.get("format") == SUITE_FORMAT:
        return _from_suite_doc(doc, path)
    if isinstance(doc, dict) and doc.get("format") == GENERATED_FORMAT:
        return _from_generated_doc(doc, path)
    raise InputError.one(str(path), "format", f"not a suite: expected \"{SUITE_FORMAT}\", \"stackproof/instance\" or a published benchmark manifest")


def _from_suite_doc(doc: dict, path: Path) -> list[SuiteEntry]:
    file = str(path)
    extra = sorted(set(doc) - {"format", "version", "set", "instances"})
    if extra:
        raise InputError.one(file, extra[0], f"unknown key {extra[0]!r}")
    if doc.get("version") != 1:
        raise InputError.one(file, "version", f"must be 1, got {json.dumps(doc.get('version'))}")
    items = doc.get("instances")
    if not isinstance(items, list):
        raise InputError.one(file, "instances", "must be a list of file names or {\"file\", \"set\"} objects")
    default_set = doc.get("set", path.parent.name or "suite")
    out = []
    for k, item in enumerate(items):
        if isinstance(item, str):
            item = {"file": item}
        if not isinstance(item, dict) or not isinstance(item.get("file"), str) or set(item) - {"file", "set"}:
            raise InputError.one(file, ["instances", k], "must be a file name or an object with \"file\" (and optional \"set\")")
        target = path.parent / item["file"]
        inst = instance_from_dict(load_json(target), file=str(target))
        out.append(SuiteEntry(str(item.get("set", default_set)), inst.name or target.stem, target, inst))
    return out


def _from_generated_doc(doc: dict, path: Path) -> list[SuiteEntry]:
    """A generator's manifest: each entry's "file" is an instance beside it; the rest is provenance."""
    items = doc.get("instances")
    if not isinstance(items, list) or not all(isinstance(e, dict) and isinstance(e.get("file"), str) for e in items):
        raise InputError.one(str(path), "instances", "must be a list of objects with a \"file\"")
    return _from_suite_doc({"format": SUITE_FORMAT, "version": 1, "instances": [e["file"] for e in items]}, path)


def _from_directory(folder: Path) -> list[SuiteEntry]:
    out = []
    for target in sorted(folder.rglob("*.json")):
        doc = load_json(target)
        if not (isinstance(doc, dict) and doc.get("format") == "stackproof/instance"):
            continue  # plans, results and other files may sit beside instances
        inst = instance_from_dict(doc, file=str(target))
        rel = target.parent.relative_to(folder)
        set_name = str(rel) if str(rel) != "." else (folder.resolve().name or "suite")
        out.append(SuiteEntry(set_name, inst.name or target.stem, target, inst))
    if not out:
        raise InputError.one(str(folder), "$", "no instance files (\"format\": \"stackproof/instance\") and no MANIFEST.json here")
    return out


def select(entries: Iterable[SuiteEntry], patterns: Optional[Sequence[str]]) -> list[SuiteEntry]:
    """Entries whose `set/name` or name matches any glob in `patterns` (all when none given)."""
    entries = list(entries)
    if not patterns:
        return entries
    return [e for e in entries if any(fnmatch.fnmatchcase(e.key, p) or fnmatch.fnmatchcase(e.name, p) for p in patterns)]


def shuffled(instance: Instance, seed: int) -> Instance:
    """The instance with its boxes listed in a random order fixed by (seed, name); ids are kept.

    Some published files list items in an order that a simple placement rule turns into the
    optimum; shuffling keeps a benchmark from rewarding that.
    """
    rng = random.Random(f"{seed}:{instance.name}")
    boxes = list(instance.boxes)
    rng.shuffle(boxes)
    return replace(instance, boxes=tuple(boxes))
