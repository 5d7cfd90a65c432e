"""Which circuits a change can affect, found from the estate graph.

- A load or a circuit's own data → that circuit; and, where its board hangs below sub-mains,
  the topmost of those sub-mains and everything below it (their design current is the demand
  below them, so their voltage drop and every downstream circuit's voltage drop change).
- A sub-main's own data → it and everything below the board it feeds.
- A board's data → every circuit below it.
- The supply, the site itself, or the shape of the tree (boards added or removed, `fed_by` or
  `feeds` changed) → the whole site.

Board demand and board conditions are recomputed for the whole site each time (cheap sums), so
only circuit checks are selected here.
"""
from __future__ import annotations

import networkx as nx

from tracker import graph
from tracker.tracking.diff import ADDED, REMOVED, Change

STRUCTURAL_FIELDS = {"fed_by", "feeds", "board"}


def _kind(ref: str, *graphs: nx.DiGraph) -> str | None:
    for estate_graph in graphs:
        if ref in estate_graph:
            return graph.kind_of(estate_graph, ref)
    return None


def affected_circuits(changes: list[Change], site_id: str, graph_before: nx.DiGraph,
                      graph_after: nx.DiGraph) -> set[str] | None:
    """Refs of the circuits to re-check; None: the whole site."""
    seeds: set[str] = set()
    out: set[str] = set()
    for change in changes:
        if change.ref == site_id:
            return None
        kind = _kind(change.ref, graph_after, graph_before)
        if change.field in STRUCTURAL_FIELDS:
            return None
        if kind == graph.BOARD:
            if change.change in (ADDED, REMOVED):
                return None
            out |= graph.downstream(graph_after, change.ref, graph.CIRCUIT)
        elif kind == graph.CIRCUIT:
            if change.change in (ADDED, REMOVED) and _feeds_a_board(change.ref, graph_before, graph_after):
                return None
            seeds.add(change.ref)
        elif kind == graph.LOAD or _source_of_circuit(change.ref, graph_after, graph_before):
            seeds.add(change.ref.rsplit("/", 1)[0])   # a load, or a source (not a graph node) on a circuit
        else:
            return None
    for ref in seeds:
        around = graph_after if ref in graph_after else graph_before
        if ref in graph_after:
            out.add(ref)
            out |= graph.downstream(graph_after, ref, graph.CIRCUIT)   # a sub-main: everything below it
        submains = graph.upstream(around, ref, graph.CIRCUIT)
        if submains:
            top = submains[-1]
            out.add(top)
            out |= graph.downstream(graph_after, top, graph.CIRCUIT)
    return out


def _feeds_a_board(ref: str, *graphs: nx.DiGraph) -> bool:
    for estate_graph in graphs:
        if ref in estate_graph and any(graph.kind_of(estate_graph, below) == graph.BOARD
                                       for below in estate_graph.successors(ref)):
            return True
    return False


def _source_of_circuit(ref: str, *graphs: nx.DiGraph) -> bool:
    """A source's ref SITE/BOARD/CIRCUIT/SOURCE (sources are no graph nodes of their own)."""
    if ref.count("/") != 3:
        return False
    circuit = ref.rsplit("/", 1)[0]
    return any(circuit in g and graph.kind_of(g, circuit) == graph.CIRCUIT for g in graphs)
