"""The project's rooms depend one way only: instances <- bounds <- milp <- benchmarks."""
from __future__ import annotations

import ast
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]
ALLOWED = {
    "instances": set(),
    "bounds": {"instances"},
    "milp": {"instances", "bounds"},
    "benchmarks": {"instances", "bounds", "milp"},
}


def project_imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found.update(a.name.split(".")[0] for a in node.names)
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            found.add(node.module.split(".")[0])
    return found & set(ALLOWED)


@pytest.mark.parametrize("package", sorted(ALLOWED))
def test_dependencies_point_one_way(package):
    bad = {}
    for path in (REPO / package).rglob("*.py"):
        wrong = project_imports(path) - ALLOWED[package] - {package}
        if wrong:
            bad[str(path.relative_to(REPO))] = sorted(wrong)
    assert bad == {}
