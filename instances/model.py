"""Data model of the unstack-and-pack problem (PROBLEM.md sections 1, 2 and 6).

Plain frozen dataclasses: no I/O, no validation beyond what the types say.
Reading, writing and validating live in `instances.io` and `instances.validate`.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from itertools import permutations
from typing import Optional

AXES = {2: "xy", 3: "xyz"}
SUPPORT_RULES = ("none", "base-fraction", "center", "corners")
LOADING_RULES = ("from-above", "any")
ACCESS_RULES = ("side-face", "none")
OBJECTIVES = ("height", "height-sum", "bins")
TIEBREAKS = ("none", "tips")
STATUSES = ("optimal", "feasible", "infeasible", "unknown", "error")
FACES = {2: ("left", "right"), 3: ("left", "right", "front", "back")}
# The grip (pair of faces) a tip needs, keyed by the source axis that becomes vertical.
GRIP_FOR_AXIS = {"x": "left-right", "y": "front-back"}
FACES_OF_GRIP = {"left-right": ("left", "right"), "front-back": ("front", "back")}

Vector = tuple[float, ...]
OptVector = tuple[Optional[float], ...]


def all_orientations(dim: int) -> tuple[str, ...]:
    """Every orientation of a box in `dim` dimensions, as-it-sits first (2 in 2D, 6 in 3D)."""
    return tuple("".join(p) for p in permutations(AXES[dim]))


def oriented_size(size: Vector, orientation: str) -> Vector:
    """Extents of a box of source `size` packed in `orientation` (letter k = source axis for axis k)."""
    return tuple(size["xyz".index(c)] for c in orientation)


def is_upright(orientation: str) -> bool:
    """True when the orientation keeps the source vertical axis vertical (a turn about it at most)."""
    return orientation[-1] == AXES[len(orientation)][-1]


def grip_needed(orientation: str) -> Optional[str]:
    """The face pair a tip into `orientation` needs (`left-right` or `front-back`); None if upright."""
    return None if is_upright(orientation) else GRIP_FOR_AXIS[orientation[-1]]


@dataclass(frozen=True)
class Box:
    """One box: its size as it sits in the source, where it sits, how it may be packed, where it must go."""

    id: str
    size: Vector
    orientations: tuple[str, ...]
    at: Optional[Vector] = None
    target: Optional[str] = None

    def extents(self, orientation: str) -> Vector:
        return oriented_size(self.size, orientation)

    @property
    def volume(self) -> float:
        v = 1.0
        for s in self.size:
            v *= s
        return v


@dataclass(frozen=True)
class Source:
    """The container holding the boxes at the start; its vertical extent may be None (open top)."""

    size: OptVector


@dataclass(frozen=True)
class ContainerType:
    """A type of target container; `size[-1]` None means an open top (a strip)."""

    id: str
    size: OptVector
    count: int = 1

    @property
    def height(self) -> Optional[float]:
        return self.size[-1]

    @property
    def footprint(self) -> Vector:
        return tuple(self.size[:-1])  # type: ignore[return-value]


@dataclass(frozen=True)
class Support:
    """The support rule; `min_fraction` only with `base-fraction`."""

    rule: str = "center"
    min_fraction: Optional[float] = None


@dataclass(frozen=True)
class Rules:
    support: Support = field(default_factory=Support)
    loading: str = "from-above"
    access: str = "side-face"
    side_clearance: float = 0.0
    integer_positions: bool = False
    tolerance: float = 1e-6


@dataclass(frozen=True)
class Objective:
    minimise: str = "height"
    then: str = "none"


@dataclass(frozen=True)
class Known:
    """A value known from elsewhere, with its provenance; never read by solvers."""

    source: str
    optimum: Optional[float] = None
    infeasible: bool = False


@dataclass(frozen=True)
class Instance:
    dim: int
    boxes: tuple[Box, ...]
    containers: tuple[ContainerType, ...]
    source: Optional[Source] = None
    rules: Rules = field(default_factory=Rules)
    objective: Objective = field(default_factory=Objective)
    name: Optional[str] = None
    known: Optional[Known] = None

    def box(self, box_id: str) -> Box:
        return self._box_index[box_id]

    def container(self, type_id: str) -> ContainerType:
        return self._container_index[type_id]

    @property
    def _box_index(self) -> dict[str, Box]:
        cached = self.__dict__.get("_boxes_by_id")
        if cached is None:
            cached = {b.id: b for b in self.boxes}
            object.__setattr__(self, "_boxes_by_id", cached)
        return cached

    @property
    def _container_index(self) -> dict[str, ContainerType]:
        cached = self.__dict__.get("_containers_by_id")
        if cached is None:
            cached = {c.id: c for c in self.containers}
            object.__setattr__(self, "_containers_by_id", cached)
        return cached

    def allowed_types(self, box: Box) -> tuple[ContainerType, ...]:
        """Container types `box` may go to (its target, or any type)."""
        if box.target is None:
            return self.containers
        return (self.container(box.target),)


@dataclass(frozen=True)
class Move:
    """One step of a plan: box `box` goes to container `container` = (type id, index)."""

    box: str
    container: tuple[str, int]
    orientation: str
    at: Vector
    grip: Optional[str] = None


@dataclass(frozen=True)
class Plan:
    instance: Optional[str]
    moves: tuple[Move, ...]


@dataclass(frozen=True)
class TieBreak:
    name: str
    value: float
    proved: bool


@dataclass(frozen=True)
class SolverInfo:
    backend: str
    version: str = ""
    time_limit_s: Optional[float] = None
    seed: int = 0
    time_s: Optional[float] = None
    nodes: Optional[int] = None
    threads: Optional[int] = None


@dataclass(frozen=True)
class ProofStep:
    """One step of a certificate: what was established, how, and how it was confirmed.

    `claim` is in words ("no plan has height <= 7"); `method` names the bound or model; `solver`
    the program that decided it (None for arithmetic); `confirmed_by` the independent second
    solve that agreed (None when no solver was involved, so there was nothing to confirm).
    """

    claim: str
    method: str
    solver: Optional[str] = None
    confirmed_by: Optional[str] = None
    seconds: Optional[float] = None


@dataclass(frozen=True)
class Provenance:
    """Where a result comes from: which instance (hash of its canonical form), which tool and
    solver versions, when, and the proof steps behind its bound."""

    instance_sha256: str
    tool_version: str
    solvers: dict[str, str] = field(default_factory=dict)
    date: str = ""
    proof: tuple[ProofStep, ...] = ()


@dataclass(frozen=True)
class Result:
    """What a solve returns (FORMATS.md "Result").

    status: `optimal` (objective == bound), `feasible` (a checked plan, gap open),
    `infeasible` (proved, reason in notes), `unknown` (no plan within the limits), `error`.
    """

    instance: Optional[str]
    status: str
    objective: Optional[float] = None
    bound: Optional[float] = None
    gap: Optional[float] = None
    tiebreak: Optional[TieBreak] = None
    bounds: dict[str, float] = field(default_factory=dict)
    plan: Optional[Plan] = None
    checked: bool = False
    solver: Optional[SolverInfo] = None
    notes: tuple[str, ...] = ()
    seconds: Optional[float] = None
    provenance: Optional[Provenance] = None


def relative_gap(objective: Optional[float], bound: Optional[float]) -> Optional[float]:
    """FORMATS.md gap: (objective - bound) / objective, 0 when both are 0, None without a plan."""
    if objective is None:
        return None
    if bound is None:
        return 1.0 if objective else 0.0
    if objective == 0:
        return 0.0 if bound == 0 else None
    return max(0.0, (objective - bound) / objective)
