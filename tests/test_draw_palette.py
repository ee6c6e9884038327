"""Colours (instances.draw.palette): still told apart with colour-blind vision, readable labels.

Colour-blind vision is simulated with colorspacious (Machado, Oliveira and Fernandes 2009,
"A physiologically-based model for simulation of color vision deficiency", IEEE TVCG 15(6)),
distances are CAM02-UCS Delta E' (Luo, Cui and Li 2006). Contrast is WCAG 2.0's ratio (W3C 2008).
"""
from __future__ import annotations

import itertools

import numpy as np
import pytest

from instances.draw import palette

cs = pytest.importorskip("colorspacious")

DEFICIENCIES = ("deuteranomaly", "protanomaly", "tritanomaly")


def _seen(colours, kind):
    rgb = np.array([[int(c[i:i + 2], 16) / 255 for i in (1, 3, 5)] for c in colours])
    sim = {"name": "sRGB1+CVD", "cvd_type": kind, "severity": 100}
    return np.clip(cs.cspace_convert(rgb, sim, "sRGB1"), 0, 1)


@pytest.mark.parametrize("kind", DEFICIENCIES)
def test_destination_colours_stay_apart(kind):
    """Every pair of the seven destination colours keeps a CAM02-UCS distance of at least 10
    under full-strength simulated deficiency (10 is a clearly visible difference: common practice)."""
    colours = [palette.destination_colour(k) for k in range(7)]
    seen = cs.cspace_convert(_seen(colours, kind), "sRGB1", "CAM02-UCS")
    worst = min(np.linalg.norm(a - b) for a, b in itertools.combinations(seen, 2))
    assert worst >= 10, f"two destinations look alike under {kind}: Delta E' = {worst:.1f}"


@pytest.mark.parametrize("kind", DEFICIENCIES)
def test_step_colours_keep_their_order_in_lightness(kind):
    n = 12
    colours = [palette.step_colour(k, n) for k in range(1, n + 1)]
    light = cs.cspace_convert(_seen(colours, kind), "sRGB1", "CAM02-UCS")[:, 0]
    assert np.all(np.diff(light) > 0), "later moves are lighter, whatever the colour vision"


def _luminance(c):
    lin = [v / 12.92 if v <= 0.03928 else ((v + 0.055) / 1.055) ** 2.4 for v in (int(c[i:i + 2], 16) / 255 for i in (1, 3, 5))]
    return 0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2]


def _contrast(a, b):
    la, lb = sorted((_luminance(a), _luminance(b)), reverse=True)
    return (la + 0.05) / (lb + 0.05)


def test_label_colour_is_the_better_of_black_and_white():
    rng = np.random.default_rng(0)
    fills = [palette.destination_colour(k) for k in range(21)] + [palette.step_colour(k, 9) for k in range(1, 10)]
    fills += ["#" + "".join(f"{v:02X}" for v in rng.integers(0, 256, 3)) for _ in range(200)]
    for f in fills:
        chosen = palette.text_colour(f)
        other = "#FFFFFF" if chosen == "#000000" else "#000000"
        assert _contrast(f, chosen) >= _contrast(f, other) - 1e-9
        assert _contrast(f, chosen) >= 4.5  # WCAG 2.0 level AA for normal text
