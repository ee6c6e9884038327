"""Hypothesis strategies: random resting arrangements (2D and 3D) and plans built by the drop routine."""
from __future__ import annotations

from hypothesis import strategies as st

from instances.drop import landing
from instances.geometry import Placed
from instances.io import instance_from_dict
from instances.model import all_orientations

SUPPORTS = [{"rule": "none"}, {"rule": "center"}, {"rule": "corners"}, {"rule": "base-fraction", "min_fraction": 0.5}]


@st.composite
def resting_instances(draw, dim=None, max_boxes=6, support=None, access=None, targets=True):
    """A valid instance whose source boxes were dropped into stacks, so every one rests.

    Boxes are lowered one by one at random integer positions onto whatever lies under them, so the
    arrangement is resting by construction; the validator re-checks it anyway.
    """
    dim = draw(st.sampled_from([2, 3])) if dim is None else dim
    n = draw(st.integers(1, max_boxes))
    width = [draw(st.integers(3, 8)) for _ in range(dim - 1)]
    placed: list[Placed] = []
    boxes = []
    for i in range(n):
        size = tuple(draw(st.integers(1, 3)) for _ in range(dim))
        if any(s > w for s, w in zip(size, width)):
            size = tuple(min(s, w) for s, w in zip(size[:-1], width)) + (size[-1],)
        foot = tuple(draw(st.integers(0, w - s)) for s, w in zip(size[:-1], width))
        p = landing(foot, size, placed)
        placed.append(Placed(f"b{i}", p.pos, p.ext))
        allowed = all_orientations(dim)
        chosen = draw(st.lists(st.sampled_from(allowed), min_size=1, max_size=len(allowed), unique=True))
        boxes.append({"id": f"b{i}", "size": list(size), "at": list(p.pos), "orientations": chosen})
    height = max(p.top for p in placed)
    n_types = draw(st.integers(1, 2)) if targets else 1
    biggest = max(max(b["size"]) for b in boxes)
    containers = [
        {"id": f"t{k}", "size": [draw(st.integers(biggest, biggest + 4)) for _ in range(dim - 1)] + [None], "count": draw(st.integers(1, 2))}
        for k in range(n_types)
    ]
    if n_types > 1:
        for b in boxes:
            if draw(st.booleans()):
                b["target"] = draw(st.sampled_from([c["id"] for c in containers]))
    doc = {
        "format": "stackproof/instance", "version": 1, "name": "drawn", "dim": dim,
        "source": {"size": width + [draw(st.sampled_from([None, height + 1]))]},
        "boxes": boxes,
        "containers": containers,
        "rules": {
            "support": draw(st.sampled_from(SUPPORTS)) if support is None else support,
            "loading": "from-above",
            "access": draw(st.sampled_from(["side-face", "none"])) if access is None else access,
            "side_clearance": draw(st.sampled_from([0, 0, 1])),
            "integer_positions": True,
        },
        "objective": {"minimise": draw(st.sampled_from(["height", "height-sum"]))},
    }
    return instance_from_dict(doc)
