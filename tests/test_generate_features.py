"""Source measures (instances/generate/features.py): hand-worked cases and a networkx reference."""
from __future__ import annotations

import networkx as nx
import pytest

from instances.generate import random_instance
from instances.generate.features import source_features
from instances.io import instance_from_dict
from instances.precedence import lift_graph, precedence_graph


def _doc(boxes, source=(4, None), container=(4, None)):
    return instance_from_dict({"format": "stackproof/instance", "version": 1, "dim": 2, "source": {"size": list(source)},
                               "boxes": boxes, "containers": [{"id": "t", "size": list(container)}]})


def test_two_boxes_in_a_tight_source():
    """Hand-worked: b rests on a, both as wide as the source: depth 2, one lift edge, all faces on walls."""
    inst = _doc([{"id": "a", "size": [4, 1], "at": [0, 0]}, {"id": "b", "size": [4, 2], "at": [0, 1]}])
    f = source_features(inst)
    assert (f["stack_depth"], f["lift_edges"], f["blocked_faces"], f["source_ratio"]) == (2, 1, 1.0, 1.0)


def test_neighbours_and_only_tipped():
    """Hand-worked: a and b side by side in a 6-wide source; a touches the left wall and b, b the
    right wall is 1 away: blocked faces a-left, a-right, b-left = 3 of 4. Box a (3 wide, 1 tall)
    does not fit the 2-wide target upright but does tipped; b fits upright."""
    inst = _doc([{"id": "a", "size": [3, 1], "at": [0, 0]}, {"id": "b", "size": [2, 2], "at": [3, 0]}],
                source=(6, None), container=(2, None))
    f = source_features(inst)
    assert f["blocked_faces"] == 0.75 and f["stack_depth"] == 1 and f["lift_edges"] == 0
    assert f["only_tipped"] == 0.5


@pytest.mark.parametrize("seed", range(3))
def test_stack_depth_is_the_longest_lift_chain(seed):
    """networkx reference: the longest path of the lift DAG, counted in boxes."""
    inst = random_instance(3, 25, seed, source_ratio=0.8, feasible=False)
    lifts = lift_graph(precedence_graph(inst))
    assert source_features(inst)["stack_depth"] == len(nx.dag_longest_path(lifts))


def test_narrow_sources_stack_deeper():
    def depth(ratio):
        return sum(source_features(random_instance(2, 20, s, source_ratio=ratio, feasible=False))["stack_depth"] for s in range(8))

    assert depth(1.0) > depth(3.0)
