"""`instances.usable`: one answer to "which orientations fit which container" for model and bounds."""
from __future__ import annotations

from hypothesis import HealthCheck, given, settings

from bounds.common import View
from instances.model import Box, ContainerType
from instances.usable import fits, usable_orientations, walled_grips
from milp.problem import prepare
from tests.oracles.tiny import tiny_instances


def test_fits_allows_the_slack_and_an_open_top():
    assert fits((4.0, 9.0), (4.0, None), 0.0)
    assert fits((4.0 + 1e-7, 1.0), (4.0, 2.0), 1e-6)
    assert not fits((4.1, 1.0), (4.0, 2.0), 1e-6)


def test_a_grip_walled_in_on_both_faces_is_never_usable():
    box = Box("b", (1, 2, 3), ("xyz", "zyx", "xzy"))
    # zyx tips about y (grip left-right), xzy tips about x (grip front-back)
    assert walled_grips(frozenset({"left", "right"})) == {"left-right"}
    assert usable_orientations(box, frozenset({"left", "right"})) == ("xyz", "xzy")
    assert usable_orientations(box, frozenset({"left"})) == box.orientations


@settings(max_examples=150, deadline=None, database=None, derandomize=True, suppress_health_check=list(HealthCheck))
@given(inst=tiny_instances())
def test_model_never_offers_more_than_the_bounds_assume(inst):
    """Bounds are relaxations: every (box, orientation, container type) the model may use, the bounds allow."""
    p = prepare(inst)
    view = View(inst)
    for i, box in enumerate(inst.boxes):
        for o, ext in p.ext[i].items():
            assert o in view.orientations(box)
            types = {p.slots[k].type_id for k in p.slots_of[i] if fits(ext, p.slots[k].size, inst.rules.tolerance)}
            for t in types:
                ctype = next(c for c in inst.containers if c.id == t)
                assert ext in view.extents(box, ctype), (box.id, o, t)
