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

from tracker import graph as G
from tracker.tracking.diff import ADDED, REMOVED, Change

STRUCTURAL_FIELDS = {"fed_by", "feeds", "board"}


def _kind(ref: str, *graphs: nx.DiGraph) -> str | None:
    for g in graphs:
        if ref in g:
            return G.kind_of(g, ref)
    return None


def affected_circuits(changes: list[Change], site_id: str, g_old: nx.DiGraph, g_new: nx.DiGraph) -> set[str] | None:
    """Refs of the circuits to re-check; None: the whole site."""
    seeds: set[str] = set()
    out: set[str] = set()
    for ch in changes:
        if ch.ref == site_id:
            return None
        kind = _kind(ch.ref, g_new, g_old)
        if ch.field in STRUCTURAL_FIELDS:
            return None
        if kind == G.BOARD:
            if ch.change in (ADDED, REMOVED):
                return None
            out |= G.downstream(g_new, ch.ref, G.CIRCUIT)
        elif kind == G.CIRCUIT:
            if ch.change in (ADDED, REMOVED) and _feeds_a_board(ch.ref, g_old, g_new):
                return None
            seeds.add(ch.ref)
        elif kind == G.LOAD:
            seeds.add(ch.ref.rsplit("/", 1)[0])
        else:
            return None
    for ref in seeds:
        g = g_new if ref in g_new else g_old
        if ref in g_new:
            out.add(ref)
            out |= G.downstream(g_new, ref, G.CIRCUIT)   # a sub-main: everything below it
        submains = G.upstream(g, ref, G.CIRCUIT)
        if submains:
            top = submains[-1]
            out.add(top)
            out |= G.downstream(g_new, top, G.CIRCUIT)
    return out


def _feeds_a_board(ref: str, *graphs: nx.DiGraph) -> bool:
    for g in graphs:
        if ref in g and any(G.kind_of(g, s) == G.BOARD for s in g.successors(ref)):
            return True
    return False
