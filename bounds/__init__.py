"""Lower bounds on the objective of an unstack-and-pack instance.

`all_bounds(instance)` computes every bound that applies to the instance's objective, each a
`BoundValue(name, value, reason, seconds)` with a stable name; `best(instance)` gives the
largest value and all values by name. A value of `math.inf` means the bounds prove the
instance infeasible (some box fits nowhere, or more containers are needed than exist).

Names, by objective:
- height and height-sum: `area`, `tallest`, `stack`, `dff`, `bar` (3D: up to 40 boxes), `order` (with a
  source and loading `from-above`), for height in 2D with integer sizes `contiguous`, and for
  height-sum with several types `type-sum`;
- bins: `area`, `dff`, `half-size`, `big-items`, and with several types `type-sum`;
- `fit` alone when some box fits no allowed container.

Every bound is a relaxation valid for every feasible plan; rounding up happens only when the
data imply integral optima (see `View.integral_heights`).

Example:
    >>> from instances.model import Box, ContainerType, Instance, Rules, Support
    >>> inst = Instance(dim=2, boxes=(Box("a", (2.0, 3.0), ("xy",)), Box("b", (2.0, 1.0), ("xy",))),
    ...                 containers=(ContainerType("strip", (3.0, None)),),
    ...                 rules=Rules(support=Support("none"), loading="any"))
    >>> best(inst)[0]
    4.0
"""
from __future__ import annotations

import math
import time
from dataclasses import replace
from typing import Callable, Optional

from instances.model import Instance

from . import bins as _bins
from . import geometric as _geo
from .bar import TIME_LIMIT as BAR_SECONDS
from .bar import bar_bound
from .common import BoundValue, View
from .contiguous import TIME_LIMIT as CONTIGUOUS_SECONDS
from .contiguous import contiguous_bound
from .order import order_bound, order_per_container

__all__ = ["BoundValue", "all_bounds", "best"]


def all_bounds(instance: Instance, time_limit: float = math.inf) -> list[BoundValue]:
    """Every lower bound that applies to `instance`, in a fixed order.

    `time_limit` caps the bounds that iterate or solve (bar, contiguous); the others are fast.
    """
    view = View(instance, time_limit)
    objective = instance.objective.minimise
    if not instance.boxes:
        return [BoundValue("area", 0.0, "no boxes")]
    stray = view.unplaceable()
    if stray is not None:
        return [BoundValue("fit", math.inf, f"box {stray.id} fits no allowed container in any usable orientation")]
    out = [b for b in (_timed(name, fn) for name, fn in _bounds_for(view, objective)) if b is not None]
    if objective == "height":
        lower = max((b.value for b in out), default=0.0)
        extra = _timed("contiguous", lambda: contiguous_bound(
            view, lower, time_limit=min(CONTIGUOUS_SECONDS, view.time_left() / 2)))
        if extra is not None:
            out.append(extra)
    return out


def best(instance: Instance, time_limit: float = math.inf) -> tuple[float, dict[str, float]]:
    """(largest bound, {name: value}) for `instance`, the slow bounds capped at `time_limit` seconds."""
    values = {b.name: b.value for b in all_bounds(instance, time_limit)}
    return max(values.values(), default=0.0), values


def _timed(name: str, fn: Callable[[], Optional[tuple[float, str]]]) -> Optional[BoundValue]:
    start = time.perf_counter()
    got = fn()
    if got is None:
        return None
    value, reason = got
    return BoundValue(name, float(value), reason, time.perf_counter() - start)


def _bounds_for(view: View, objective: str) -> list[tuple[str, Callable]]:
    if objective == "bins":
        if not _bins.closed(view):
            return []
        out = [("area", lambda: _bins.area(view)), ("dff", lambda: _bins.dual_feasible(view)),
               ("half-size", lambda: _bins.half_size(view)), ("big-items", lambda: _bins.big_items(view))]
        if len(view.instance.containers) > 1:
            out.append(("type-sum", lambda: _type_sum(view, objective)))
        return out
    out = [
        ("area", lambda: _geo.area(view, objective)),
        ("tallest", lambda: _geo.tallest(view, objective)),
        ("stack", lambda: _geo.must_stack(view, objective)),
        ("dff", lambda: _geo.dual_feasible(view, objective)),
        ("bar", lambda: _bar(view, objective)),
        ("order", lambda: order_bound(view, objective)),
    ]
    if objective == "height-sum" and len(view.instance.containers) > 1:
        out.append(("type-sum", lambda: _type_sum(view, objective)))
    return out


def _bar(view: View, objective: str) -> Optional[tuple[float, str]]:
    got = bar_bound(view.instance, view, objective, time_limit=min(BAR_SECONDS, view.time_left()))
    if got is None:
        return None
    value, converged = got
    return value, "bar relaxation LP, " + ("solved to optimality" if converged else "dual bound at the iteration limit")


def _type_sum(view: View, objective: str) -> tuple[float, str]:
    """Containers of different types are different containers: per-type bounds add up.

    For each type k, the boxes that can only go to k form an instance of their own (no source,
    their usable orientations kept); its best bound counts the containers (bins) or the sum
    of heights (height-sum) of type k. The order bound of k is added in for height-sum.
    """
    inst = view.instance
    order = order_per_container(view) if objective == "height-sum" else None
    total, parts = 0.0, []
    for k in inst.containers:
        boxes = view.forced(k)
        if not boxes:
            continue
        sub = replace(inst, source=None, containers=(k,), name=None, known=None,
                      boxes=tuple(replace(b, at=None, target=None, orientations=view.orientations(b)) for b in boxes))
        value, _ = best(sub, view.time_left())
        if order and k.id in order:
            value = max(value, view.round_height(order[k.id][0]))
        if objective == "bins" and value > k.count:
            return math.inf, f"the boxes bound for {k.id} need {value:g} containers, only {k.count} exist"
        total += value
        parts.append(f"{k.id} {value:g}")
    return total, "per-type bounds summed: " + ", ".join(parts)
