"""Shared fixtures: where the published instances live, and small instance builders."""
from __future__ import annotations

import os
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]


def shared_dir() -> Path:
    """`../shared` beside the repository, or $STACKPROOF_SHARED."""
    return Path(os.environ.get("STACKPROOF_SHARED", REPO.parent / "shared"))


@pytest.fixture
def published_dir() -> Path:
    path = shared_dir() / "benchmarks" / "published"
    if not (path / "MANIFEST.json").exists():
        pytest.skip(f"published benchmark folder not found at {path}")
    return path
