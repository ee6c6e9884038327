"""The precedence graph: the worked example, walls and clearance, DAG property (networkx)."""
from __future__ import annotations

import copy

import networkx as nx
from hypothesis import given, settings

from instances.io import instance_from_dict
from instances.precedence import lift_graph, precedence_graph, to_dot, to_json
from tests.strategies import resting_instances
from tests.worked_examples import FORMATS_INSTANCE


def edges(graph):
    return {(j, i, k) for j, i, k in graph.edges(data="kind")}


def test_formats_worked_example_graph():
    # FORMATS.md: crate-c rests on crate-a (a lift edge); crate-a's left face is against the wall.
    graph = precedence_graph(instance_from_dict(FORMATS_INSTANCE))
    assert ("crate-c", "crate-a", "lift") in edges(graph)
    assert graph.nodes["crate-a"]["wall_blocked"] == {"left"}
    # crate-c's right side touches crate-b's left face (both at x = 6, overlapping in y 2..3)
    assert ("crate-c", "crate-b", "left") in edges(graph)
    assert ("crate-b", "crate-c", "right") in edges(graph)
    assert graph.nodes["crate-b"]["wall_blocked"] == set()  # 1 from the right wall, clearance 0


def test_lift_edges_cover_the_whole_column_not_only_the_box_directly_on_top():
    doc = {
        "format": "stackproof/instance", "version": 1, "dim": 2, "source": {"size": [3, None]},
        "boxes": [{"id": f"s{k}", "size": [2, 1], "at": [0, k]} for k in range(4)],
        "containers": [{"id": "van", "size": [3, None]}],
    }
    graph = precedence_graph(instance_from_dict(doc))
    lifts = {(j, i) for j, i, k in edges(graph) if k == "lift"}
    assert lifts == {(f"s{b}", f"s{a}") for a in range(4) for b in range(a + 1, 4)}


def test_side_clearance_widens_touching_and_wall_blocking():
    doc = {
        "format": "stackproof/instance", "version": 1, "dim": 3, "source": {"size": [10, 4, 5]},
        "boxes": [
            {"id": "p", "size": [2, 2, 2], "at": [1, 1, 0]},
            {"id": "q", "size": [2, 2, 2], "at": [4, 1, 0]},
        ],
        "containers": [{"id": "van", "size": [5, 5, None]}],
        "rules": {"side_clearance": 0},
    }
    tight = precedence_graph(instance_from_dict(doc))
    assert edges(tight) == set() and tight.nodes["p"]["wall_blocked"] == set()
    doc["rules"]["side_clearance"] = 1
    loose = precedence_graph(instance_from_dict(doc))
    assert edges(loose) == {("q", "p", "right"), ("p", "q", "left")}
    assert loose.nodes["p"]["wall_blocked"] == {"left", "front", "back"}
    doc["rules"]["access"] = "none"
    assert edges(precedence_graph(instance_from_dict(doc))) == set()


def test_no_source_means_no_edges_and_every_face_free():
    doc = copy.deepcopy(FORMATS_INSTANCE)
    del doc["source"]
    for b in doc["boxes"]:
        del b["at"]
    graph = precedence_graph(instance_from_dict(doc))
    assert graph.number_of_edges() == 0 and all(not f for _, f in graph.nodes(data="wall_blocked"))


@settings(max_examples=80, deadline=None)
@given(resting_instances())
def test_lift_edges_form_a_dag_and_follow_height(inst):
    """networkx cross-check: lift edges are acyclic and point from higher to lower boxes."""
    graph = precedence_graph(inst)
    lifts = lift_graph(graph)
    assert nx.is_directed_acyclic_graph(lifts)
    for j, i in lifts.edges:
        assert inst.box(j).at[-1] >= inst.box(i).at[-1] + inst.box(i).size[-1] - 1e-9
    # side edges come in symmetric pairs (j touches i's left face <=> i touches j's right face)
    opposite = {"left": "right", "right": "left", "front": "back", "back": "front"}
    for j, i, k in graph.edges(data="kind"):
        if k != "lift":
            assert graph.edges[i, j]["kind"] == opposite[k]


def test_json_and_dot_renderings_agree():
    graph = precedence_graph(instance_from_dict(FORMATS_INSTANCE))
    doc = to_json(graph)
    dot = to_dot(graph)
    assert len(doc["edges"]) == graph.number_of_edges() == dot.count("->")
    assert doc["wall_blocked"] == {"crate-a": ["left"], "crate-c": ["left"]}
