"""The details of one circuit, board or origin: its working, and its history from SQLite."""
from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Static, TabbedContent, TabPane

from tui.components.caution_line import CautionLine
from tui.components.history_view import HistoryView
from tui.components.working_view import WorkingView
from tui.snapshot import Row, Snapshot
from tui.wording import STATE_MARK, STATE_SHORT
from tui.working import working_of

WORKING, HISTORY = "working-tab", "history-tab"


class DetailsScreen(Screen):
    BINDINGS = [
        Binding("escape", "back", "back"),
        Binding("w", "tab('working-tab')", "working"),
        Binding("h", "tab('history-tab')", "history"),
        Binding("a", "acknowledge", "ack"),
        Binding("left_square_bracket", "step(-1)", "previous", key_display="["),
        Binding("right_square_bracket", "step(1)", "next", key_display="]"),
    ]

    def __init__(self, row: Row, snapshot: Snapshot, neighbours: list[str], clock, **kwargs):
        super().__init__(**kwargs)
        self.row = row
        self.snapshot = snapshot
        self.neighbours = neighbours          # refs of the list the screen was opened from, in order
        self.clock = clock
        self._remedy_for: int | None = None   # id() of the result the remedy was found for
        self._timeline_head: int | None = None

    def compose(self) -> ComposeResult:
        yield Static("", id="details-title")
        with TabbedContent(initial=WORKING, id="details-tabs"):
            with TabPane("Working", id=WORKING):
                with VerticalScroll(id="working-scroll"):
                    yield WorkingView(clock=self.clock, id="working-view")
            with TabPane("History", id=HISTORY):
                with VerticalScroll(id="history-scroll"):
                    yield HistoryView(clock=self.clock, id="history-view")
        yield CautionLine(id="caution")
        yield Footer()

    def on_mount(self) -> None:
        self._draw(reload=True)
        self.query_one("#working-scroll").focus()

    # -- content ------------------------------------------------------------------------

    def _title(self) -> str:
        r = self.row
        name = f"  {r.name}" if r.name else ""
        failing = f" — failing: {', '.join(r.failing)}" if r.failing else (
            f" — open: {', '.join(r.open_checks)}" if r.open_checks else " — every check passes")
        pos = ""
        if r.ref in self.neighbours:
            pos = f"   ({self.neighbours.index(r.ref) + 1} of {len(self.neighbours)})"
        return f"{STATE_MARK[r.state]} {STATE_SHORT[r.state]}  {r.ref}{name}{failing}{pos}"

    def _draw(self, reload: bool) -> None:
        self.query_one("#details-title", Static).update(self._title())
        working = working_of(self.row, self.snapshot)
        self.query_one(WorkingView).show(working, self.row)
        sr = self.snapshot.site_of(self.row.ref)
        result = sr.circuits.get(self.row.ref) if sr is not None else None
        if working is not None and working.wants_remedy and result is not None:
            if reload or self._remedy_for != id(result):
                self._remedy_for = id(result)
                self.query_one(WorkingView).remedy = ""
                self.app.find_remedy(self.row.ref, result)
        if reload or self._timeline_head != self.snapshot.head:
            self._timeline_head = self.snapshot.head
            self.app.load_timeline(self.row.ref)

    def show_snapshot(self, snapshot: Snapshot) -> None:
        self.snapshot = snapshot
        self.row = snapshot.by_ref.get(self.row.ref, self.row)
        self._draw(reload=False)

    def show_timeline(self, ref: str, entries, error: str = "") -> None:
        if ref != self.row.ref:
            return
        view = self.query_one(HistoryView)
        view.error = error
        view.entries = entries

    def show_remedy(self, ref: str, text: str) -> None:
        if ref == self.row.ref:
            self.query_one(WorkingView).remedy = text

    # -- actions ------------------------------------------------------------------------

    def action_back(self) -> None:
        self.app.pop_screen()

    def action_tab(self, tab: str) -> None:
        self.query_one(TabbedContent).active = tab
        self.query_one("#working-scroll" if tab == WORKING else "#history-scroll").focus()

    def action_acknowledge(self) -> None:
        self.app.ask_acknowledgement(self.row)

    def action_step(self, step: int) -> None:
        if self.row.ref not in self.neighbours:
            return
        i = self.neighbours.index(self.row.ref) + step
        if not 0 <= i < len(self.neighbours):
            self.notify("That is the end of the list.", timeout=2)
            return
        row = self.snapshot.by_ref.get(self.neighbours[i])
        if row is None:
            return
        self.row = row
        self.query_one(HistoryView).entries = None
        self._draw(reload=True)
