"""Messages between the watcher's worker, the widgets and the app.

Small dataclasses: the watcher thread talks to the UI only by posting these.
"""
from __future__ import annotations

from dataclasses import dataclass

from textual.message import Message

from tui.live import News
from tui.records import AckWritten
from tui.snapshot import Row, Snapshot
from tui.timeline import Entry


@dataclass
class EstateChanged(Message):
    """A new picture of the estate. Only the latest matters, so a newer one replaces a queued one."""

    snapshot: Snapshot
    reason: str            # 'start' | 're-check' | 'change' | 'refresh'

    def can_replace(self, message: Message) -> bool:
        return isinstance(message, EstateChanged)


@dataclass
class FilesProcessed(Message):
    """Saves the watcher has re-checked and recorded (for the announcements)."""

    news: list[News]


@dataclass
class WatchStatus(Message):
    text: str

    def can_replace(self, message: Message) -> bool:
        return isinstance(message, WatchStatus)


@dataclass
class WatchFailed(Message):
    text: str


@dataclass
class OpenElement(Message):
    """Show the details of a row (from the problem list or the estate tree)."""

    row: Row


@dataclass
class RowFocused(Message):
    """The problem list's cursor moved to a row (None: the list is empty)."""

    row: Row | None


@dataclass
class TimelineLoaded(Message):
    ref: str
    entries: list[Entry]
    error: str = ""


@dataclass
class RemedyFound(Message):
    ref: str
    text: str


@dataclass
class AckDone(Message):
    written: AckWritten


@dataclass
class AckFailed(Message):
    ref: str
    text: str


@dataclass
class FilterChosen(Message):
    """One of the problem list's filters was clicked."""

    which: str


@dataclass
class ViewChosen(Message):
    """'problems' or 'estate' was clicked in the top bar."""

    which: str
