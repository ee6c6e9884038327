"""PNG pictures (instances.draw.raster): the expected size, not blank, boxes in their colours."""
from __future__ import annotations

import copy
import io

import numpy as np
import pytest
from matplotlib import image

from instances.draw import draw, render, scene
from instances.draw.shapes import Group, Poly, walk
from instances.drop import drop_plan
from instances.generate import random_instance
from instances.io import instance_from_dict, plan_from_dict
from tests.worked_examples import FORMATS_INSTANCE, FORMATS_PLAN


def _png(data: bytes) -> np.ndarray:
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    return image.imread(io.BytesIO(data), format="png")


def _rgb(colour: str) -> np.ndarray:
    return np.array([int(colour[i:i + 2], 16) / 255 for i in (1, 3, 5)])


def _box_bodies(sc):
    """(fill, polygon points) of every box body in the scene, in drawing order."""
    out = []
    for it in sc.items:
        if isinstance(it, Group) and it.attrs.get("class") == "box":
            for sub in walk(it.items):
                if isinstance(sub, Poly) and sub.cls == "body":
                    out.append((sub.fill, sub.points))
    return out


@pytest.mark.parametrize("dim", [2, 3])
def test_png_size_not_blank_and_colours_where_the_boxes_are(dim):
    if dim == 2:
        inst = instance_from_dict(copy.deepcopy(FORMATS_INSTANCE))
        plan = plan_from_dict(copy.deepcopy(FORMATS_PLAN))
    else:
        inst = random_instance(3, 8, 1)
        plan = drop_plan(inst)
    sc = scene(inst, plan)
    px = _png(render(inst, plan, "png"))
    assert px.shape[:2] == (round(sc.height), round(sc.width))
    rgb = px[..., :3]
    assert rgb.std() > 0.05, "not a blank picture"
    assert len(np.unique((rgb * 255).astype(np.uint8).reshape(-1, 3), axis=0)) > 20
    # a quarter of the way into each 2D box (away from its label) the pixel has the box's fill
    if dim == 2:
        for fill, pts in _box_bodies(sc):
            (x0, y0), (x1, y1) = pts[0], pts[2]
            x, y = int(x0 + (x1 - x0) * 0.2), int(y0 + (y1 - y0) * 0.8)
            assert np.abs(rgb[y, x] - _rgb(fill)).max() < 0.03


def test_draw_png_file(tmp_path):
    inst = instance_from_dict(copy.deepcopy(FORMATS_INSTANCE))
    out = draw(inst, None, tmp_path / "a.png", color_by="step")
    px = _png(out.read_bytes())
    assert px.shape[0] > 100 and px.shape[1] > 300
    assert list(tmp_path.iterdir()) == [out]  # no temp file left behind
