"""Named demo scenarios: invented situations, each one generator call with fixed arguments.

The instance files in `instances/demo/scenarios/` are these calls written out (planted ones
with their plan beside them); `python -m instances.generate.scenarios` rewrites them, and the
tests check that the files still equal what the generator makes.
"""
from __future__ import annotations

import sys
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Optional

from ..io import instance_to_dict, plan_to_dict, write_json
from ..model import Instance, Plan
from .arrangement import random_instance
from .planted import planted_instance

FOLDER = Path(__file__).resolve().parents[1] / "demo" / "scenarios"


@dataclass(frozen=True)
class Scenario:
    """An invented situation and the generator call that builds it."""

    name: str
    story: str
    kind: str  # "random" or "planted"
    dim: int
    boxes: int
    seed: int
    params: dict[str, Any] = field(default_factory=dict)

    def build(self) -> tuple[Instance, Optional[Plan]]:
        if self.kind == "planted":
            return planted_instance(self.dim, self.boxes, self.seed, name=self.name, **self.params)
        return random_instance(self.dim, self.boxes, self.seed, name=self.name, **self.params), None


SCENARIOS = {
    s.name: s
    for s in (
        Scenario(
            "bakery-two-rounds",
            "Bread crates stacked in a dispatch bay go to two delivery vans, each crate labelled "
            "for its round; some crates were stacked on their side. Planted: both vans fill exactly.",
            "planted", 2, 10, 11,
            dict(width=6, height=5, targets=2, tipped=0.3, source_ratio=1.0, flush=0.7, then="tips"),
        ),
        Scenario(
            "stage-flats-truck",
            "Scenery flats lie flat in a scene dock, which is wider than the truck: the longest "
            "flats fit only when stood on edge, and a flat can be gripped only at a clear end.",
            "random", 2, 8, 3,
            dict(size_class="wide", width=8, must_tip=0.25, source_ratio=2.0, flush=0.6, integer_positions=True),
        ),
        Scenario(
            "seed-bank-totes",
            "Sample cartons from an archive shelf are packed into identical totes; a third are "
            "marked this side up. Planted: three totes, each filled exactly, is the fewest.",
            "planted", 3, 12, 5,
            dict(width=4, depth=3, height=4, count=3, upright=0.34, tipped=0.25, objective="bins", support="corners"),
        ),
        Scenario(
            "workshop-restock",
            "Parts cartons from a delivery pallet go to two workshop cages, two thirds to the first; "
            "cartons need three quarters of their base carried, and fewer tips break ties.",
            "random", 3, 9, 8,
            dict(size_class="mixed", width=6, depth=5, targets=2, shares=[2, 1], support="base-fraction",
                 min_fraction=0.75, integer_positions=True, objective="height-sum", then="tips", source_ratio=1.2),
        ),
    )
}


def scenario(name: str) -> Scenario:
    try:
        return SCENARIOS[name]
    except KeyError:
        raise ValueError(f"unknown scenario {name!r} (one of {', '.join(SCENARIOS)})") from None


def scenario_path(name: str) -> Path:
    """The instance file of a scenario (its plan, if planted, is `<name>.plan.json` beside it)."""
    return FOLDER / f"{scenario(name).name}.json"


def write_scenarios(folder: Path = FOLDER) -> list[Path]:
    """Write every scenario (and planted plan) into `folder`; return the files written."""
    out = []
    for s in SCENARIOS.values():
        inst, plan = s.build()
        write_json(folder / f"{s.name}.json", instance_to_dict(inst))
        out.append(folder / f"{s.name}.json")
        if plan is not None:
            write_json(folder / f"{s.name}.plan.json", plan_to_dict(plan))
            out.append(folder / f"{s.name}.plan.json")
    return out


if __name__ == "__main__":
    for path in write_scenarios(Path(sys.argv[1]) if len(sys.argv) > 1 else FOLDER):
        print(path)
