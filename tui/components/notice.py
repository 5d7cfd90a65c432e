"""A visible notice above the list: open input errors (file and line) or a stopped watcher.

It takes a line or two of its own and never replaces the list: the list keeps the last good
state of a file that does not load.
"""
from __future__ import annotations

from textual.widgets import Static

from tracker.loading.errors import InputError
from tracker.output.terminal_text import clean


class Notice(Static):
    def __init__(self, **kwargs):
        super().__init__("", markup=False, **kwargs)
        self.errors: tuple[InputError, ...] = ()
        self.warnings: tuple = ()
        self.failure = ""
        self.in_force: frozenset = frozenset()
        self.display = False

    def show_errors(self, errors: tuple[InputError, ...], in_force: frozenset = frozenset(),
                    warnings: tuple = ()) -> None:
        self.errors = tuple(errors)
        self.in_force = in_force
        self.warnings = tuple(warnings)
        self._draw()

    def show_failure(self, text: str) -> None:
        self.failure = text
        self._draw()

    def _draw(self) -> None:
        lines = []
        if self.failure:
            lines.append(f"⚠ {clean(self.failure)} — the list shows the last state seen; restart to watch again")
        if self.errors:
            first = self.errors[0]
            more = len(self.errors) - 1
            tail = f" (+{more} more)" if more else ""
            kept = ("the last good state of the file is kept" if first.file in self.in_force
                    else "its site is left out until it loads")
            lines.append(f"⚠ input error: {clean(first)}{tail} — {kept}")
        if self.warnings and not self.errors:   # what `check` warns of (a misspelt key is ignored)
            more = len(self.warnings) - 1
            lines.append(f"! {clean(self.warnings[0])}" + (f" (+{more} more)" if more else ""))
        self.set_class(bool(self.failure), "-failure")
        self.display = bool(lines)
        self.update("\n".join(lines))
