"""The bundled demo: an invented loading bay with three stacks and two vans on two routes."""
from __future__ import annotations

from pathlib import Path

_HERE = Path(__file__).resolve().parent


def demo_instance_path() -> Path:
    return _HERE / "loading-bay.json"


def demo_plan_path() -> Path:
    return _HERE / "loading-bay.plan.json"
