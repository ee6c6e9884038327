"""Random instances: boxes drawn from a size class and dropped into a source so they rest.

Difficulty controls (each a parameter of `random_instance`): a source wider than the target
(`source_ratio`), stack height (the same ratio: a narrow source stacks high), the order boxes
were dropped in (`drop_order`: `large-first` puts big boxes at the bottom, so unstacking hands
over small ones first, the reverse of loading big boxes first, common practice), boxes that fit the target
only tipped (`must_tip`), "this side up" boxes (`upright`), faces blocked by neighbours or walls
(`flush`), several destinations in chosen proportions (`targets`, `shares`), and every rule and
objective variant of PROBLEM.md.
"""
from __future__ import annotations

from typing import Optional, Sequence

import numpy as np

from ..checker import check_plan
from ..drop import drop_plan
from ..model import Box, ContainerType, Instance, Source, all_orientations
from ..validate import validate_instance
from .classes import draw_sizes, find_class
from .options import (
    apportion,
    box_ids,
    check_dim_boxes,
    check_share,
    chosen,
    make_objective,
    make_rules,
    type_ids,
    upright_orientations,
)
from .stacking import Stack, source_floor

DROP_ORDERS = ("random", "large-first", "small-first")
FEASIBLE_TRIES = 20


def has_checked_plan(instance: Instance) -> bool:
    """True when the constructive plan (instances.drop) finds a plan the checker accepts."""
    plan = drop_plan(instance)
    return plan is not None and check_plan(instance, plan).feasible


def random_instance(
    dim: int,
    boxes: int,
    seed: int,
    *,
    size_class: str = "uniform",
    width: int = 10,
    depth: Optional[int] = None,
    height: Optional[int] = None,
    source_ratio: float = 1.5,
    targets: int = 1,
    shares: Optional[Sequence[float]] = None,
    count: Optional[int] = None,
    upright: float = 0.0,
    must_tip: float = 0.0,
    flush: float = 0.5,
    drop_order: str = "random",
    support: str = "center",
    min_fraction: Optional[float] = None,
    loading: str = "from-above",
    access: str = "side-face",
    side_clearance: int = 0,
    integer_positions: bool = False,
    objective: str = "height",
    then: str = "none",
    name: Optional[str] = None,
    feasible: bool = True,
) -> Instance:
    """A random instance with `boxes` boxes resting in a source, reproducible from `seed`.

    Sizes are integers drawn from `size_class` (see `instances.generate.classes`) scaled to the
    target extents `width` x `depth` (3D) and `height` (vertical sizes scale with `height`, or
    with `width` for an open top). Containers: `targets` types of equal size, open-top unless
    `height` is given (objective `bins` defaults `height` to `width`), `count` of each (default 1,
    and for `bins` as many as boxes go to the type, so every box has a bin). `shares` splits the
    boxes over the types exactly (largest remainder); `upright` and `must_tip` are exact shares
    of the boxes: "this side up" boxes, and boxes lying flat in the source that are longer than
    the target is wide and deep, so they fit only tipped. With `feasible` (default) the instance
    is redrawn from the same generator until the constructive plan of `instances.drop` finds a
    plan the checker accepts, so it is feasible (up to 20 draws). Raises ValueError on bad
    parameters.

    Example: ``random_instance(2, 8, seed=1, size_class="wide", must_tip=0.25, targets=2)``.
    """
    p = _check(dim, boxes, size_class, width, depth, height, source_ratio, targets, shares, count,
               upright, must_tip, flush, drop_order, objective, side_clearance)
    rules = make_rules(support, min_fraction, loading, access, side_clearance, integer_positions)
    goal = make_objective(objective, then)
    rng = np.random.default_rng(seed)
    cls = find_class(dim, size_class)
    label = name or f"random-{dim}d-{cls.name}-{boxes}-s{seed}"

    def draw() -> Instance:
        footprint = (width,) if dim == 2 else (width, depth or width)
        tall = p["height"] or width
        sizes, _ = draw_sizes(rng, cls, boxes, footprint + (tall,))
        floor = source_floor(footprint, source_ratio, [(width,) * dim])
        tipped = chosen(rng, boxes, must_tip, list(range(boxes)))
        keep_up = chosen(rng, boxes, upright, [k for k in range(boxes) if k not in tipped])
        for k in sorted(tipped):
            sizes[k] = _flat_long(rng, sizes[k], footprint, floor, p["height"], side_clearance)
        floor = source_floor(footprint, source_ratio, sizes)

        ids = box_ids(boxes)
        types = type_ids(targets)
        dest: list[Optional[str]] = [None] * boxes
        if targets > 1:
            labels = [t for t, n in zip(types, apportion(boxes, shares or [1.0] * targets)) for _ in range(n)]
            dest = [labels[int(k)] for k in rng.permutation(boxes)]

        stack = Stack(floor, side_clearance)
        at: list[tuple[int, ...]] = [()] * boxes
        for k in _drop_sequence(rng, sizes, drop_order):
            pos = stack.drop(rng, sizes[k], flush=flush)
            assert pos is not None, "every box is narrower than the source floor"
            at[k] = pos

        upright_set = upright_orientations(dim)
        box_list = tuple(
            Box(ids[k], sizes[k], upright_set if k in keep_up else all_orientations(dim), at[k], dest[k])
            for k in range(boxes)
        )
        container_size = footprint + (p["height"],)
        containers = tuple(
            ContainerType(t, container_size, _count(count, objective, sum(1 for d in dest if d in (t, None))))
            for t in types
        )
        inst = Instance(
            dim=dim,
            boxes=box_list,
            containers=containers,
            source=Source(floor + (None,)),
            rules=rules,
            objective=goal,
            name=label,
        )
        validate_instance(inst, file=label)
        return inst

    for _ in range(FEASIBLE_TRIES if feasible else 1):
        inst = draw()
        if not feasible or has_checked_plan(inst):
            return inst
    raise ValueError(f"no draw of {FEASIBLE_TRIES} had a plan the constructive heuristic could find; "
                     "relax the controls (must_tip, flush, side_clearance, support) or pass feasible=False")


def _check(dim, boxes, size_class, width, depth, height, source_ratio, targets, shares, count,
           upright, must_tip, flush, drop_order, objective, side_clearance) -> dict:
    """Validate the parameters of `random_instance` (ValueError naming the parameter)."""
    check_dim_boxes(dim, boxes)
    find_class(dim, size_class)
    for what, v in (("width", width), ("depth", depth), ("height", height), ("count", count)):
        if v is not None and (not isinstance(v, (int, np.integer)) or v < 1):
            raise ValueError(f"{what} must be a whole number >= 1, got {v}")
    if depth is not None and dim == 2:
        raise ValueError("depth is for 3D instances only")
    if not source_ratio > 0:
        raise ValueError(f"source_ratio must be positive, got {source_ratio}")
    if not isinstance(targets, (int, np.integer)) or targets < 1:
        raise ValueError(f"targets must be a whole number >= 1, got {targets}")
    if shares is not None and len(shares) != targets:
        raise ValueError(f"shares must give one share per target type ({targets}), got {len(shares)}")
    if shares is not None:
        apportion(boxes, shares)
    for what, v in (("upright", upright), ("must_tip", must_tip), ("flush", flush)):
        check_share(what, v)
    if upright + must_tip > 1 + 1e-9:
        raise ValueError(f"upright ({upright}) and must_tip ({must_tip}) boxes are distinct: their shares must sum to at most 1")
    if drop_order not in DROP_ORDERS:
        raise ValueError(f"drop_order must be one of {', '.join(DROP_ORDERS)}; got {drop_order!r}")
    if objective == "bins" and height is None:
        height = width
    reach = max(width, depth or width)
    if must_tip > 0:
        room = reach + side_clearance + 2  # a long box must leave one end face clear of the walls
        if int(np.ceil(source_ratio * min(width, depth or width) - 1e-9)) < room:
            raise ValueError(f"must_tip needs a source at least {room} wide (longer than the target, plus room "
                             f"to grip one end); source_ratio * {min(width, depth or width)} is less: raise source_ratio")
        if height is not None and height <= reach:
            raise ValueError(f"must_tip needs targets taller ({height}) than wide ({reach}): a tipped long box must stand in them")
    return {"height": height}


def _flat_long(rng: np.random.Generator, size: tuple[int, ...], footprint: tuple[int, ...],
               floor: tuple[int, ...], height: Optional[int], clearance: int) -> tuple[int, ...]:
    """A box lying flat in the source, longer than any target extent: it fits only tipped.

    It is short enough to leave one end face clear of the source walls, or it could never be gripped.
    """
    reach = max(footprint)
    narrow = min(footprint)
    dim = len(size)
    axis = int(rng.integers(0, dim - 1))  # source axis the long side lies along
    top = min(floor[axis] - clearance - 1, height if height is not None else floor[axis])
    long_side = int(rng.integers(reach + 1, top + 1))
    rest = [min(s, narrow) for s in size]
    out = list(rest)
    out[axis] = long_side
    return tuple(out)


def _drop_sequence(rng: np.random.Generator, sizes: list[tuple[int, ...]], drop_order: str) -> list[int]:
    """The order boxes go into the source (first dropped lies lowest)."""
    perm = [int(k) for k in rng.permutation(len(sizes))]
    if drop_order == "random":
        return perm
    vol = {k: int(np.prod(sizes[k])) for k in perm}
    return sorted(perm, key=lambda k: -vol[k] if drop_order == "large-first" else vol[k])


def _count(count: Optional[int], objective: str, boxes_of_type: int) -> int:
    if count is not None:
        return count
    return max(1, boxes_of_type) if objective == "bins" else 1
