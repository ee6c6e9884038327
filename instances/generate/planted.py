"""Planted instances: containers cut into boxes, so the optimum is known by construction.

1. Cut every target container (same size, height H) into boxes that fill it exactly
   (guillotine and pinwheel cuts, `instances.generate.cutting`).
2. Choose a loading order that works from above with full support (a random topological
   order of "carries"), interleaving the containers at random.
3. Build the source by dropping the boxes in the reverse of that order (the last box loaded
   goes in first). A box dropped later lies above or beside earlier ones, so the loading
   order never takes a box before one lying on it.
4. Store some boxes tipped: only where one face of the grip the tip needs is free when the
   planted plan takes it, that is, free of walls and of the boxes already in the source.

Every container is full to height H, so the planted plan meets the volume bound of each
container type: H for `height`, (containers) * H for `height-sum`, the container count for
`bins`. That value is written as `known`.
"""
from __future__ import annotations

from typing import Optional

import numpy as np

from ..model import Box, ContainerType, Instance, Known, Move, Plan, Source, all_orientations, grip_needed, is_upright
from ..validate import validate_instance
from .cutting import Piece, cut_container, loading_order
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


def planted_instance(
    dim: int,
    boxes: int,
    seed: int,
    *,
    width: int = 10,
    depth: Optional[int] = None,
    height: Optional[int] = None,
    targets: int = 1,
    count: Optional[int] = None,
    pinwheel: float = 0.2,
    tipped: float = 0.3,
    upright: float = 0.0,
    flush: float = 0.5,
    source_ratio: float = 1.5,
    support: str = "center",
    min_fraction: Optional[float] = None,
    loading: str = "from-above",
    access: str = "side-face",
    side_clearance: int = 0,
    integer_positions: bool = False,
    objective: str = "height",
    then: str = "none",
    name: Optional[str] = None,
) -> tuple[Instance, Plan]:
    """An instance with a known optimum and the plan that reaches it, reproducible from `seed`.

    `targets` container types of `count` containers each (default 1), all `width` x `depth` (3D) with
    planted height `height` (default: the width, or taller when needed for pieces about a third of
    the width on a side); types beyond one make every box a target of its
    type. Open-top containers unless the objective is `bins`. `pinwheel` is the chance a cut is
    non-guillotine; `tipped` the share of boxes stored tipped, drawn among boxes a tip reshapes
    (fewer when there are not enough such boxes, or when no source position leaves a grip face
    free: such a box is stored upright instead); `upright` the share of "this side up" boxes; `flush` as for random
    instances. Raises ValueError on bad parameters.

    Example: ``inst, plan = planted_instance(2, 12, seed=3, targets=2, tipped=0.4)``.
    """
    count = 1 if count is None else count
    _check(dim, boxes, width, depth, height, targets, count, pinwheel, tipped, upright, flush, source_ratio)
    rules = make_rules(support, min_fraction, loading, access, side_clearance, integer_positions)
    goal = make_objective(objective, then)
    rng = np.random.default_rng(seed)
    footprint = (width,) if dim == 2 else (width, depth or width)
    tall = height or default_height(dim, boxes, width, depth or width, targets * count)
    types = type_ids(targets)
    slots = [(t, k) for t in types for k in range(count)]
    per_slot = apportion(boxes, [1.0] * len(slots))
    cuts = [cut_container(rng, footprint + (tall,), n, pinwheel=pinwheel) for n in per_slot]

    # the global loading order: each container's own order, interleaved at random
    queues = [[cuts[s][k] for k in loading_order(rng, cuts[s])] for s in range(len(slots))]
    tags = [s for s, q in enumerate(queues) for _ in q]
    sequence: list[tuple[int, Piece]] = []
    heads = [0] * len(queues)
    for s in (tags[int(k)] for k in rng.permutation(len(tags))):
        sequence.append((s, queues[s][heads[s]]))
        heads[s] += 1

    n = len(sequence)
    keep_up = chosen(rng, n, upright, list(range(n)))
    reshapes = [k for k in range(n) if k not in keep_up and _tip_changes_shape(sequence[k][1][1])]
    tip = chosen(rng, n, tipped, reshapes)
    upright_set = upright_orientations(dim)
    orient = [_pick(rng, dim, sequence[k][1][1], tipping=k in tip) for k in range(n)]
    extents = [e for _, (_, e) in sequence]
    # wide enough for the chosen source sizes and for any upright fallback (a turn, in 3D)
    fallback = [e for e in extents] + ([(e[1], e[0], e[2]) for e in extents] if dim == 3 else [])
    floor = source_floor(footprint, source_ratio, fallback + [_source_size(e, o) for e, o in zip(extents, orient)])

    stack = Stack(floor, side_clearance)
    at: list[tuple[int, ...]] = [()] * n
    for k in reversed(range(n)):  # the last box loaded goes into the source first
        e = extents[k]
        grip = grip_needed(orient[k])
        pos = stack.drop(rng, _source_size(e, orient[k]), flush=flush, keep_free=grip) if grip else None
        if pos is None:
            if grip:  # no position leaves a grip face free: store it upright instead
                orient[k] = _pick(rng, dim, e, tipping=False)
            pos = stack.drop(rng, _source_size(e, orient[k]), flush=flush)
        assert pos is not None, "the source floor is wider than every box"
        at[k] = pos

    ids = box_ids(n)
    label = [ids[int(k)] for k in rng.permutation(n)]  # ids do not give the planted order away
    box_list = sorted(
        (
            Box(label[k], _source_size(extents[k], orient[k]), upright_set if k in keep_up else all_orientations(dim),
                at[k], slots[sequence[k][0]][0] if targets > 1 else None)
            for k in range(n)
        ),
        key=lambda b: b.id,
    )
    moves = tuple(
        Move(label[k], slots[s], orient[k], piece[0], grip_needed(orient[k])) for k, (s, piece) in enumerate(sequence)
    )
    value = {"height": tall, "height-sum": len(slots) * tall, "bins": len(slots)}[objective]
    name = name or f"planted-{dim}d-{boxes}-s{seed}"
    container_size = footprint + (tall if objective == "bins" else None,)
    inst = Instance(
        dim=dim,
        boxes=tuple(box_list),
        containers=tuple(ContainerType(t, container_size, count) for t in types),
        source=Source(floor + (None,)),
        rules=rules,
        objective=goal,
        name=name,
        known=Known(
            source=f"planted by the stackproof generator (seed {seed}): the boxes are cut from "
            f"{len(slots)} container(s) of height {tall} and fill them exactly",
            optimum=value,
        ),
    )
    validate_instance(inst, file=name)
    return inst, Plan(instance=name, moves=moves)


def _check(dim, boxes, width, depth, height, targets, count, pinwheel, tipped, upright, flush, source_ratio) -> None:
    """Validate the parameters of `planted_instance` (ValueError naming the parameter)."""
    check_dim_boxes(dim, boxes)
    for what, v in (("width", width), ("depth", depth), ("height", height), ("targets", targets), ("count", count)):
        if v is not None and (not isinstance(v, (int, np.integer)) or v < 1):
            raise ValueError(f"{what} must be a whole number >= 1, got {v}")
    if depth is not None and dim == 2:
        raise ValueError("depth is for 3D instances only")
    for what, v in (("pinwheel", pinwheel), ("tipped", tipped), ("upright", upright), ("flush", flush)):
        check_share(what, v)
    if not source_ratio > 0:
        raise ValueError(f"source_ratio must be positive, got {source_ratio}")
    containers = targets * count
    if boxes < containers:
        raise ValueError(f"boxes ({boxes}) must be at least the number of containers ({containers}): each container is cut into boxes")
    cells = width * (depth or width if dim == 3 else 1) * (height or default_height(dim, boxes, width, depth or width, containers))
    per = -(-boxes // containers)
    if per > cells:
        raise ValueError(f"{per} boxes do not fit in a container of {cells} unit cells; raise width or height")


def default_height(dim: int, boxes: int, width: int, depth: int, containers: int) -> int:
    """The width, or the height that gives pieces of about a third of the width on each side."""
    per = -(-boxes // containers)
    side = max(1.0, width / 3)
    floor = width * (depth if dim == 3 else 1)
    return max(width, int(np.ceil(per * side**dim / floor - 1e-9)))


def _tip_changes_shape(ext: tuple[int, ...]) -> bool:
    """True when some tip gives the box a different packed shape (not a cube or a square)."""
    return len(set(ext)) > 1


def _pick(rng: np.random.Generator, dim: int, ext: tuple[int, ...], *, tipping: bool) -> str:
    """An orientation for the planted move: a tip that changes the shape, or an upright one."""
    if not tipping:
        return upright_orientations(dim)[int(rng.integers(dim - 1))]
    tips = [o for o in all_orientations(dim) if not is_upright(o) and _source_size(ext, o) != ext]
    return tips[int(rng.integers(len(tips)))]


def _source_size(packed: tuple[int, ...], orientation: str) -> tuple[int, ...]:
    """The size as it sits in the source so that `orientation` packs it with extents `packed`."""
    size = [0] * len(packed)
    for k, letter in enumerate(orientation):
        size["xyz".index(letter)] = packed[k]
    return tuple(size)
