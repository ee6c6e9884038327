"""JUnit XML for CI systems: one test case per instance, one test suite per set.

A failure is a contradiction with a known value or a result not backed by a checked plan;
a crashed or killed solve (status `error`) is a JUnit error. Unknown or open results pass:
a time limit is not a bug.
"""
from __future__ import annotations

import xml.etree.ElementTree as ET
from collections import defaultdict
from pathlib import Path
from typing import Iterable

from .text import percent

from instances.io import write_text_atomic


def junit_xml(records: Iterable[dict], name: str = "stackproof bench") -> str:
    """The JUnit document for `records` as text."""
    by_set: dict[str, list[dict]] = defaultdict(list)
    for r in records:
        by_set[r["set"]].append(r)
    root = ET.Element("testsuites", name=name)
    totals = {"tests": 0, "failures": 0, "errors": 0}
    for set_name in sorted(by_set):
        rs = sorted(by_set[set_name], key=lambda r: r["name"])
        suite = ET.SubElement(root, "testsuite", name=set_name)
        counts = {"tests": len(rs), "failures": 0, "errors": 0}
        seconds = 0.0
        for r in rs:
            seconds += r.get("seconds") or 0.0
            case = ET.SubElement(suite, "testcase", classname=set_name, name=r["name"], time=f"{r.get('seconds') or 0.0:.3f}")
            reasons = list(r.get("contradictions") or []) + list(r.get("problems") or [])
            if reasons:
                counts["failures"] += 1
                kind = "contradiction" if r.get("contradictions") else "unchecked"
                f = ET.SubElement(case, "failure", message=reasons[0][:500], type=kind)
                f.text = "\n".join(reasons)
            elif r.get("status") == "error":
                counts["errors"] += 1
                notes = r.get("notes") or ["error"]
                e = ET.SubElement(case, "error", message=str(notes[0])[:500], type="error")
                e.text = "\n".join(map(str, notes))
            out = ET.SubElement(case, "system-out")
            obj = r.get("objective")
            out.text = (
                f"status {r.get('status')}, objective {obj if obj is not None else '-'}, bound {r.get('bound')}, "
                f"gap {percent(r.get('gap'))}, config {r.get('config')}, hash {r.get('hash')}"
            )
        for k, v in counts.items():
            suite.set(k, str(v))
            totals[k] += v
        suite.set("time", f"{seconds:.3f}")
    for k, v in totals.items():
        root.set(k, str(v))
    ET.indent(root)
    return ET.tostring(root, encoding="unicode", xml_declaration=True) + "\n"


def write_junit(path: str | Path, records: Iterable[dict]) -> None:
    write_text_atomic(path, junit_xml(records))
