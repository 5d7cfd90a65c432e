"""The estate graph and its helpers, on the demo estate."""
from __future__ import annotations

import networkx as nx

from tests.conftest import DEMO
from tracker import graph
from tracker.loading import load_estate


def demo_graph():
    estate = load_estate(DEMO)
    return estate, graph.build_graph(estate.sites.values())


def test_nodes_are_refs_and_kinds():
    estate, g = demo_graph()
    assert g.nodes["orchard-end"]["kind"] == "supply"
    assert g.nodes["orchard-end/CU1"]["kind"] == "board"
    assert g.nodes["orchard-end/CU1/6"]["kind"] == "circuit"
    assert g.nodes["orchard-end/WS1/4/charger"]["kind"] == "load"
    n_circuits = sum(len(s.circuits) for s in estate.sites.values())
    assert sum(1 for _, d in g.nodes(data=True) if d["kind"] == "circuit") == n_circuits


def test_it_is_a_forest_of_one_tree_per_site():
    estate, g = demo_graph()
    assert nx.is_directed_acyclic_graph(g)
    roots = [n for n in g if g.in_degree(n) == 0]
    assert sorted(roots) == sorted(estate.sites)
    assert all(g.in_degree(n) == 1 for n in g if n not in roots)


def test_path_from_origin_through_a_submain():
    _, g = demo_graph()
    assert graph.path_from_origin(g, "orchard-end/WS1/4") == [
        "orchard-end", "orchard-end/CU1", "orchard-end/CU1/6", "orchard-end/WS1", "orchard-end/WS1/4"]
    assert graph.upstream(g, "orchard-end/WS1/4", kind="board") == ["orchard-end/WS1", "orchard-end/CU1"]


def test_downstream_of_a_board():
    _, g = demo_graph()
    below = graph.downstream(g, "orchard-end/CU1", kind="board")
    assert below == {"orchard-end/WS1"}
    circuits = graph.downstream(g, "orchard-end/WS1", kind="circuit")
    assert circuits == {f"orchard-end/WS1/{i}" for i in ("1", "2", "3", "4")}
    assert "orchard-end/WS1/4/charger" in graph.downstream(g, "orchard-end/CU1/6")


def test_remove_and_add_site():
    estate, g = demo_graph()
    before = g.number_of_nodes()
    graph.remove_site(g, "orchard-end")
    assert not any(n.startswith("orchard-end") for n in g)
    graph.add_site(g, estate.sites["orchard-end"])
    assert g.number_of_nodes() == before
