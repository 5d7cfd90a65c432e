"""A one-line clickable choice: a filter of the problem list, or a view in the top bar.

The chosen one is marked by a filled circle as well as by its style, so the choice reads
without colour.
"""
from __future__ import annotations

from textual.message import Message
from textual.reactive import reactive
from textual.widgets import Static


class Chip(Static):
    chosen: reactive[bool] = reactive(False)

    def __init__(self, label: str, value: str, key: str, make: type[Message], **kwargs):
        super().__init__("", **kwargs)
        self.label = label
        self.value = value
        self.key = key
        self.make = make
        self.count: int | None = None
        self.tooltip = f"{label} (key {key})"

    def set_count(self, count: int | None) -> None:
        self.count = count
        self._draw()

    def watch_chosen(self, chosen: bool) -> None:
        self.set_class(chosen, "-chosen")
        self._draw()

    def on_mount(self) -> None:
        self._draw()

    def _draw(self) -> None:
        dot = "◉" if self.chosen else "○"
        count = f" {self.count}" if self.count is not None else ""
        self.update(f"{self.key} {dot} {self.label}{count}")

    def on_click(self) -> None:
        self.post_message(self.make(self.value))
