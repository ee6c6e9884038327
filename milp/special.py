"""Special-structure plan finders: fast checked plans for recognised classic cases.

A finder recognises a structure it handles (for example 1D bin packing, or a strip whose bound
is a perfect packing) and proposes plans; it never claims a proof. The pipeline hands each plan
to the checker, and optimality still comes only from a checked plan meeting a proved bound.
A finder is `f(instance, problem, lower, deadline) -> Iterable[Plan]`, where `lower` is the
proved lower bound so far and `deadline` a `time.perf_counter()` value it must respect.
"""
from __future__ import annotations

import time
from typing import Callable, Iterable, Iterator

from instances.model import Instance, Plan

from .problem import Problem

Finder = Callable[[Instance, Problem, float, float], Iterable[Plan]]

#: (name, finder) in the order they are tried; each module adds itself here.
FINDERS: list[tuple[str, Finder]] = []


def special_plans(instance: Instance, problem: Problem, lower: float, deadline: float) -> Iterator[tuple[str, Plan]]:
    """Plans proposed by every finder whose structure matches, with the finder's name."""
    for name, finder in FINDERS:
        if time.perf_counter() >= deadline:
            return
        for plan in finder(instance, problem, lower, deadline):
            yield name, plan


from . import binpack1d as _binpack1d  # noqa: E402  (a finder module registers after FINDERS exists)

FINDERS.append(("1D bin packing", _binpack1d.plans_1d))

from . import perfect as _perfect  # noqa: E402

FINDERS.append(("perfect packing search", _perfect.perfect_plans))
