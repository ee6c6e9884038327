"""From solver values to a plan: the chosen orientation, container and position of every box, in order.

Positions are cleaned of solver round-off (integers when the rules ask for them); with loading
from above each box is settled onto the highest earlier box under its footprint, which is where
the model put it up to round-off. The sequence is the order potentials where the source imposes
an order, else bottom-up (always a valid sequence then, see `model.loading_from_above`).
"""
from __future__ import annotations

from instances.geometry import Placed, footprints_overlap
from instances.model import Move, Plan, grip_needed

from .model import Model


def _value(v) -> float:
    if isinstance(v, (int, float)):
        return float(v)
    x = v.varValue if hasattr(v, "varValue") else v.value()
    return float(x or 0.0)


def extract_plan(m: Model) -> Plan:
    p = m.problem
    inst = p.instance
    tol = inst.rules.tolerance
    chosen = []
    for i in range(p.n):
        o = max(p.ext[i], key=lambda o: _value(m.r[i, o]))
        k = max(p.slots_of[i], key=lambda k: _value(m.a[i, k]))
        pos = []
        for ax in range(p.dim):
            x = max(0.0, _value(m.pos[i][ax]))
            x = float(round(x)) if inst.rules.integer_positions else round(x, 9)
            pos.append(x)
        rank = _value(m.rank[i]) if m.rank is not None else 0.0
        chosen.append((rank, pos[-1], i, o, k, pos))
    chosen.sort(key=lambda c: (round(c[0], 6), c[1], c[2]))
    placed: dict[int, list[Placed]] = {}
    moves = []
    settle = inst.rules.loading == "from-above" and inst.rules.support.rule != "none"
    for _, _, i, o, k, pos in chosen:
        ext = p.ext[i][o]
        here = placed.setdefault(k, [])
        if settle:
            probe = Placed(p.ids[i], tuple(pos), ext)
            z = max((q.top for q in here if footprints_overlap(probe, q, tol)), default=0.0)
            pos[-1] = z
        here.append(Placed(p.ids[i], tuple(pos), ext))
        slot = p.slots[k]
        moves.append(Move(p.ids[i], (slot.type_id, slot.index), o, tuple(pos), grip_needed(o)))
    return Plan(instance=inst.name, moves=tuple(moves))
