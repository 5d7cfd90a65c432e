"""The top line: which view is shown (clickable), the estate and what the watcher is doing."""
from __future__ import annotations

from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.widgets import Static

from tui.components.chip import Chip
from tui.messages import ViewChosen

PROBLEMS, ESTATE = "problems", "estate"


class TopBar(Horizontal):
    def __init__(self, estate_name: str, **kwargs):
        super().__init__(**kwargs)
        self.estate_name = estate_name
        # What the line says until the watcher reports: set here, not when the screen mounts,
        # because on a busy machine the first snapshot can arrive before the screen's mount
        # handler runs, and the mount would then put "checking…" back over "watching …".
        self._status_parts = ("checking every circuit…", "")

    def compose(self) -> ComposeResult:
        yield Static("izwatch", id="app-name")
        yield Chip("Problems", PROBLEMS, "p", ViewChosen, id="view-problems", classes="view-chip")
        yield Chip("Estate", ESTATE, "e", ViewChosen, id="view-estate", classes="view-chip")
        yield Static(f"{self.estate_name} · {self._status_parts[0]}", id="watch-status")

    def choose(self, view: str) -> None:
        self.query_one("#view-problems", Chip).chosen = view == PROBLEMS
        self.query_one("#view-estate", Chip).chosen = view == ESTATE

    def set_status(self, text: str, more: str = "") -> None:
        """`more` is shown where the line has room for it."""
        self._status_parts = (text, more)
        self._draw()

    def on_resize(self) -> None:
        self._draw()

    def _draw(self) -> None:
        text, more = self._status_parts
        line = f"{self.estate_name} · {text}"
        if more and len(line) + len(more) + 3 <= self.size.width - 34:
            line += f" · {more}"
        self.query_one("#watch-status", Static).update(line)
