"""Checks made of several requirements (ev-charging, generation): each requirement gives a
status and a line naming its clause; the check's status is the worst of them and its detail
lists the worst first."""
from __future__ import annotations

from tracker.checks.result import NOT_ASSESSED, SEVERITY, worst


class Parts:
    def __init__(self) -> None:
        self.items: list[tuple[str, str]] = []

    def add(self, status: str, text: str) -> None:
        self.items.append((status, text))

    @property
    def status(self) -> str:
        return worst(s for s, _ in self.items)

    def detail(self) -> str:
        ordered = sorted(self.items, key=lambda item: -SEVERITY[item[0]])
        text = "; ".join(f"{text}" if status == "pass" else f"[{status}] {text}" for status, text in ordered)
        if self.status == NOT_ASSESSED:   # the form every not-assessed detail takes
            text = "not assessed: what the site file does not record — " + text
        return text
