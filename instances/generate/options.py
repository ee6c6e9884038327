"""What random and planted instances share: rule and objective settings, exact shares, names."""
from __future__ import annotations

from typing import Optional, Sequence

import numpy as np

from ..model import ACCESS_RULES, LOADING_RULES, OBJECTIVES, SUPPORT_RULES, TIEBREAKS, Objective, Rules, Support, all_orientations, is_upright


def make_rules(support: str = "center", min_fraction: Optional[float] = None, loading: str = "from-above",
               access: str = "side-face", side_clearance: float = 0, integer_positions: bool = False) -> Rules:
    """Rules from plain settings, rejecting unknown names and misplaced `min_fraction` (ValueError)."""
    _one_of("support", support, SUPPORT_RULES)
    _one_of("loading", loading, LOADING_RULES)
    _one_of("access", access, ACCESS_RULES)
    if support == "base-fraction":
        if min_fraction is None or not 0 < min_fraction <= 1:
            raise ValueError(f"support 'base-fraction' needs min_fraction in (0, 1], got {min_fraction}")
    elif min_fraction is not None:
        raise ValueError(f"min_fraction goes with support 'base-fraction' only, not {support!r}")
    if side_clearance < 0:
        raise ValueError(f"side_clearance must be >= 0, got {side_clearance}")
    return Rules(Support(support, min_fraction), loading, access, side_clearance, bool(integer_positions))


def make_objective(objective: str = "height", then: str = "none") -> Objective:
    _one_of("objective", objective, OBJECTIVES)
    _one_of("then", then, TIEBREAKS)
    return Objective(objective, then)


def _one_of(what: str, value: str, allowed: Sequence[str]) -> None:
    if value not in allowed:
        raise ValueError(f"{what} must be one of {', '.join(allowed)}; got {value!r}")


def check_share(what: str, value: float) -> float:
    if not 0 <= value <= 1:
        raise ValueError(f"{what} must be a share in [0, 1], got {value}")
    return float(value)


def check_dim_boxes(dim: int, boxes: int) -> None:
    if dim not in (2, 3):
        raise ValueError(f"dim must be 2 or 3, got {dim}")
    if not isinstance(boxes, (int, np.integer)) or boxes < 1:
        raise ValueError(f"boxes must be a whole number >= 1, got {boxes}")


def apportion(total: int, shares: Sequence[float]) -> list[int]:
    """Split `total` into whole parts proportional to `shares` (largest remainder, ties to the first)."""
    if not shares or any(s < 0 for s in shares) or sum(shares) <= 0:
        raise ValueError(f"shares must be non-negative with a positive sum, got {list(shares)}")
    w = np.asarray(shares, dtype=float) / float(sum(shares))
    raw = w * total
    parts = np.floor(raw).astype(int)
    rest = raw - parts
    for k in sorted(range(len(w)), key=lambda k: (-rest[k], k))[: total - int(parts.sum())]:
        parts[k] += 1
    return [int(p) for p in parts]


def chosen(rng: np.random.Generator, n: int, share: float, among: Sequence[int]) -> set[int]:
    """round(share * n) indices drawn without replacement from `among` (fewer if `among` is short)."""
    k = min(len(among), int(round(share * n)))
    return {int(among[i]) for i in rng.choice(len(among), size=k, replace=False)} if k else set()


def upright_orientations(dim: int) -> tuple[str, ...]:
    """The orientations a "this side up" box allows: turns about the vertical axis only."""
    return tuple(o for o in all_orientations(dim) if is_upright(o))


def box_ids(n: int, prefix: str = "b") -> list[str]:
    width = len(str(n))
    return [f"{prefix}{k + 1:0{width}d}" for k in range(n)]


def type_ids(n: int) -> list[str]:
    return [f"dest-{k + 1}" for k in range(n)]
