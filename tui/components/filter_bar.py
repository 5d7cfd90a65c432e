"""The problem list's filters (newly broken / all failing / everything) and its search."""
from __future__ import annotations

from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.widgets import Input, Static

from tui.components.chip import Chip
from tui.messages import FilterChosen
from tui.snapshot import SHOW_ALL, SHOW_FAILING, SHOW_NEW

FILTER_LABELS = ((SHOW_NEW, "New", "1"), (SHOW_FAILING, "Failing", "2"), (SHOW_ALL, "All", "3"))


class FilterBar(Horizontal):
    def compose(self) -> ComposeResult:
        for value, label, key in FILTER_LABELS:
            yield Chip(label, value, key, FilterChosen, id=f"filter-{value}", classes="filter-chip")
        yield Static("/", id="search-key")
        yield Input(placeholder="find a ref or a name", id="search")

    def choose(self, which: str) -> None:
        for value, _, _ in FILTER_LABELS:
            self.query_one(f"#filter-{value}", Chip).chosen = value == which

    def set_counts(self, counts: dict[str, int]) -> None:
        for value, _, _ in FILTER_LABELS:
            self.query_one(f"#filter-{value}", Chip).set_count(counts.get(value))
