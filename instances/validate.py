"""Meaning checks of an instance (PROBLEM.md section 1): what the JSON Schema cannot say.

Dimensions agree, references resolve, the rules fit together, and the source arrangement is
physically possible (inside, no overlaps, every box rests). All problems are collected and
raised together as one InputError naming the file and the JSON path of each.
"""
from __future__ import annotations

import math
from typing import Optional

from .errors import InputError
from .geometry import Placed, footprints_overlap, volumes_overlap
from .model import AXES, Instance, Plan, all_orientations


def validate_instance(instance: Instance, file: Optional[str] = None) -> None:
    """Raise InputError listing every meaning problem of `instance`; return None when valid."""
    problems = instance_problems(instance)
    if problems:
        raise InputError(file, problems)


def instance_problems(instance: Instance) -> list[tuple[str, str]]:
    """Every (json path, message) problem of an instance; empty when it is valid."""
    out: list[tuple[str, str]] = []
    dim = instance.dim
    if dim not in AXES:
        return [("dim", f"must be 2 or 3, got {dim}")]
    out += _dimension_problems(instance)
    if out:
        return out  # geometry below needs consistent dimensions
    out += _reference_problems(instance)
    out += _rule_problems(instance)
    if instance.source is not None:
        out += source_problems(instance)
    return out


def _size_problems(path: str, size: tuple, dim: int, open_top: bool) -> list[tuple[str, str]]:
    out = []
    if len(size) != dim:
        out.append((path, f"must have {dim} numbers (dim is {dim}), got {len(size)}"))
        return out
    for k, s in enumerate(size):
        if s is None:
            if not open_top or k != dim - 1:
                out.append((f"{path}[{k}]", "only the last (vertical) extent may be null"))
        elif not (isinstance(s, (int, float)) and math.isfinite(s) and s > 0):
            out.append((f"{path}[{k}]", f"must be a positive finite number, got {s}"))
    return out


def _dimension_problems(instance: Instance) -> list[tuple[str, str]]:
    dim = instance.dim
    out: list[tuple[str, str]] = []
    if instance.source is not None:
        out += _size_problems("source.size", instance.source.size, dim, open_top=True)
    for i, b in enumerate(instance.boxes):
        out += _size_problems(f"boxes[{i}].size", b.size, dim, open_top=False)
        if instance.source is None and b.at is not None:
            out.append((f"boxes[{i}].at", "a position in the source is given but the instance has no source"))
        if instance.source is not None and b.at is None:
            out.append((f"boxes[{i}].at", "is missing: every box needs its position in the source"))
        if b.at is not None and len(b.at) != dim:
            out.append((f"boxes[{i}].at", f"must have {dim} numbers (dim is {dim}), got {len(b.at)}"))
        valid = set(all_orientations(dim))
        for j, o in enumerate(b.orientations):
            if o not in valid:
                out.append((f"boxes[{i}].orientations[{j}]", f"{o!r} is not an orientation in {dim}D (one of {', '.join(sorted(valid))})"))
    for i, c in enumerate(instance.containers):
        out += _size_problems(f"containers[{i}].size", c.size, dim, open_top=True)
        if not (isinstance(c.count, int) and c.count >= 1):
            out.append((f"containers[{i}].count", f"must be a whole number >= 1, got {c.count}"))
    return out


def _reference_problems(instance: Instance) -> list[tuple[str, str]]:
    out: list[tuple[str, str]] = []
    seen: dict[str, int] = {}
    for i, b in enumerate(instance.boxes):
        if b.id in seen:
            out.append((f"boxes[{i}].id", f"duplicate box id {b.id!r} (also boxes[{seen[b.id]}])"))
        seen.setdefault(b.id, i)
    types: dict[str, int] = {}
    for i, c in enumerate(instance.containers):
        if c.id in types:
            out.append((f"containers[{i}].id", f"duplicate container id {c.id!r} (also containers[{types[c.id]}])"))
        types.setdefault(c.id, i)
    for i, b in enumerate(instance.boxes):
        if b.target is not None and b.target not in types:
            out.append((f"boxes[{i}].target", f"unknown container type {b.target!r} (known: {', '.join(sorted(types))})"))
    return out


def _rule_problems(instance: Instance) -> list[tuple[str, str]]:
    out: list[tuple[str, str]] = []
    s = instance.rules.support
    if s.rule == "base-fraction":
        if s.min_fraction is None:
            out.append(("rules.support.min_fraction", "is required with rule 'base-fraction'"))
        elif not 0 < s.min_fraction <= 1:
            out.append(("rules.support.min_fraction", f"must be in (0, 1], got {s.min_fraction}"))
    elif s.min_fraction is not None:
        out.append(("rules.support.min_fraction", f"goes with rule 'base-fraction' only, not {s.rule!r}"))
    if instance.objective.minimise == "bins":
        for i, c in enumerate(instance.containers):
            if c.height is None:
                out.append((f"containers[{i}].size[{instance.dim - 1}]", "objective 'bins' needs containers with a height, got null"))
    if instance.rules.side_clearance < 0:
        out.append(("rules.side_clearance", f"must be >= 0, got {instance.rules.side_clearance}"))
    if instance.rules.tolerance < 0:
        out.append(("rules.tolerance", f"must be >= 0, got {instance.rules.tolerance}"))
    return out


def source_boxes(instance: Instance) -> list[Placed]:
    """The boxes as they stand in the source (as-it-sits extents)."""
    return [Placed(b.id, tuple(b.at), tuple(b.size)) for b in instance.boxes]  # type: ignore[arg-type]


def source_problems(instance: Instance) -> list[tuple[str, str]]:
    """The source must be physically possible: inside, no overlaps, every box rests."""
    tol = instance.rules.tolerance
    size = instance.source.size  # type: ignore[union-attr]
    placed = source_boxes(instance)
    out: list[tuple[str, str]] = []
    for i, p in enumerate(placed):
        for k in range(instance.dim):
            if p.lo(k) < -tol:
                out.append((f"boxes[{i}].at[{k}]", f"box {p.id!r} sticks out of the source: {p.lo(k)} < 0"))
            if size[k] is not None and p.hi(k) > size[k] + tol:
                out.append((f"boxes[{i}].at[{k}]", f"box {p.id!r} sticks out of the source: {p.lo(k)} + {p.ext[k]} > {size[k]}"))
    for i in range(len(placed)):
        for j in range(i + 1, len(placed)):
            if volumes_overlap(placed[i], placed[j], tol):
                out.append((f"boxes[{j}].at", f"box {placed[j].id!r} overlaps box {placed[i].id!r} (boxes[{i}]) in the source"))
    for i, p in enumerate(placed):
        if abs(p.bottom) <= tol:
            continue
        if not any(abs(q.top - p.bottom) <= tol and footprints_overlap(p, q, tol) for q in placed if q is not p):
            out.append((f"boxes[{i}].at[{instance.dim - 1}]", f"box {p.id!r} floats: its bottom {p.bottom} is neither on the floor nor on the top of a box below it"))
    return out


def plan_problems(instance: Instance, plan: Plan) -> list[tuple[str, str]]:
    """References of a plan that cannot be resolved against `instance` (bad input, not infeasibility).

    Unknown box ids, unknown container types, container indices beyond `count`, positions and
    orientations of the wrong dimension. Rule breaking (order, overlap, support, ...) is the
    checker's business, not this function's.
    """
    out: list[tuple[str, str]] = []
    boxes = {b.id for b in instance.boxes}
    types = {c.id: c for c in instance.containers}
    dim = instance.dim
    for k, m in enumerate(plan.moves):
        if m.box not in boxes:
            out.append((f"moves[{k}].box", f"unknown box id {m.box!r}"))
        ctype = types.get(m.container[0])
        if ctype is None:
            out.append((f"moves[{k}].container[0]", f"unknown container type {m.container[0]!r} (known: {', '.join(sorted(types))})"))
        elif not 0 <= m.container[1] < ctype.count:
            out.append((f"moves[{k}].container[1]", f"index {m.container[1]} out of range: {ctype.id!r} has count {ctype.count}"))
        if len(m.at) != dim:
            out.append((f"moves[{k}].at", f"must have {dim} numbers (dim is {dim}), got {len(m.at)}"))
        if len(m.orientation) != dim:
            out.append((f"moves[{k}].orientation", f"{m.orientation!r} is not a {dim}D orientation"))
    return out


def validate_plan(instance: Instance, plan: Plan, file: Optional[str] = None) -> None:
    """Raise InputError when the plan refers to boxes or containers the instance does not have."""
    problems = plan_problems(instance, plan)
    if problems:
        raise InputError(file, problems)
