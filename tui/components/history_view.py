"""The history tab: the revisions that concern an element, newest first, read from SQLite."""
from __future__ import annotations

from collections.abc import Callable
from datetime import datetime

from rich.console import Group, RenderableType
from rich.table import Table
from rich.text import Text
from textual.reactive import reactive
from textual.widget import Widget

from tui.timeline import Entry
from tui.wording import ago, stamp, utc_now

EVENT_STYLE = {"newly-failing": "new", "worse": "new", "cleared": "pass", "input-error": "warn"}


class HistoryView(Widget):
    COMPONENT_CLASSES = {"history--head", "history--dim", "history--new", "history--pass", "history--warn",
                         "history--ack"}

    entries: reactive[list[Entry] | None] = reactive(None, layout=True, always_update=True)
    error: reactive[str] = reactive("", layout=True)

    def __init__(self, clock: Callable[[], datetime] = utc_now, **kwargs):
        super().__init__(**kwargs)
        self.clock = clock

    def _s(self, name: str):
        return self.get_component_rich_style(f"history--{name}")

    def render(self) -> RenderableType:
        if self.error:
            return Text(f"⚠ the history could not be read: {self.error}", style=self._s("warn"))
        if self.entries is None:
            return Text("reading the history…", style=self._s("dim"))
        if not self.entries:
            return Text("No revision concerns this element yet.", style=self._s("dim"))
        now = self.clock()
        parts = []
        for e in self.entries:
            head = Text(f"revision {e.revision} · {stamp(e.at)} ({ago(e.at, now)}) · {e.headline} by {e.author}",
                        style=self._s("head"))
            if e.file:
                head.append(f" · {e.file}", style=self._s("dim"))
            grid = Table.grid(padding=(0, 1))
            grid.add_column(no_wrap=True, width=3)
            grid.add_column(ratio=1)
            for item in e.items:
                style = ""
                if item.kind == "event":
                    style = self._s(EVENT_STYLE.get(item.transition, "dim"))
                elif item.kind == "ack":
                    style = self._s("ack")
                elif item.kind == "note":
                    style = self._s("dim")
                grid.add_row(Text(f" {item.mark}", style=style), Text(item.text, style=style))
            parts += [head, grid, Text("")]
        return Group(*parts)
