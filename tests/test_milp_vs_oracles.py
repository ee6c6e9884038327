"""The MILP solver against the independent oracles (issue 3, correctness tests).

- Exhaustive search on hypothesis-drawn tiny instances over every rule combination, 2D and 3D:
  a result claiming `optimal` must equal the oracle's optimum (and its proved tips tie-break the
  oracle's fewest tips), `infeasible` must match, and a bound may never exceed the optimum.
- OR-Tools CP-SAT on small precedence-free strip packing instances: the optima must agree.
Every plan the solver reports must pass the checker. Examples are drawn deterministically
(derandomize, no example database) so CI runs the same cases every time.
"""
from __future__ import annotations

import random

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import milp
from instances.checker import check_plan
from instances.model import Box, ContainerType, Instance, Objective, Rules, Support
from tests.oracles.cpsat import strip_height_cpsat
from tests.oracles.exhaustive import solve_exhaustive
from tests.oracles.handworked import CASES
from tests.oracles.tiny import binding_instances, tiny_instances, tiny_strip_instances

TIME_LIMIT = 30.0  # per solve; tiny instances prove in well under a second
EPS = 1e-6


def drawn(examples: int):
    return settings(max_examples=examples, deadline=None, database=None, derandomize=True,
                    suppress_health_check=list(HealthCheck))


def assert_agrees(inst: Instance, result, oracle, require_proof: bool = True) -> None:
    """The solver's result is consistent with the oracle's proved optimum (or infeasibility)."""
    assert result.status != "error", result.notes
    if result.plan is not None:
        report = check_plan(inst, result.plan)
        assert report.feasible, [str(v) for v in report.violations]
        assert result.checked
        assert abs(report.objective - result.objective) <= EPS
    if oracle.status == "infeasible":
        assert result.status in ("infeasible", "unknown"), (result.status, result.objective)
        assert result.plan is None
    else:
        assert result.status != "infeasible", result.notes
        if result.bound is not None:
            assert result.bound <= oracle.objective + EPS, (result.bound, oracle.objective)
        for name, value in result.bounds.items():
            assert value <= oracle.objective + EPS, (name, value, oracle.objective)
        if result.plan is not None:
            assert result.objective >= oracle.objective - EPS
        if result.status == "optimal":
            assert abs(result.objective - oracle.objective) <= EPS, (result.objective, oracle.objective)
            if inst.objective.then == "tips":
                assert result.tiebreak is not None and result.tiebreak.name == "tips"
                if result.tiebreak.proved:
                    assert result.tiebreak.value == oracle.tips, (result.tiebreak, oracle.tips)
                else:
                    assert result.tiebreak.value >= oracle.tips
    if result.status == "feasible" and result.objective:
        # FORMATS.md: gap = (objective - bound) / objective
        assert result.gap == pytest.approx((result.objective - result.bound) / result.objective)
    # tiny instances must be settled well within the limit: an exact tool that cannot prove
    # a five-box instance is broken
    if require_proof:
        assert result.status in ("optimal", "infeasible"), (result.status, result.notes)


@pytest.mark.parametrize("case", CASES, ids=lambda c: c.name)
def test_milp_reproduces_hand_worked_optima(case):
    result = milp.solve(case.instance, time_limit=TIME_LIMIT)
    assert result.status == case.status, (case.why, result.notes)
    if case.status == "optimal":
        assert result.objective == case.objective, case.why
        if case.tips is not None:
            assert result.tiebreak is not None and result.tiebreak.proved
            assert result.tiebreak.value == case.tips, case.why
        assert check_plan(case.instance, result.plan).feasible


@drawn(150)
@given(tiny_instances(dim=2))
def test_milp_equals_exhaustive_2d(inst):
    assert_agrees(inst, milp.solve(inst, time_limit=TIME_LIMIT), solve_exhaustive(inst))


@drawn(100)
@given(tiny_instances(dim=3))
def test_milp_equals_exhaustive_3d(inst):
    assert_agrees(inst, milp.solve(inst, time_limit=TIME_LIMIT), solve_exhaustive(inst))


@drawn(80)
@given(tiny_instances(with_source=True))
def test_milp_equals_exhaustive_with_a_source(inst):
    # the rules that come from the source (lift order, side faces, walls, clearance) on every draw
    assert_agrees(inst, milp.solve(inst, time_limit=TIME_LIMIT), solve_exhaustive(inst))


@drawn(200)
@given(binding_instances(dim=2))
def test_milp_equals_exhaustive_where_rules_bite_2d(inst):
    # stacks, loading from above, a support rule and side-face access: bounds and the greedy
    # plan rarely settle these, so the model has to find and prove the optimum itself
    assert_agrees(inst, milp.solve(inst, time_limit=TIME_LIMIT), solve_exhaustive(inst))


@drawn(120)
@given(binding_instances(dim=3))
def test_milp_equals_exhaustive_where_rules_bite_3d(inst):
    assert_agrees(inst, milp.solve(inst, time_limit=TIME_LIMIT), solve_exhaustive(inst))


@drawn(60)
@given(binding_instances())
def test_milp_stays_honest_when_time_runs_out(inst):
    # a very short limit: whatever the solver reports (often `feasible` or `unknown`) must still
    # be true: checked plan, bound at most the optimum, `optimal`/`infeasible` only when right
    assert_agrees(inst, milp.solve(inst, time_limit=0.05), solve_exhaustive(inst), require_proof=False)


@drawn(60)
@given(tiny_strip_instances())
def test_milp_equals_cpsat_on_tiny_strips(inst):
    cp = strip_height_cpsat(inst, time_limit=TIME_LIMIT)
    result = milp.solve(inst, time_limit=TIME_LIMIT)
    assert cp.status == "optimal"
    assert result.status == "optimal", result.notes
    assert result.objective == cp.height
    assert check_plan(inst, result.plan).feasible


def random_strip(dim: int, n: int, seed: int, rotate: bool) -> Instance:
    """A random strip packing instance (integer sizes) a bit larger than the exhaustive limit."""
    rng = random.Random(seed)
    width = (8, 8) if dim == 2 else (4, 4)
    sizes = [tuple(rng.randint(1, width[0] // 2 + 1) for _ in range(dim)) for _ in range(n)]
    every = ("xy", "yx") if dim == 2 else ("xyz", "xzy", "yxz", "yzx", "zxy", "zyx")
    boxes = tuple(Box(f"r{k}", s, every if rotate else every[:1]) for k, s in enumerate(sizes))
    rules = Rules(Support("none"), "any", "none", 0, True, 1e-6)
    return Instance(dim, boxes, (ContainerType("strip", (*width[: dim - 1], None), 1),), None, rules,
                    Objective("height"), name=f"strip-{dim}d-{n}-{seed}")


@pytest.mark.parametrize(
    "dim,n,seed,rotate",
    [(2, 7, 1, False), (2, 7, 2, True), (2, 8, 3, False), (2, 8, 4, True), (2, 10, 7, False),
     (2, 10, 8, True), (2, 11, 11, False), (2, 12, 13, False), (2, 12, 14, True),
     (3, 5, 5, False), (3, 5, 6, True), (3, 6, 9, True), (3, 7, 16, True), (3, 8, 17, True)],
)
def test_milp_equals_cpsat_on_small_strips(dim, n, seed, rotate):
    inst = random_strip(dim, n, seed, rotate)
    cp = strip_height_cpsat(inst, time_limit=60)
    assert cp.status == "optimal"
    result = milp.solve(inst, time_limit=150)  # generous, see test_milp_equals_cpsat_on_drawn_strips
    assert result.status == "optimal", (result.status, result.objective, result.bound, result.notes)
    assert result.objective == cp.height
    assert check_plan(inst, result.plan).feasible


@st.composite
def small_strips(draw) -> Instance:
    """2D strip instances of 6 to 10 rectangles with a wide spread of sizes (area bound often loose)."""
    width = draw(st.integers(5, 10))
    n = draw(st.integers(6, 10))
    rotate = draw(st.booleans())
    sizes = [(draw(st.integers(1, width)), draw(st.integers(1, width))) for _ in range(n)]
    boxes = tuple(Box(f"r{k}", s, ("xy", "yx") if rotate else ("xy",)) for k, s in enumerate(sizes))
    rules = Rules(Support("none"), "any", "none", 0, True, 1e-6)
    return Instance(2, boxes, (ContainerType("strip", (width, None), 1),), None, rules, Objective("height"),
                    name="small-strip")


@drawn(20)
@given(small_strips())
def test_milp_equals_cpsat_on_drawn_strips(inst):
    cp = strip_height_cpsat(inst, time_limit=60)
    assert cp.status == "optimal"
    # generous: every infeasible height step is solved twice (the confirming solve, issue 10), and
    # the machine may be shared; a proof is required, its speed is measured in benchmarks/
    result = milp.solve(inst, time_limit=150)
    assert result.status == "optimal", (result.status, result.objective, result.bound, result.notes)
    assert result.objective == cp.height
    assert all(v <= cp.height + EPS for v in result.bounds.values()), result.bounds
    assert check_plan(inst, result.plan).feasible
