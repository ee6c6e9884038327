"""Hypothesis strategies for tiny valid instances over every rule combination, 2D and 3D.

Sources are built physically: each box is dropped at a drawn horizontal position onto whatever
already stands below it, so every box rests (on the floor or on a box whose footprint overlaps
its own). Sizes are small integers so that `oracles.exhaustive` finishes well under a second.
`integer_positions` is always true (the exhaustive oracle is exact there).
"""
from __future__ import annotations

from itertools import permutations
from typing import Optional

from hypothesis import strategies as st

from instances.model import Box, ContainerType, Instance, Objective, Rules, Source, Support

SUPPORTS = (
    Support("none"),
    Support("base-fraction", 0.5),
    Support("base-fraction", 1.0),
    Support("center"),
    Support("corners"),
)

# Size limits per dimension: (max boxes, box extent range, source width range, container width range)
LIMITS = {
    2: {"boxes": 5, "extent": (1, 3), "source": (3, 6), "width": (2, 5), "height": (3, 7)},
    3: {"boxes": 4, "extent": (1, 2), "source": (2, 4), "width": (2, 3), "height": (2, 4)},
}


def drop(sizes: list[tuple[int, ...]], xs: list[tuple[int, ...]]) -> list[tuple[int, ...]]:
    """Rest each box, in turn, at horizontal corner xs[k] on top of what lies below its footprint."""
    placed: list[tuple[tuple[int, ...], tuple[int, ...]]] = []
    out = []
    for size, xy in zip(sizes, xs):
        v = len(size) - 1
        z = 0
        for lo, ext in placed:
            if all(min(xy[k] + size[k], lo[k] + ext[k]) - max(xy[k], lo[k]) > 0 for k in range(v)):
                z = max(z, lo[v] + ext[v])
        at = (*xy, z)
        placed.append((at, size))
        out.append(at)
    return out


@st.composite
def orientation_sets(draw, dim: int) -> tuple[str, ...]:
    """All orientations, upright only, as-it-sits only, or a random non-empty subset."""
    every = tuple("".join(p) for p in permutations("xyz"[:dim]))
    kind = draw(st.sampled_from(["all", "upright", "fixed", "subset"]))
    if kind == "all":
        return every
    if kind == "upright":
        return tuple(o for o in every if o[-1] == every[0][-1])
    if kind == "fixed":
        return (every[0],)
    chosen = draw(st.lists(st.sampled_from(every), min_size=1, max_size=len(every), unique=True))
    return tuple(chosen)


@st.composite
def tiny_instances(draw, dim: Optional[int] = None, with_source: Optional[bool] = None,
                   max_boxes: Optional[int] = None, min_boxes: int = 1,
                   supports: tuple[Support, ...] = SUPPORTS,
                   loadings: tuple[str, ...] = ("from-above", "any"),
                   accesses: tuple[str, ...] = ("side-face", "none"),
                   objectives: tuple[str, ...] = ("height", "height-sum", "bins"),
                   type_counts: tuple[int, ...] = (1, 2), distinct_sizes: bool = False) -> Instance:
    """A tiny valid instance: resting source (or none), targets, counts, any rules and objective.

    The keyword tuples narrow the rules drawn (see `binding_instances`); `distinct_sizes` makes
    every container type differ from the others in footprint or height (see `mixed_instances`).
    """
    dim = draw(st.sampled_from([2, 3])) if dim is None else dim
    lim = LIMITS[dim]
    n = draw(st.integers(min_boxes, max_boxes or lim["boxes"]))
    lo_e, hi_e = lim["extent"]
    sizes = [tuple(draw(st.integers(lo_e, hi_e)) for _ in range(dim)) for _ in range(n)]
    has_source = draw(st.booleans()) if with_source is None else with_source

    objective = draw(st.sampled_from(objectives))
    then = draw(st.sampled_from(["none", "tips"]))
    n_types = draw(st.sampled_from(type_counts))
    # mostly roomy containers (every box fits some way), sometimes tight ones (often infeasible)
    roomy = draw(st.sampled_from([True, True, True, False]))
    least = max(min(s) for s in sizes) if roomy else lim["width"][0]
    containers = []
    for t in range(n_types):
        foot = tuple(draw(st.integers(max(least, lim["width"][0]), max(least, lim["width"][1])))
                     for _ in range(dim - 1))
        closed = objective == "bins" or draw(st.booleans())
        height = draw(st.integers(*lim["height"])) if closed else None
        count = draw(st.integers(1, 2))
        if distinct_sizes and any(c.size == (*foot, height) for c in containers):
            foot = (foot[0] + 1, *foot[1:])  # one unit wider than the type it would repeat
        containers.append(ContainerType(f"c{t}", (*foot, height), count))

    source = None
    ats: list[Optional[tuple[int, ...]]] = [None] * n
    if has_source:
        src_foot = tuple(
            draw(st.integers(max(lim["source"][0], max(s[k] for s in sizes)), max(lim["source"][1], max(s[k] for s in sizes))))
            for k in range(dim - 1)
        )
        xs = [tuple(draw(st.integers(0, src_foot[k] - s[k])) for k in range(dim - 1)) for s in sizes]
        ats = drop(sizes, xs)
        source = Source((*src_foot, None))

    boxes = []
    for k, size in enumerate(sizes):
        target = None
        if n_types > 1:
            target = draw(st.sampled_from([None, *(c.id for c in containers)]))
        boxes.append(Box(f"b{k}", size, draw(orientation_sets(dim)), ats[k], target))

    rules = Rules(
        support=draw(st.sampled_from(supports)),
        loading=draw(st.sampled_from(loadings)),
        access=draw(st.sampled_from(accesses)),
        side_clearance=draw(st.sampled_from([0, 0, 1])),
        integer_positions=True,
        tolerance=1e-6,
    )
    return Instance(dim, tuple(boxes), tuple(containers), source, rules, Objective(objective, then),
                    name="tiny")


@st.composite
def tiny_strip_instances(draw, dim: Optional[int] = None, max_boxes: Optional[int] = None) -> Instance:
    """Classic strip packing: no source, loading any, support none, one open container, height."""
    dim = draw(st.sampled_from([2, 3])) if dim is None else dim
    lim = LIMITS[dim]
    n = draw(st.integers(1, max_boxes or lim["boxes"]))
    lo_e, hi_e = lim["extent"]
    foot = tuple(draw(st.integers(max(2, hi_e), lim["width"][1] + 1)) for _ in range(dim - 1))
    rotate = draw(st.booleans())
    every = tuple("".join(p) for p in permutations("xyz"[:dim]))
    boxes = tuple(
        Box(f"b{k}", tuple(draw(st.integers(lo_e, hi_e)) for _ in range(dim)), every if rotate else every[:1])
        for k in range(n)
    )
    rules = Rules(support=Support("none"), loading="any", access="none", integer_positions=True)
    return Instance(dim, boxes, (ContainerType("strip", (*foot, None), 1),), None, rules,
                    Objective("height", "none"), name="tiny-strip")


def binding_instances(dim: Optional[int] = None) -> st.SearchStrategy[Instance]:
    """Tiny instances where the rules bite: a source with stacks, loading from above, a support
    rule, side-face access, several boxes. Simple bounds rarely close these, so the solver's
    model itself has to find and prove the optimum."""
    return tiny_instances(
        dim=dim, with_source=True, min_boxes=3,
        supports=(Support("center"), Support("corners"), Support("base-fraction", 1.0), Support("base-fraction", 0.5)),
        loadings=("from-above",), accesses=("side-face",), objectives=("height", "height-sum"),
    )


def mixed_instances(dim: Optional[int] = None) -> st.SearchStrategy[Instance]:
    """Tiny instances with two container types of different sizes, boxes free to go to either or
    bound to one: where a big-M taken over one container type would cut off plans in the other."""
    return tiny_instances(dim=dim, type_counts=(2,), distinct_sizes=True)


@st.composite
def split_instances(draw, dim: Optional[int] = None, rules_bite: bool = False) -> Instance:
    """Tiny instances where every box is bound to one container: one to three container types of
    one container each, every box with a target (the container decomposition of `milp.split`).
    With `rules_bite`, a source, loading from above and a support rule (where `milp.heightmap`
    searches), else any rules."""
    import dataclasses

    base = binding_instances(dim) if rules_bite else tiny_instances(dim=dim, objectives=("height", "height-sum"))
    inst = draw(base)
    n_types = draw(st.integers(1, 3))
    containers = []
    for t in range(n_types):
        kind = inst.containers[t % len(inst.containers)]
        if t >= len(inst.containers):
            kind = dataclasses.replace(kind, size=(kind.size[0] + 1, *kind.size[1:]))
        containers.append(dataclasses.replace(kind, id=f"c{t}", count=1))
    boxes = tuple(dataclasses.replace(b, target=draw(st.sampled_from([c.id for c in containers])))
                  for b in inst.boxes)
    return dataclasses.replace(inst, boxes=boxes, containers=tuple(containers), name="tiny-split")
