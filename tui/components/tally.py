"""Counts per state at a glance, each with its symbol and word."""
from __future__ import annotations

from rich.text import Text
from textual.reactive import reactive
from textual.widget import Widget

from tui.snapshot import EMPTY, Snapshot
from tui.wording import ACKED, NEW, NOT_ASSESSED, PASS, STATE_MARK, WARN

LONG = {NEW: "newly broken", ACKED: "acknowledged", WARN: "warning", NOT_ASSESSED: "not assessed", PASS: "passing"}
SHORT = {NEW: "new", ACKED: "ack'd", WARN: "warn", NOT_ASSESSED: "n/a", PASS: "ok"}


class Tally(Widget):
    COMPONENT_CLASSES = {"tally--new", "tally--acknowledged", "tally--warn", "tally--not-assessed", "tally--pass",
                         "tally--errors", "tally--dim"}

    snapshot: reactive[Snapshot] = reactive(EMPTY, always_update=True)
    checking: reactive[bool] = reactive(True)

    def render(self) -> Text:
        snap = self.snapshot
        if self.checking and not snap.rows:
            return Text("checking every circuit…", style=self.get_component_rich_style("tally--dim"))
        words = LONG if self.size.width >= 100 else SHORT
        text = Text()
        for state in (NEW, ACKED, WARN, NOT_ASSESSED, PASS):
            if text:
                text.append("  ")
            text.append(f"{STATE_MARK[state]} {snap.counts.get(state, 0)} {words[state]}",
                        style=self.get_component_rich_style(f"tally--{state}"))
        files = len({e.file for e in snap.errors})
        if files:
            text.append("  ")
            text.append(f"⚠ {files} file{'s' if files != 1 else ''} with input errors",
                        style=self.get_component_rich_style("tally--errors"))
        return text
