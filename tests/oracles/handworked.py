"""Hand-worked tiny instances with their optima, the reasoning written beside each.

Shared by the oracle tests (the exhaustive search must reproduce every value) and the solver
tests (the MILP must too). All values were argued by hand; none comes from a publication.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

from instances.model import Box, ContainerType, Instance, Objective, Rules, Source, Support


def instance2d(boxes, width, *, height=None, count=1, source=None, support="center", access="side-face",
               loading="from-above", objective="height", then="none", clearance=0, fraction=None) -> Instance:
    """A 2D instance from (id, size, at, orientations) rows; one container type `c`."""
    bs = tuple(Box(i, s, o, a) for i, s, a, o in boxes)
    rules = Rules(Support(support, fraction), loading, access, clearance, True, 1e-6)
    src = None if source is None else Source(source)
    return Instance(2, bs, (ContainerType("c", (width, height), count),), src, rules, Objective(objective, then),
                    name="hand")


def neighbour_rows(gap: int):
    """a (1 wide, 3 tall) against the left wall; b (1x1) beside it with `gap` between them."""
    return [("a", (1, 3), (0, 0), ("xy", "yx")), ("b", (1, 1), (1 + gap, 0), ("xy",))]


def bridge(support: Support, both: bool) -> Instance:
    """3D: b (2x2x1) on the floor, a1 (1x2x1) on its left half and, if `both`, a2 on its right.

    The a's leave first and take the floor of a 2x2 target; b (never tipped) must then go on
    top of them (no floor left)."""
    boxes = [Box("b", (2, 2, 1), ("xyz", "yxz"), (0, 0, 0)), Box("a1", (1, 2, 1), ("xyz",), (0, 0, 1))]
    if both:
        boxes.append(Box("a2", (1, 2, 1), ("xyz",), (1, 0, 1)))
    rules = Rules(support, "from-above", "side-face", 0, True, 1e-6)
    return Instance(3, tuple(boxes), (ContainerType("c", (2, 2, None), 1),), Source((2, 2, None)), rules,
                    Objective(), name="hand")


def _stack():
    return [("a", (2, 1), (0, 0), ("xy",)), ("b", (2, 1), (0, 1), ("xy",))]


def _overhang():
    return [("a", (1, 1), (0, 0), ("xy",)), ("b", (2, 1), (0, 1), ("xy",)), ("c", (1, 1), (0, 2), ("xy",))]


def _half():
    return [("a", (2, 1), (0, 0), ("xy",)), ("b", (1, 1), (0, 1), ("xy",))]


@dataclass(frozen=True)
class Case:
    """A hand-worked instance and its optimum (`tips` only where the objective counts them)."""

    name: str
    instance: Instance
    status: str
    objective: Optional[int] = None
    tips: Optional[int] = None
    why: str = ""


CASES = (
    Case("stack-reverses", instance2d(_stack(), 2, source=(2, None)), "optimal", 2,
         why="b rests on a, so b goes in first and a on top"),
    Case("walls-block-tip", instance2d([("a", (1, 3), (0, 0), ("xy", "yx"))], 3, height=1, source=(1, None)),
         "infeasible", why="fits the 1-tall target only tipped; both side faces at source walls"),
    Case("walls-no-access-rule", instance2d([("a", (1, 3), (0, 0), ("xy", "yx"))], 3, height=1, source=(1, None),
                                            access="none", then="tips"), "optimal", 1, 1,
         why="without the access rule it lies flat"),
    Case("neighbour-blocks-tip", instance2d(neighbour_rows(0), 3, source=(3, None), support="corners"), "optimal", 3,
         why="b must leave before a can tip; a tipped cannot stand on the 1-wide b (corners): a upright"),
    Case("neighbour-no-access-rule", instance2d(neighbour_rows(0), 3, source=(3, None), support="corners",
                                                access="none", then="tips"), "optimal", 2, 1,
         why="a tipped first on the floor, b on top"),
    Case("gap-beyond-clearance", instance2d(neighbour_rows(1), 3, source=(4, None), support="corners"), "optimal", 2,
         why="a gap of 1 with clearance 0: b does not touch a"),
    Case("gap-within-clearance", instance2d(neighbour_rows(1), 3, source=(4, None), support="corners", clearance=1),
         "optimal", 3, why="clearance 1: b touches a again"),
    Case("center-bridges", instance2d(neighbour_rows(0), 3, source=(3, None), support="center", then="tips"),
         "optimal", 2, 1, why="a tipped (3 wide) has its base centre 1.5 on b's top when b stands at x=1"),
    Case("from-above-overhang", instance2d(_overhang(), 2, source=(2, None), loading="from-above"), "optimal", 3,
         why="order c, b, a; lowered from above, a can only go on top of b"),
    Case("any-loading-overhang", instance2d(_overhang(), 2, source=(2, None), loading="any"), "optimal", 2,
         why="with loading any, a slides under b's overhang"),
    Case("half-base-allowed", instance2d(_half(), 2, source=(2, None), support="base-fraction", fraction=0.5),
         "optimal", 2, why="a stands on b with half its base covered"),
    Case("full-base-required", instance2d(_half(), 2, source=(2, None), support="base-fraction", fraction=1.0),
         "infeasible", why="a can stand neither on b (half covered) nor beside it"),
    Case("bins-no-pair-fits", instance2d([(f"b{k}", (2, 2), None, ("xy", "yx")) for k in range(3)], 3, height=3,
                                         count=3, objective="bins"), "optimal", 3,
         why="2 + 2 > 3 both ways: one box per bin"),
    Case("height-sum-units", instance2d([(f"u{k}", (1, 1), None, ("xy",)) for k in range(4)], 2, count=2,
                                        objective="height-sum", support="none"), "optimal", 2,
         why="1 + 1 in two vans, or 2 in one; volume 4 over floor 2 says >= 2"),
    Case("bridge-corners-two", bridge(Support("corners"), True), "optimal", 2,
         why="each base corner of b lies on a1 or a2"),
    Case("bridge-corners-one", bridge(Support("corners"), False), "infeasible",
         why="the right corners of b are over nothing"),
    Case("bridge-center-one", bridge(Support("center"), False), "optimal", 2,
         why="b's base centre (1, 1) lies on a1's top edge (edges count)"),
    Case("bridge-half-one", bridge(Support("base-fraction", 0.5), False), "optimal", 2,
         why="a1 covers half of b's base"),
    Case("bridge-three-quarters-one", bridge(Support("base-fraction", 0.75), False), "infeasible",
         why="a1 covers only half of b's base"),
)
