"""The mixed-integer model of PROBLEM.md: variables, then one function per constraint family.

Formulation: relative positions with big-M (Chen, Lee & Shen 1995) for non-overlap; orientation
and container-assignment binaries; order potentials (one continuous rank per box, MTZ-style) for
the sequence, bound by lift edges, side-face access and loading from above; supporter binaries for
the support rules. Each family is named after the rule of PROBLEM.md section 3-5 it encodes.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from itertools import combinations
from typing import Optional, Union

import pulp

from instances.model import FACES_OF_GRIP, grip_needed, is_upright

from .problem import Problem

Expr = Union[pulp.LpAffineExpression, pulp.LpVariable, float]


@dataclass
class Model:
    """A built PuLP model with handles on the variables the extractor and the pipeline read."""

    lp: pulp.LpProblem
    problem: Problem
    r: dict  # (i, orientation) -> binary or 1
    a: dict  # (i, slot) -> binary or 1
    pos: list  # i -> [coordinate variables]
    rank: Optional[list]  # i -> order potential, None when order is free
    main: Expr  # the main objective expression
    tips: Expr  # number of tipped boxes
    vcap: float  # vertical cap used for open tops
    exact: bool = True  # False when a restriction was needed (see `restrictions`)
    restrictions: list[str] = field(default_factory=list)
    sep: dict = field(default_factory=dict)
    symmetry: Optional["Symmetry"] = None


@dataclass(frozen=True)
class Symmetry:
    """Which symmetry cuts a model carries, so a plan can be moved to the representative they keep.

    twins: groups of interchangeable boxes, ordered bottom-up in index order; mirrored: (box,
    slot) pairs whose box lies in the low half of the slot along every horizontal axis; flip: the
    box that lies in the lower half of the packed height, or None; bins_ordered: used containers
    of a type come first (bins objective).
    """

    twins: tuple[tuple[int, ...], ...] = ()
    mirrored: tuple[tuple[int, int], ...] = ()
    flip: Optional[int] = None
    bins_ordered: bool = False


def _const(value) -> bool:
    return not isinstance(value, (pulp.LpVariable, pulp.LpAffineExpression))


class Builder:
    """Holds the variables while the constraint families are added (one method per family)."""

    def __init__(self, p: Problem, vcap: float, name: str = "unstack_and_pack"):
        self.p = p
        self.lp = pulp.LpProblem(name, pulp.LpMinimize)
        self.vcap = vcap
        self.tol = p.instance.rules.tolerance
        self.restrictions: list[str] = []
        d = p.dim
        self.sizes = [tuple(vcap if s is None else s for s in slot.size) for slot in p.slots]
        # orientation binaries
        self.r = {}
        for i in range(p.n):
            os_ = list(p.ext[i])
            if len(os_) == 1:
                self.r[i, os_[0]] = 1
            else:
                for o in os_:
                    self.r[i, o] = self.bin(f"r_{i}_{o}")
                self.lp += pulp.lpSum(self.r[i, o] for o in os_) == 1, f"one_orientation_{i}"
        # container assignment binaries
        self.a = {}
        for i in range(p.n):
            ks = p.slots_of[i]
            if len(ks) == 1:
                self.a[i, ks[0]] = 1
            else:
                for k in ks:
                    self.a[i, k] = self.bin(f"a_{i}_{k}")
                self.lp += pulp.lpSum(self.a[i, k] for k in ks) == 1, f"one_container_{i}"
        cat = "Integer" if p.instance.rules.integer_positions else "Continuous"
        self.pos = []
        for i in range(p.n):
            row = []
            for ax in range(d):
                hi = self.reach(i, ax) - p.min_extent(i, ax)
                row.append(self.var(f"p_{i}_{ax}", lowBound=0, upBound=max(0.0, hi), cat=cat))
            self.pos.append(row)
        self.rank = None
        if p.orders_matter():
            self.rank = [self.var(f"t_{i}", lowBound=0, upBound=p.n - 1) for i in range(p.n)]
        self.sep: dict = {}
        self.sup: dict = {}
        self.floor: dict = {}
        self.flip_box: Optional[int] = None
        self.twins: set = set()  # boxes ordered by `identical_boxes` (the mirror must not use them)
        self.twin_groups: list[tuple[int, ...]] = []
        self.mirrored: list[tuple[int, int]] = []
        self.bins_ordered = False

    # ---------------------------------------------------------------- variables
    def var(self, name: str, lowBound=None, upBound=None, cat: str = "Continuous") -> pulp.LpVariable:
        return self.lp.add_variable(name, lowBound, upBound, cat=cat)

    def bin(self, name: str) -> pulp.LpVariable:
        return self.var(name, 0, 1, "Binary")

    # ---------------------------------------------------------------- big-M
    def reach(self, i: int, ax: int) -> float:
        """The farthest any point of box i can lie from the origin along ax: its largest usable container."""
        return max(self.sizes[k][ax] for k in self.p.slots_of[i])

    def big_m(self, ax: int, *boxes: int, margin: float = 0.0) -> float:
        """Big-M for a disjunction between `boxes` along ax, valid whatever containers they end up in.

        Invariant: in every solution each coordinate of box b (its position, centre, far side)
        lies in [0, reach(b, ax)], because positions are non-negative and containment holds in
        b's own container, whichever of b's containers that is. So a difference of two such
        coordinates, plus a constant `margin`, never exceeds max reach + margin. Taking M over
        the containers the boxes *share* instead is wrong: when the two sit in different
        containers, the relaxed row would still cap the box in the larger one.
        """
        return max(self.reach(b, ax) for b in boxes) + margin

    # ---------------------------------------------------------------- expressions
    def ext(self, i: int, ax: int) -> Expr:
        """Extent of box i along axis ax, as chosen by its orientation."""
        terms = [(self.r[i, o], e[ax]) for o, e in self.p.ext[i].items()]
        if len(terms) == 1:
            return terms[0][1]
        return pulp.lpSum(v * c for v, c in terms)

    def top(self, i: int) -> Expr:
        return self.pos[i][-1] + self.ext(i, self.p.dim - 1)

    def capacity(self, i: int, ax: int) -> Expr:
        """Size along ax of the container box i is assigned to."""
        ks = self.p.slots_of[i]
        if len(ks) == 1:
            return self.sizes[ks[0]][ax]
        return pulp.lpSum(self.a[i, k] * self.sizes[k][ax] for k in ks)

    def tipped(self, i: int) -> Expr:
        return pulp.lpSum(v for (j, o), v in self.r.items() if j == i and not is_upright(o))

    def earlier(self, j: int, i: int, active: Expr, label: str) -> None:
        """When `active` is 1, box j is moved before box i."""
        if self.rank is None:
            return
        if (i, j) in self.p.before:  # i is fixed before j: active must be 0
            self.lp += active == 0 if not _const(active) else None, f"never_{label}"
            return
        if (j, i) in self.p.before:
            return
        n = self.p.n
        self.lp += self.rank[j] + 1 <= self.rank[i] + n * (1 - active), f"earlier_{label}"

    def same_slot(self, i: int, j: int, active: Expr, label: str) -> None:
        """When `active` is 1, boxes i and j are in the same container."""
        shared = self.p.can_share(i, j)
        for k in self.p.slots_of[i]:
            aj = self.a.get((j, k), 0)
            ai = self.a[i, k]
            if _const(ai) and _const(aj) and ai == aj:
                continue
            self.lp += active + ai - aj <= 1, f"same_{label}_{k}"
        if not shared:
            self.lp += active == 0, f"same_{label}_none"

    # ---------------------------------------------------------------- families
    def lift_order(self) -> None:
        """PROBLEM.md 3 / 4.1: a box leaves the source only after every box in its lift column."""
        if self.rank is None:
            return
        for j, i in sorted(self.p.before):
            self.lp += self.rank[j] + 1 <= self.rank[i], f"lift_{j}_{i}"

    def side_face_access(self) -> None:
        """PROBLEM.md 3 / 4.2: a tip needs one of its grip faces free (all touching boxes gone)."""
        p = self.p
        for i in range(p.n):
            by_grip: dict[str, list[str]] = {}
            for o in p.ext[i]:
                grip = grip_needed(o)
                if grip is not None and not p.always_free(i, o):
                    by_grip.setdefault(grip, []).append(o)
            for grip, orients in by_grip.items():
                faces = p.grip_faces(i, orients[0])
                g = {f: self.bin(f"g_{i}_{f}") for f in faces}
                self.lp += (
                    pulp.lpSum(g.values()) >= pulp.lpSum(self.r[i, o] for o in orients),
                    f"grip_{i}_{grip}",
                )
                for f, gv in g.items():
                    for j in sorted(p.touching[i][f]):
                        self.earlier(j, i, gv, f"face_{i}_{f}_{j}")

    def containment(self) -> None:
        """PROBLEM.md 4.3: inside the container and under its height (the cap for an open top)."""
        for i in range(self.p.n):
            for ax in range(self.p.dim):
                cap = self.capacity(i, ax)
                lhs = self.pos[i][ax] + self.ext(i, ax)
                self.lp += lhs <= cap, f"inside_{i}_{ax}"

    def non_overlap(self) -> None:
        """PROBLEM.md 4.4: two boxes in one container are separated along at least one axis.

        Relative-position binaries (Chen, Lee & Shen 1995). A direction that cannot hold for any
        orientations (the two widths exceed the container) gets no variable.
        """
        p = self.p
        d = p.dim
        for i, j in combinations(range(p.n), 2):
            shared = p.can_share(i, j)
            if not shared:
                continue
            seps = []
            for ax in range(d):
                room = max(self.sizes[k][ax] for k in shared)
                for first, second in ((i, j), (j, i)):
                    if p.min_extent(first, ax) + p.min_extent(second, ax) > room + self.tol:
                        continue  # in no shared container can the two stand apart along ax
                    if ax == d - 1 and p.instance.rules.loading == "from-above" and (second, first) in p.before:
                        continue  # first below second needs first earlier, but second is fixed earlier
                    s = self.bin(f"s_{first}_{second}_{ax}")
                    self.sep[first, second, ax] = s
                    seps.append(s)
                    self.lp += (
                        self.pos[first][ax] + self.ext(first, ax)
                        <= self.pos[second][ax] + self.big_m(ax, first, second) * (1 - s),
                        f"sep_{first}_{second}_{ax}",
                    )
            both = [(k, self.a[i, k], self.a[j, k]) for k in shared]
            if len(p.slots_of[i]) == 1 and len(p.slots_of[j]) == 1:
                self.lp += pulp.lpSum(seps) >= 1, f"apart_{i}_{j}"
            else:
                for k, ai, aj in both:
                    self.lp += pulp.lpSum(seps) >= ai + aj - 1, f"apart_{i}_{j}_{k}"

    def loading_from_above(self) -> None:
        """PROBLEM.md 4.5: an earlier box cannot lie above a later one over its footprint.

        With footprints overlapping only the vertical separator can hold, so "first below second"
        forces "first earlier"; without an order (no source) the z-order is such a sequence.
        """
        if self.p.instance.rules.loading != "from-above":
            return
        d = self.p.dim
        for (first, second, ax), s in list(self.sep.items()):
            if ax == d - 1:
                self.earlier(first, second, s, f"above_{first}_{second}")

    def _supporter_candidates(self, i: int) -> list[int]:
        p = self.p
        out = []
        for j in range(p.n):
            if j == i or not p.can_share(i, j):
                continue
            if (i, j) in p.before:  # a supporter must already be in the container
                continue
            out.append(j)
        return out

    def _rests_on(self, i: int, j: int) -> pulp.LpVariable:
        """Binary: j is a supporter of i (same container, j earlier, j's top at i's bottom)."""
        s = self.bin(f"u_{i}_{j}")
        z = self.p.dim - 1
        big = self.big_m(z, i, j)
        self.lp += self.pos[i][z] - self.top(j) <= big * (1 - s), f"rest_hi_{i}_{j}"
        self.lp += self.top(j) - self.pos[i][z] <= big * (1 - s), f"rest_lo_{i}_{j}"
        self.same_slot(i, j, s, f"u_{i}_{j}")
        self.earlier(j, i, s, f"u_{i}_{j}")
        self.sup[i, j] = s
        return s

    def _on_floor(self, i: int) -> pulp.LpVariable:
        f = self.bin(f"f_{i}")
        z = self.p.dim - 1
        self.lp += self.pos[i][z] <= self.big_m(z, i) * (1 - f), f"floor_{i}"
        self.floor[i] = f
        return f

    def _within(self, i: int, j: int, ax: int, point: Expr, s, label: str, strict_lo=0.0, strict_hi=0.0) -> None:
        """When s is 1: j's lo + strict_lo <= point <= j's hi - strict_hi along horizontal axis ax."""
        big = self.big_m(ax, i, j, margin=max(strict_lo, strict_hi))
        self.lp += self.pos[j][ax] + strict_lo <= point + big * (1 - s), f"in_lo_{label}"
        self.lp += point <= self.pos[j][ax] + self.ext(j, ax) - strict_hi + big * (1 - s), f"in_hi_{label}"

    def support_center(self) -> None:
        """PROBLEM.md 4.6 `center`: the base's centre lies on a supporter's top face (edges count)."""
        for i in range(self.p.n):
            us = []
            for j in self._supporter_candidates(i):
                s = self._rests_on(i, j)
                us.append(s)
                for ax in range(self.p.dim - 1):
                    centre = self.pos[i][ax] + 0.5 * self.ext(i, ax)
                    self._within(i, j, ax, centre, s, f"c_{i}_{j}_{ax}")
            self.lp += self._on_floor(i) + pulp.lpSum(us) >= 1, f"centre_{i}"

    def strict_margin(self) -> float:
        """Positive overlap as a linear constraint: 1 on the unit grid, else a small margin."""
        if self.p.integral:
            return 1.0
        sizes = [s for b in self.p.instance.boxes for s in b.size]
        margin = max(10 * self.tol, 1e-4 * min(sizes))
        self.restrictions.append(
            f"corners: a base corner must lie at least {margin:g} inside a supporter's top face "
            "(positive overlap written as a margin); optimality holds under that margin"
        )
        return margin

    def support_corners(self) -> None:
        """PROBLEM.md 4.6 `corners`: every base corner lies on a supporter with positive overlap."""
        p = self.p
        h = p.dim - 1
        eps = self.strict_margin()
        for i in range(p.n):
            cands = self._supporter_candidates(i)
            rests = {j: self._rests_on(i, j) for j in cands}
            floor = self._on_floor(i)
            for corner in range(2 ** h):
                covers = []
                for j in cands:
                    c = self.bin(f"k_{i}_{j}_{corner}")
                    self.lp += c <= rests[j], f"kc_{i}_{j}_{corner}"
                    for ax in range(h):
                        high = (corner >> ax) & 1
                        point = self.pos[i][ax] + (self.ext(i, ax) if high else 0)
                        # the low corner needs the supporter to reach past it, the high one to start before it
                        self._within(
                            i, j, ax, point, c, f"k_{i}_{j}_{corner}_{ax}",
                            strict_lo=eps if high else 0.0, strict_hi=0.0 if high else eps,
                        )
                    covers.append(c)
                self.lp += floor + pulp.lpSum(covers) >= 1, f"corner_{i}_{corner}"

    def support_base_fraction(self) -> None:
        """PROBLEM.md 4.6 `base-fraction`: supporters' tops cover at least f of the base.

        2D: the covered length is a sum of overlap lengths (linear, exact: supporters at one level
        are disjoint). 3D: covered area = sum of ovx * ovy; on the unit grid ovx is an integer and
        the product is linearised exactly by its binary expansion; off the grid the McCormick
        under-estimator is used (a restriction, reported).
        """
        p = self.p
        h = p.dim - 1
        f = p.instance.rules.support.min_fraction
        for i in range(p.n):
            base = self.ext(i, 0) if h == 1 else None
            covered = []
            for j in self._supporter_candidates(i):
                s = self._rests_on(i, j)
                ov = [self._overlap(i, j, ax, s) for ax in range(h)]
                covered.append(ov[0] if h == 1 else self._area(i, j, ov))
            floor = self._on_floor(i)
            if h == 1:
                need = f * base
                big = f * p.max_extent(i, 0)
            else:
                # base area is a product of the chosen extents: constant per orientation
                need = pulp.lpSum(
                    self.r[i, o] * (e[0] * e[1] * f) for o, e in p.ext[i].items()
                ) if len(p.ext[i]) > 1 else f * next(iter(p.ext[i].values()))[0] * next(iter(p.ext[i].values()))[1]
                big = f * max(e[0] * e[1] for e in p.ext[i].values())
            self.lp += pulp.lpSum(covered) + big * floor >= need, f"fraction_{i}"

    def _overlap(self, i: int, j: int, ax: int, s) -> pulp.LpVariable:
        """Overlap length of i and j along ax (bounded above by its four expressions; 0 unless s)."""
        cap = min(self.p.max_extent(i, ax), self.p.max_extent(j, ax))
        integer = self.p.integral and self.p.dim == 3 and ax == 0
        ov = self.var(f"o_{i}_{j}_{ax}", lowBound=0, upBound=cap, cat="Integer" if integer else "Continuous")
        lbl = f"{i}_{j}_{ax}"
        self.lp += ov <= cap * s, f"ov_s_{lbl}"
        # the two reach terms go negative for boxes apart: relax them unless j supports i
        big = self.big_m(ax, i, j)
        self.lp += ov <= self.pos[j][ax] + self.ext(j, ax) - self.pos[i][ax] + big * (1 - s), f"ov_a_{lbl}"
        self.lp += ov <= self.pos[i][ax] + self.ext(i, ax) - self.pos[j][ax] + big * (1 - s), f"ov_b_{lbl}"
        self.lp += ov <= self.ext(i, ax), f"ov_c_{lbl}"
        self.lp += ov <= self.ext(j, ax), f"ov_d_{lbl}"
        return ov

    def _area(self, i: int, j: int, ov: list) -> Expr:
        """A lower estimate of ov[0] * ov[1], exact when ov[0] is an integer (binary expansion)."""
        ux, uy = ov[0].upBound, ov[1].upBound
        if self.p.integral:
            bits = max(1, int(ux).bit_length())
            terms = []
            weighted = []
            for b in range(bits):
                z = self.bin(f"ob_{i}_{j}_{b}")
                q = self.var(f"oq_{i}_{j}_{b}", lowBound=0, upBound=uy)
                self.lp += q <= ov[1], f"oq_y_{i}_{j}_{b}"
                self.lp += q <= uy * z, f"oq_z_{i}_{j}_{b}"
                terms.append((2 ** b) * z)
                weighted.append((2 ** b) * q)
            self.lp += pulp.lpSum(terms) == ov[0], f"ob_sum_{i}_{j}"
            return pulp.lpSum(weighted)
        if "base-fraction 3D" not in " ".join(self.restrictions):
            self.restrictions.append(
                "base-fraction 3D off the unit grid: supported area estimated from below "
                "(McCormick), so the model may miss some feasible plans"
            )
        area = self.var(f"oa_{i}_{j}", lowBound=0)
        self.lp += area <= ux * ov[1] + uy * ov[0] - ux * uy, f"oa_{i}_{j}"
        return area

    def support(self) -> None:
        """Dispatch PROBLEM.md 4.6 by the instance's support rule."""
        rule = self.p.instance.rules.support.rule
        if rule == "center":
            self.support_center()
        elif rule == "corners":
            self.support_corners()
        elif rule == "base-fraction":
            self.support_base_fraction()

    def identical_boxes(self) -> None:
        """Symmetry: interchangeable boxes (same data, no order relations) are taken bottom-up."""
        p = self.p
        if p.orders_matter() or len(p.slots) > 1:
            return
        groups: dict = {}
        for i, b in enumerate(p.instance.boxes):
            key = (tuple(sorted(p.ext[i].items())), b.target)
            groups.setdefault(key, []).append(i)
        z = p.dim - 1
        for members in groups.values():
            if len(members) > 1:
                self.twins.update(members)
                self.twin_groups.append(tuple(members))
            for i, j in zip(members, members[1:]):
                self.lp += self.pos[i][z] <= self.pos[j][z], f"sym_{i}_{j}"

    def mirror_symmetry(self) -> None:
        """Symmetry: mirroring a container's contents left-right (front-back) keeps every rule.

        Containment, overlap, loading from above and support are mirror-invariant, and the
        sequence, orientations and grips do not change, so the largest box that has a fixed
        container may be put in the left (front) half of it. One box per container, never one
        that `identical_boxes` orders (relabelling twins would undo the mirror). With
        loading `any`, support `none` and an open top, the strip can be flipped upside down as
        well (no rule looks at the order then), so that box also sits in the lower half.
        """
        p = self.p
        if p.instance.rules.integer_positions and not p.integral:
            return  # a mirrored integer position need not be an integer
        taken: set = set()
        by_size = sorted(range(p.n), key=lambda i: -p.instance.boxes[i].volume)
        flip = (p.instance.rules.loading == "any" and p.instance.rules.support.rule == "none"
                and not p.orders_matter())
        for i in by_size:
            ks = p.slots_of[i]
            if len(ks) != 1 or ks[0] in taken or i in self.twins:
                continue
            k = ks[0]
            taken.add(k)
            self.mirrored.append((i, k))
            for ax in range(p.dim - 1):
                self.lp += 2 * self.pos[i][ax] + self.ext(i, ax) <= self.sizes[k][ax], f"mirror_{i}_{ax}"
            if flip and p.slots[k].size[-1] is None and p.instance.objective.minimise == "height":
                self.flip_box = i

    # ---------------------------------------------------------------- objectives
    def packed_height(self, lower: float, upper: float) -> pulp.LpVariable:
        """PROBLEM.md 5 `height`: the largest box top over all containers."""
        hv = self.var("height", lowBound=lower, upBound=upper)
        if self.flip_box is not None:  # see mirror_symmetry: the strip may be turned upside down
            i = self.flip_box
            self.lp += 2 * self.pos[i][-1] + self.ext(i, self.p.dim - 1) <= hv, "flip"
        for i in range(self.p.n):
            self.lp += self.top(i) <= hv, f"height_{i}"
        return hv

    def height_sum(self, lower: float, upper: float) -> Expr:
        """PROBLEM.md 5 `height-sum`: per-container heights, summed (unused ones are 0)."""
        z = self.p.dim - 1
        hs = []
        for k, slot in enumerate(self.p.slots):
            members = [i for i in range(self.p.n) if k in self.p.slots_of[i]]
            if not members:
                continue
            hk = self.var(f"hk_{k}", lowBound=0, upBound=self.sizes[k][z])
            for i in members:
                self.lp += self.top(i) <= hk + self.big_m(z, i) * (1 - self.a[i, k]), f"hk_{k}_{i}"
            hs.append(hk)
        total = pulp.lpSum(hs)
        self.lp += total >= lower, "height_sum_lower"
        self.lp += total <= upper, "height_sum_upper"
        return total

    def bins_used(self, lower: float, upper: float) -> Expr:
        """PROBLEM.md 5 `bins`: number of containers holding a box; used ones first per type."""
        used = {}
        for k, slot in enumerate(self.p.slots):
            members = [i for i in range(self.p.n) if k in self.p.slots_of[i]]
            if not members:
                continue
            u = self.bin(f"used_{k}")
            used[k] = u
            for i in members:
                self.lp += self.a[i, k] <= u, f"used_{k}_{i}"
        for k, u in used.items():
            prev = k - 1
            if prev in used and self.p.slots[prev].type_id == self.p.slots[k].type_id:
                self.lp += u <= used[prev], f"used_order_{k}"
                self.bins_ordered = True
        total = pulp.lpSum(used.values())
        self.lp += total >= lower, "bins_lower"
        self.lp += total <= upper, "bins_upper"
        return total


def build(p: Problem, *, vcap: float, lower: float, upper: float, goal: str = "main",
          main_cap: Optional[float] = None) -> Model:
    """The model with the main objective bounded to [lower, upper].

    goal: "main" minimises the main objective, "tips" minimises tipped boxes subject to
    main <= main_cap, "feasible" only asks for a plan (the decision version).
    """
    b = Builder(p, vcap)
    b.lift_order()
    b.side_face_access()
    b.containment()
    b.non_overlap()
    b.loading_from_above()
    b.support()
    b.identical_boxes()
    b.mirror_symmetry()
    kind = p.instance.objective.minimise
    if kind == "height":
        main = b.packed_height(lower, upper)
    elif kind == "height-sum":
        main = b.height_sum(lower, upper)
    else:
        main = b.bins_used(lower, upper)
    tips = pulp.lpSum(b.tipped(i) for i in range(p.n))
    if goal == "main":
        b.lp += main
    elif goal == "tips":
        if main_cap is not None:
            b.lp += main <= main_cap, "main_fixed"
        b.lp += tips
    else:
        b.lp += pulp.lpSum([])
    symmetry = Symmetry(tuple(b.twin_groups), tuple(b.mirrored), b.flip_box, b.bins_ordered)
    return Model(b.lp, p, b.r, b.a, b.pos, b.rank, main, tips, vcap, not b.restrictions, b.restrictions, b.sep,
                 symmetry)
