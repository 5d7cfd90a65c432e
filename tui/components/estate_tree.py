"""The estate as it is wired: sites → boards → circuits, a sub-main → the board it feeds.

Children are made only when a branch is opened, so a large estate costs one node per site
until somebody walks into it. A new snapshot relabels what is loaded and reloads only the
branches of sites whose results changed, keeping what was open and where the cursor was.
"""
from __future__ import annotations

from dataclasses import dataclass

from rich.text import Text
from textual.binding import Binding
from textual.widgets import Tree
from textual.widgets.tree import TreeNode

from tui.messages import OpenElement
from tracker.output.terminal_text import clean
from tui.snapshot import EMPTY, Row, Snapshot
from tui.wording import ACKED, NEW, PASS, STATE_MARK, STATE_SHORT, STATES

SITE, BOARD, CIRCUIT = "site", "board", "circuit"


@dataclass
class Branch:
    kind: str
    ref: str
    site_id: str
    loaded: bool = False


@dataclass
class _SiteTally:
    worst: str = PASS
    new: int = 0
    failing: int = 0
    circuits: int = 0


def site_tallies(snapshot: Snapshot) -> dict[str, _SiteTally]:
    rank = {s: i for i, s in enumerate(STATES)}
    out: dict[str, _SiteTally] = {}
    for r in snapshot.rows:
        t = out.setdefault(r.site_id, _SiteTally())
        if rank[r.state] < rank[t.worst]:
            t.worst = r.state
        t.new += r.state == NEW
        t.failing += r.state in (NEW, ACKED)
        t.circuits += r.kind == "circuit"
    return out


class EstateTree(Tree[Branch]):
    BINDINGS = [
        Binding("enter", "open_details", "details", show=True),
        Binding("right,l", "open_branch", "open branch", show=False),
        Binding("left,h", "close_branch", "close branch", show=False),
    ]
    COMPONENT_CLASSES = {"estate-tree--new", "estate-tree--acknowledged", "estate-tree--warn",
                         "estate-tree--not-assessed", "estate-tree--pass", "estate-tree--dim"}

    def __init__(self, **kwargs):
        super().__init__("estate", **kwargs)
        self.show_root = False
        self.auto_expand = False
        self.snapshot: Snapshot = EMPTY
        self._tallies: dict[str, _SiteTally] = {}
        self._sites: dict[str, TreeNode[Branch]] = {}
        self._results_seen: dict[str, object] = {}     # site id -> the results its branch shows

    # -- labels -------------------------------------------------------------------------

    def _mark(self, state: str) -> tuple[str, str]:
        return f"{STATE_MARK[state]} {STATE_SHORT[state]:<5}", f"estate-tree--{state}"

    def _labelled(self, state: str, main: str, tail: str = "", name: str = "") -> Text:
        mark, style = self._mark(state)
        text = Text()
        text.append(mark, style=self.get_component_rich_style(style))
        text.append(" " + main)
        if tail:
            text.append("  " + tail, style=self.get_component_rich_style(style))
        if name:
            text.append("  " + name, style=self.get_component_rich_style("estate-tree--dim"))
        return text

    def _label(self, b: Branch) -> Text:
        snap = self.snapshot
        if b.kind == SITE:
            sr = snap.sites.get(b.site_id)
            t = self._tallies.get(b.site_id, _SiteTally())
            name = clean(sr.site.name) if sr else ""
            tail = f"{t.failing} failing" + (f" ({t.new} new)" if t.new else "") if t.failing else "no failures"
            return self._labelled(t.worst, b.site_id, tail, f"{t.circuits} circuits · {name}" if name else "")
        row = snap.by_ref.get(b.ref)
        if row is None:
            return Text(f"  {b.ref} (gone)")
        if b.kind == BOARD:
            sr = snap.sites[b.site_id]
            br = sr.boards[b.ref]
            limit = f" of {br.check.limit:g} A" if br.check.limit is not None else ""
            d = br.demand
            if d.phases_a is not None:
                demand = "3-phase, demand " + "/".join(f"{i:.1f}" for i in d.phases_a) + f" A{limit} (L1/L2/L3)"
            else:
                demand = (f"on {br.ctx.line}, " if br.ctx.line else "") + f"demand {d.demand_a:.1f} A{limit}"
            return self._labelled(row.state, br.board_id, demand, row.name)
        tail = ", ".join(row.failing or row.open_checks)
        sr = snap.sites[b.site_id]
        circuit = sr.circuits[b.ref].circuit
        if circuit.feeds:
            tail = (tail + " · " if tail else "") + f"feeds {circuit.feeds}"
        phase = "3-phase " if circuit.three_phase else (f"{circuit.phase} " if circuit.phase else "")
        return self._labelled(row.state, f"{row.circuit_id} {phase}{row.name}".rstrip(), tail)


    # -- building -----------------------------------------------------------------------

    def _children(self, b: Branch) -> list[Branch]:
        sr = self.snapshot.sites.get(b.site_id)
        if sr is None:
            return []
        site = sr.site
        if b.kind == SITE:
            return [Branch(BOARD, f"{site.id}/{x.id}", site.id) for x in site.boards if x.at_origin]
        if b.kind == BOARD:
            board_id = b.ref.split("/", 1)[1]
            return [Branch(CIRCUIT, f"{site.id}/{c.board}/{c.id}", site.id) for c in site.circuits
                    if c.board == board_id]
        r = sr.circuits.get(b.ref)
        if r is not None and r.circuit.feeds:
            return [Branch(BOARD, f"{site.id}/{r.circuit.feeds}", site.id)]
        return []

    def _expandable(self, b: Branch) -> bool:
        if b.kind != CIRCUIT:
            return True
        sr = self.snapshot.sites.get(b.site_id)
        r = sr.circuits.get(b.ref) if sr else None
        return bool(r and r.circuit.feeds)

    def _load(self, node: TreeNode[Branch]) -> None:
        b = node.data
        if b is None or b.loaded:
            return
        b.loaded = True
        for child in self._children(b):
            node.add(self._label(child), data=child, allow_expand=self._expandable(child))

    def on_tree_node_expanded(self, event: Tree.NodeExpanded[Branch]) -> None:
        self._load(event.node)

    def show(self, snapshot: Snapshot) -> None:
        before = self._tallies
        self.snapshot = snapshot
        self._tallies = site_tallies(snapshot)
        ids = list(snapshot.sites)
        if list(self._sites) != ids:
            self._rebuild(ids)
            return
        for site_id, node in self._sites.items():
            sr = snapshot.sites[site_id]
            if self._results_seen.get(site_id) is not sr:
                self._results_seen[site_id] = sr
                self._reload(node)
            elif node.children or before.get(site_id) != self._tallies.get(site_id):
                # a closed site's label is its tally; an opened one's rows may have changed state
                self._relabel(node)

    def _open_refs(self, node: TreeNode[Branch]) -> set[str]:
        out = set()
        stack = [node]
        while stack:
            n = stack.pop()
            if n.is_expanded and n.data is not None:
                out.add(n.data.ref + "#" + n.data.kind)
            stack.extend(n.children)
        return out

    def _reopen(self, node: TreeNode[Branch], keep: set[str]) -> None:
        if node.data is not None and node.data.ref + "#" + node.data.kind in keep:
            self._load(node)
            node.expand()
            for child in node.children:
                self._reopen(child, keep)

    def _reload(self, node: TreeNode[Branch]) -> None:
        cursor = self.cursor_node.data.ref if self.cursor_node and self.cursor_node.data else None
        keep = self._open_refs(node)
        node.remove_children()
        node.data.loaded = False
        node.set_label(self._label(node.data))
        self._reopen(node, keep)
        if cursor is not None:
            self._cursor_to(cursor)

    def _relabel(self, node: TreeNode[Branch]) -> None:
        stack = [node]
        while stack:
            n = stack.pop()
            if n.data is not None:
                n.set_label(self._label(n.data))
            stack.extend(n.children)

    def _rebuild(self, ids: list[str]) -> None:
        keep = set()
        for node in self._sites.values():
            keep |= self._open_refs(node)
        cursor = self.cursor_node.data.ref if self.cursor_node and self.cursor_node.data else None
        self.clear()
        self._sites = {}
        self._results_seen = {}
        for site_id in ids:
            b = Branch(SITE, site_id, site_id)
            node = self.root.add(self._label(b), data=b, allow_expand=True)
            self._sites[site_id] = node
            self._results_seen[site_id] = self.snapshot.sites[site_id]
        self.root.expand()
        for node in self._sites.values():
            self._reopen(node, keep)
        if cursor is not None:
            self._cursor_to(cursor)

    def _cursor_to(self, ref: str) -> None:
        stack = list(self.root.children)
        while stack:
            n = stack.pop(0)
            if n.data is not None and n.data.ref == ref:
                self.move_cursor(n, animate=False)
                return
            stack.extend(n.children)

    # -- actions ------------------------------------------------------------------------

    def row_of(self, node: TreeNode[Branch] | None) -> Row | None:
        if node is None or node.data is None:
            return None
        return self.snapshot.by_ref.get(node.data.ref)    # a site's own row is its origin's

    def action_open_details(self) -> None:
        row = self.row_of(self.cursor_node)
        if row is not None:
            self.post_message(OpenElement(row))

    def action_open_branch(self) -> None:
        node = self.cursor_node
        if node is not None and node.allow_expand and not node.is_expanded:
            node.expand()

    def action_close_branch(self) -> None:
        node = self.cursor_node
        if node is None:
            return
        if node.is_expanded:
            node.collapse()
        elif node.parent is not None and node.parent is not self.root:
            self.move_cursor(node.parent, animate=False)

    def on_tree_node_selected(self, event: Tree.NodeSelected[Branch]) -> None:
        """A click on a label: a circuit opens its details; a site or a board opens or closes."""
        event.stop()
        node = event.node
        if node.data is None:
            return
        if node.data.kind == CIRCUIT and not node.allow_expand:
            row = self.row_of(node)
            if row is not None:
                self.post_message(OpenElement(row))
        else:
            node.toggle()

