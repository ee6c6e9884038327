"""Every solver proof is confirmed by an independent second solve before it counts (issue 10).

The backend is replaced by a liar or a quitter around the real one: a wrong "infeasible" from
the first solve must be caught by the second (the result says so and claims nothing from it),
and a proof whose second solve does not finish must not count. Results carry their provenance.
"""
from __future__ import annotations

import math

import pytest

import milp
from instances.checker import check_plan
from instances.io import instance_digest, result_from_dict, result_to_dict
from milp import backends, heightmap
from tests.oracles.exhaustive import solve_exhaustive
from tests.oracles.handworked import CASES

CASE = {c.name: c for c in CASES}


def lying_first_solve(monkeypatch):
    """The first solve of every step answers "infeasible"; the confirming solve is the real one."""
    real = backends.run

    def liar(lp, **kw):
        if kw.get("presolve", True):
            return backends.Outcome("infeasible", None, math.inf, 0, 0.0)
        return real(lp, **kw)

    monkeypatch.setattr(backends, "run", liar)
    monkeypatch.setattr(heightmap, "applies", lambda p: False)  # the model, not the exact searches, must answer
    monkeypatch.setattr(heightmap, "refutable", lambda p: False)


def quitting_confirmation(monkeypatch):
    """The confirming solve never finishes."""
    monkeypatch.setattr(backends, "confirm", lambda lp, **kw: backends.Outcome("unknown", None, None, 0, 0.0))
    monkeypatch.setattr(heightmap, "applies", lambda p: False)  # the model, not the exact searches, must answer
    monkeypatch.setattr(heightmap, "refutable", lambda p: False)


def test_a_wrong_infeasible_is_caught_by_the_second_solve(monkeypatch):
    case = CASE["center-bridges"]  # optimum 2, not reached by the greedy plan: H = 2 needs the model
    lying_first_solve(monkeypatch)
    result = milp.solve(case.instance, time_limit=30)
    assert any("solvers disagree" in n for n in result.notes), result.notes
    assert result.status != "infeasible"
    assert result.bound is None or result.bound <= case.objective
    if result.status == "optimal":  # only through a checked plan from the second solve
        assert result.objective == case.objective
        assert check_plan(case.instance, result.plan).feasible


def test_an_unconfirmed_infeasible_step_claims_nothing(monkeypatch):
    case = CASE["neighbour-blocks-tip"]
    quitting_confirmation(monkeypatch)
    result = milp.solve(case.instance, time_limit=30)
    oracle = solve_exhaustive(case.instance)
    assert result.bound is None or result.bound <= oracle.objective
    assert any("not confirmed" in n for n in result.notes), result.notes
    solver_steps = [s for s in result.provenance.proof if s.solver]
    assert not solver_steps  # nothing a solver said was used


@pytest.mark.parametrize("name", ["full-base-required", "bridge-corners-one"])
def test_an_unconfirmed_infeasibility_is_not_reported(monkeypatch, name):
    case = CASE[name]
    assert case.status == "infeasible"
    quitting_confirmation(monkeypatch)
    result = milp.solve(case.instance, time_limit=30)
    assert result.status == "unknown", (result.status, result.notes)


@pytest.mark.parametrize("name", ["neighbour-blocks-tip", "full-base-required", "walls-block-tip"])
def test_results_carry_provenance_and_confirmed_proof_steps(name):
    case = CASE[name]
    result = milp.solve(case.instance, time_limit=30)
    assert result.status == case.status
    prov = result.provenance
    assert prov.instance_sha256 == instance_digest(case.instance)
    assert prov.tool_version.startswith("stackproof ")
    assert set(prov.solvers) == {"highspy", "PuLP"}
    assert prov.date.endswith("+00:00")
    assert prov.proof, "an optimal or infeasible result needs a certificate"
    for step in prov.proof:
        assert step.confirmed_by, step  # solver steps by the second solve, the rest by arithmetic
        if step.solver:
            assert "presolve off" in step.confirmed_by
    again = result_from_dict(result_to_dict(result))  # the schema takes it and it round-trips
    assert again.provenance == prov


def test_instance_digest_ignores_layout_but_not_data():
    inst = CASE["neighbour-blocks-tip"].instance
    import dataclasses

    assert instance_digest(inst) == instance_digest(dataclasses.replace(inst))
    assert instance_digest(inst) != instance_digest(dataclasses.replace(inst, name="other"))


def test_pinned_solver_versions_are_the_tested_ones():
    from importlib.metadata import version

    assert version("highspy") == backends.TESTED["highspy"]
    assert version("pulp") == backends.TESTED["PuLP"]
