"""Documents from the specification, used by several test modules."""
from __future__ import annotations

# FORMATS.md, section "Instance" and section "Plan" (the worked example: optimum 5 with one tip).
FORMATS_INSTANCE = {
    "format": "stackproof/instance", "version": 1,
    "name": "dock-7-morning",
    "dim": 2,
    "source": {"size": [10, 8]},
    "boxes": [
        {"id": "crate-a", "size": [4, 2], "at": [0, 0], "orientations": ["xy", "yx"]},
        {"id": "crate-b", "size": [3, 3], "at": [6, 0]},
        {"id": "crate-c", "size": [6, 1], "at": [0, 2], "target": "van-north"},
    ],
    "containers": [{"id": "van-north", "size": [6, None], "count": 1}],
    "rules": {
        "support": {"rule": "center"},
        "loading": "from-above",
        "access": "side-face",
        "side_clearance": 0,
        "integer_positions": False,
        "tolerance": 1e-6,
    },
    "objective": {"minimise": "height", "then": "tips"},
    "known": {"optimum": 5, "source": "invented example; optimum argued by hand"},
}

FORMATS_PLAN = {
    "format": "stackproof/plan", "version": 1,
    "instance": "dock-7-morning",
    "moves": [
        {"box": "crate-c", "container": ["van-north", 0], "orientation": "xy", "at": [0, 0]},
        {"box": "crate-a", "container": ["van-north", 0], "orientation": "yx", "at": [0, 1], "grip": "left-right"},
        {"box": "crate-b", "container": ["van-north", 0], "orientation": "xy", "at": [2, 1]},
    ],
}
