"""Named demo scenarios (instances/generate/scenarios.py and instances/demo/scenarios/)."""
from __future__ import annotations

import pytest

from instances.checker import check_plan
from instances.drop import drop_plan
from instances.generate.scenarios import FOLDER, SCENARIOS, scenario, scenario_path, write_scenarios
from instances.io import read_instance, read_plan


def test_files_on_disk_are_what_the_generator_makes(tmp_path):
    written = write_scenarios(tmp_path)
    assert {p.name for p in written} == {p.name for p in FOLDER.glob("*.json")}
    for p in written:
        assert p.read_bytes() == (FOLDER / p.name).read_bytes(), f"{p.name} is stale: run python -m instances.generate.scenarios"


@pytest.mark.parametrize("name", sorted(SCENARIOS))
def test_each_scenario_validates_and_is_feasible(name):
    inst = read_instance(scenario_path(name))
    assert inst.name == name and SCENARIOS[name].story
    plan_file = FOLDER / f"{name}.plan.json"
    if SCENARIOS[name].kind == "planted":
        report = check_plan(inst, read_plan(plan_file))
        assert report.feasible and report.objective == inst.known.optimum
    else:
        assert not plan_file.exists() and inst.known is None
        plan = drop_plan(inst)
        assert plan is not None and check_plan(inst, plan).feasible


def test_scenarios_cover_both_dimensions_and_kinds():
    assert {(s.dim, s.kind) for s in SCENARIOS.values()} == {(2, "random"), (2, "planted"), (3, "random"), (3, "planted")}


def test_unknown_scenario_is_named():
    with pytest.raises(ValueError, match="unknown scenario 'harbour'"):
        scenario("harbour")
