"""The estate as a directed graph: supply → board → circuit → load, and sub-main → the board
it feeds. Nodes are named by their refs (SPEC §2); the origin of a site is the node named by
the site id. Each node has one attribute, ``kind`` (supply | board | circuit | load).

Every node but an origin has exactly one predecessor (the loader guarantees one path to the
supply), so the path to the origin is a walk up the predecessors.
"""
from __future__ import annotations

import networkx as nx

from tracker.model import SUPPLY, Site, board_ref, circuit_ref, load_ref

SUPPLY_NODE = "supply"
BOARD, CIRCUIT, LOAD = "board", "circuit", "load"


def site_nodes(site: Site) -> tuple[list[tuple[str, dict]], list[tuple[str, str]]]:
    nodes = [(site.id, {"kind": SUPPLY_NODE})]
    edges = []
    for b in site.boards:
        ref = board_ref(site.id, b.id)
        nodes.append((ref, {"kind": BOARD}))
        parent = site.id if b.fed_by == SUPPLY else f"{site.id}/{b.fed_by}"
        edges.append((parent, ref))
    for c in site.circuits:
        ref = circuit_ref(site.id, c)
        nodes.append((ref, {"kind": CIRCUIT}))
        edges.append((board_ref(site.id, c.board), ref))
        for ld in c.loads:
            lref = load_ref(site.id, c, ld)
            nodes.append((lref, {"kind": LOAD}))
            edges.append((ref, lref))
    return nodes, edges


def add_site(g: nx.DiGraph, site: Site) -> None:
    nodes, edges = site_nodes(site)
    g.add_nodes_from(nodes)
    g.add_edges_from(edges)


def remove_site(g: nx.DiGraph, site_id: str) -> None:
    if site_id in g:
        g.remove_nodes_from([site_id, *nx.descendants(g, site_id)])


def build_graph(sites) -> nx.DiGraph:
    g = nx.DiGraph()
    for site in sites:
        add_site(g, site)
    return g


def parent(g: nx.DiGraph, ref: str) -> str | None:
    for p in g.predecessors(ref):
        return p
    return None


def path_from_origin(g: nx.DiGraph, ref: str) -> list[str]:
    """Refs from the site's origin down to `ref`, both included."""
    path = [ref]
    cur = parent(g, ref)
    while cur is not None:
        path.append(cur)
        cur = parent(g, cur)
    path.reverse()
    return path


def upstream(g: nx.DiGraph, ref: str, kind: str | None = None) -> list[str]:
    """Nodes above `ref` (nearest first), optionally only those of one kind."""
    out = []
    cur = parent(g, ref)
    while cur is not None:
        if kind is None or g.nodes[cur]["kind"] == kind:
            out.append(cur)
        cur = parent(g, cur)
    return out


def downstream(g: nx.DiGraph, ref: str, kind: str | None = None) -> set[str]:
    """Everything below `ref` (boards, circuits, loads), optionally of one kind."""
    found = nx.descendants(g, ref)
    if kind is None:
        return found
    return {n for n in found if g.nodes[n]["kind"] == kind}


def kind_of(g: nx.DiGraph, ref: str) -> str:
    return g.nodes[ref]["kind"]
