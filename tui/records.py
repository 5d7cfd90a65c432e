"""The UI's own connection to the history: reading an element's timeline and writing
acknowledgements (no Textual here).

It is separate from the watcher's connection (one SQLite connection per thread of work), and
its calls run in worker threads, one at a time (a lock), so the UI thread never waits on disk.
"""
from __future__ import annotations

import threading
from dataclasses import dataclass
from pathlib import Path

from tracker.history import History, NewRevision, history_location
from tracker.history.query import revisions
from tui.snapshot import Row

TIMELINE_LIMIT = 200


class AckRefused(Exception):
    """An acknowledgement that the rules do not allow (nothing open, no note, ...)."""


@dataclass(frozen=True)
class AckWritten:
    ref: str
    revision: int
    author: str
    note: str
    checks: tuple[str, ...]


def ack_problem(row: Row | None, by: str, note: str) -> str | None:
    """Why this acknowledgement cannot be written (None: it can). The rules of `izwatch ack`:
    an element of the site files, with checks that do not pass, a name and a note."""
    if row is None:
        return "that element is no longer in the site files"
    if not row.open_checks:
        return f"{row.ref} passes every check: nothing to acknowledge"
    if not by.strip():
        return "say who is acknowledging it"
    if not note.strip():
        return "the note must say what is being done about it"
    return None


class Records:
    def __init__(self, db_path: Path):
        self.db_path = history_location(db_path)
        self._lock = threading.Lock()
        self._history: History | None = None

    def _open(self) -> History:
        if self._history is None:
            self._history = History.open(self.db_path)
        return self._history

    def timeline(self, ref: str, limit: int = TIMELINE_LIMIT) -> list[dict]:
        """The revisions that concern `ref`, newest first (tracker.history.query.revisions)."""
        with self._lock:
            return revisions(self._open(), ref=ref, limit=limit, newest_first=True)

    def acknowledge(self, row: Row, by: str, note: str) -> AckWritten:
        why = ack_problem(row, by, note)
        if why:
            raise AckRefused(why)
        checks = list(row.open_checks)
        with self._lock:
            rec = self._open().record(NewRevision(source="ack", author=by.strip(), site=row.site_id,
                                                  note=note.strip(), ack=(row.ref, checks)))
        return AckWritten(row.ref, rec.id, rec.author, note.strip(), tuple(checks))

    def close(self) -> None:
        with self._lock:
            if self._history is not None:
                self._history.close()
                self._history = None
