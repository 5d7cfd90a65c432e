"""The deadlines across the estate: what the inspection cycle asks of each site and when —
overdue first — with the rule each date comes from. Opened with d; Esc closes."""
from __future__ import annotations

from collections.abc import Callable
from datetime import datetime

from rich.console import Group
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Static

from tui import deadlines
from tui.wording import local_day, utc_now

NOTE = ("Deadlines as izwatch reads the regulations cited beside each (tracker/data/deadlines.yaml); "
        "[recalled] marks a rule not confirmed. The law in force decides.")


class DeadlinesScreen(ModalScreen[None]):
    BINDINGS = [Binding("escape,d,q", "close", "close"), Binding("a", "toggle_done", "done items too")]

    def __init__(self, snapshot, clock: Callable[[], datetime] = utc_now, **kwargs):
        super().__init__(**kwargs)
        self.snapshot = snapshot
        self.clock = clock
        self.show_done = False

    def compose(self) -> ComposeResult:
        with Vertical(id="deadlines-box"):
            yield Static("Deadlines of the inspection cycle", id="deadlines-title")
            with VerticalScroll(id="deadlines-scroll"):
                yield Static(self._body(), id="deadlines-body")
            yield Button("Close", id="deadlines-close", compact=True)

    def _body(self) -> Group:
        on = local_day(self.clock())
        found = deadlines.rows(self.snapshot, on, self.show_done)
        c = deadlines.counts(self.snapshot, on)
        head = Text(f"on {on.isoformat()}: {c['overdue']} overdue, {c['due-soon']} due soon, {c['ok']} ok, "
                    f"{c['done']} done" + ("" if self.show_done else " (a: show the done ones)"))
        if not found:
            return Group(head, Text(""), Text("Nothing to show: no site has a deadline on record.", style="dim"))
        grid = Table.grid(padding=(0, 2))
        grid.add_column(no_wrap=True)
        grid.add_column(no_wrap=True)
        grid.add_column(no_wrap=True)
        grid.add_column(ratio=1)
        for r in found:
            style = "bold" if r.status == "overdue" else ""
            grid.add_row(Text(r.mark, style=style), r.due, r.site, Text(r.what, style=style))
            grid.add_row("", "", "", Text(r.source, style="dim"))
        return Group(head, Text(""), grid, Text(""), Text(NOTE, style="dim"))

    def action_toggle_done(self) -> None:
        self.show_done = not self.show_done
        self.query_one("#deadlines-body", Static).update(self._body())

    def on_button_pressed(self, event: Button.Pressed) -> None:
        self.dismiss(None)

    def action_close(self) -> None:
        self.dismiss(None)
