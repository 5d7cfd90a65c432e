"""The unobtrusive caution at the foot of every screen: the longest wording that fits on one
line (the help screen has it in full)."""
from __future__ import annotations

from textual import events
from textual.widgets import Static

from tracker.output.json_out import CAUTION

WORDINGS = (
    f"Caution: {CAUTION}",
    "Caution: izwatch supports, and does not replace, a competent person. Verify against the current wiring "
    "regulations, local codes and manufacturers' data. Work is for qualified people. (? help)",
    "Caution: supports, does not replace, a competent person. Verify against current regulations, local codes "
    "and makers' data. (? help)",
    "Caution: supports, does not replace, a competent person; verify first (? help)",
)


def wording_for(width: int) -> str:
    for text in WORDINGS:
        if len(text) <= width - 2:
            return text
    return WORDINGS[-1]


class CautionLine(Static):
    def __init__(self, **kwargs):
        super().__init__(WORDINGS[-1], **kwargs)

    def on_resize(self, event: events.Resize) -> None:
        self.update(wording_for(event.size.width))
