"""A checked plan written into the model: values of its variables, after its symmetry cuts.

The model is complete when every plan the checker accepts, or a symmetric copy of it, is a
solution. `canonical` moves a plan to the copy the model's symmetry cuts keep (each move is a
bijection on plans that keeps every rule, see the cuts in `milp.model`); `plan_values` gives the
orientation, container, position and rank variables their values; `fix` pins them, so a solve
of the fixed model must be feasible. The completeness tests feed oracle plans through here.

Example:
    >>> m = build(prepare(instance), vcap=h, lower=0, upper=h, goal="feasible")  # doctest: +SKIP
    >>> fix(m, plan_values(m, canonical(m, plan)))                              # doctest: +SKIP
"""
from __future__ import annotations

import dataclasses
from typing import Union

import pulp

from instances.model import Move, Plan

from .model import Model


class NotInModel(ValueError):
    """The plan uses an orientation or container the model does not offer that box."""


def _slot_index(m: Model) -> dict[tuple[str, int], int]:
    return {(s.type_id, s.index): k for k, s in enumerate(m.problem.slots)}


def _extent(m: Model, move: Move) -> tuple:
    i = m.problem.ids.index(move.box)
    e = m.problem.ext[i].get(move.orientation)
    if e is None:
        raise NotInModel(f"box {move.box!r}: orientation {move.orientation!r} was removed by preprocessing")
    return e


def canonical(m: Model, plan: Plan) -> Plan:
    """The plan moved to the representative the model's symmetry cuts keep (flip, twins, mirror, bin order)."""
    sym = m.symmetry
    p = m.problem
    moves = list(plan.moves)
    if sym is None:
        return plan
    index = {mv.box: n for n, mv in enumerate(moves)}
    z = p.dim - 1

    def replace_at(n: int, axis: int, value: float) -> None:
        at = list(moves[n].at)
        at[axis] = value
        moves[n] = dataclasses.replace(moves[n], at=tuple(at))

    def in_container(container: tuple[str, int]) -> list[int]:
        return [n for n, mv in enumerate(moves) if tuple(mv.container) == container]

    if sym.flip is not None:
        height = max(mv.at[z] + _extent(m, mv)[z] for mv in moves)
        n = index[p.ids[sym.flip]]
        if 2 * moves[n].at[z] + _extent(m, moves[n])[z] > height:
            for q in in_container(tuple(moves[n].container)):
                replace_at(q, z, height - moves[q].at[z] - _extent(m, moves[q])[z])
    for group in sym.twins:
        spots = sorted((moves[index[p.ids[i]]] for i in group), key=lambda mv: (mv.at[z], mv.at))
        for i, spot in zip(group, spots):
            moves[index[spot.box]] = dataclasses.replace(spot, box=p.ids[i])
        index = {mv.box: n for n, mv in enumerate(moves)}
    for i, k in sym.mirrored:
        n = index[p.ids[i]]
        slot = p.slots[k]
        for ax in range(p.dim - 1):
            if 2 * moves[n].at[ax] + _extent(m, moves[n])[ax] > slot.size[ax]:
                for q in in_container((slot.type_id, slot.index)):
                    replace_at(q, ax, slot.size[ax] - moves[q].at[ax] - _extent(m, moves[q])[ax])
    if sym.bins_ordered:
        renumber = {}
        for type_id in dict.fromkeys(s.type_id for s in p.slots):
            used = sorted({mv.container[1] for mv in moves if mv.container[0] == type_id})
            renumber.update({(type_id, old): (type_id, new) for new, old in enumerate(used)})
        moves = [dataclasses.replace(mv, container=renumber[tuple(mv.container)]) for mv in moves]
    return dataclasses.replace(plan, moves=tuple(moves))


def plan_values(m: Model, plan: Plan) -> dict[str, tuple[Union[pulp.LpVariable, float], float]]:
    """{label: (model variable or constant, value)} for orientation, container, position and rank."""
    p = m.problem
    slots = _slot_index(m)
    out: dict = {}
    for n, mv in enumerate(plan.moves):
        i = p.ids.index(mv.box)
        _extent(m, mv)
        k = slots.get(tuple(mv.container))
        if k is None or k not in p.slots_of[i]:
            raise NotInModel(f"box {mv.box!r}: container {mv.container} is not one the model offers it")
        for o in p.ext[i]:
            out[f"r_{i}_{o}"] = (m.r[i, o], 1.0 if o == mv.orientation else 0.0)
        for kk in p.slots_of[i]:
            out[f"a_{i}_{kk}"] = (m.a[i, kk], 1.0 if kk == k else 0.0)
        for ax in range(p.dim):
            out[f"p_{i}_{ax}"] = (m.pos[i][ax], float(mv.at[ax]))
        if m.rank is not None:
            out[f"t_{i}"] = (m.rank[i], float(n))
    return out


def fix(m: Model, values: dict) -> None:
    """Pin the model's variables to `values`; a constant that disagrees raises NotInModel."""
    for label, (var, value) in values.items():
        if isinstance(var, (int, float)):
            if abs(var - value) > 1e-9:
                raise NotInModel(f"{label}: the model fixes it at {var}, the plan needs {value}")
            continue
        m.lp += var == value, f"fix_{label}"
