"""Revisions the date makes: a deadline overdue only because a day passed.

No file changed and no person acted, so such a revision has no file, its source is `date`
(migration 3) and its author is `DATE_AUTHOR`, never a person. Its events are the deadline events
(check `deadline`) of the items newly overdue. What the history already holds is read under the
write lock, in the same transaction that writes (`History.record_checked`), so a restart or a
second watcher on the same history never records the same item twice.
"""
from __future__ import annotations

import sqlite3

from tracker.history.store import MIGRATION_STEPS, HistoryError

DATE_SOURCE = "date"
DATE_AUTHOR = "izwatch (date passed)"
DEADLINE_CHECK = "deadline"    # the check id deadline events carry (tracker/inspection/events.py)

_OLD_CHECK = "CHECK (source IN ('watch', 'replace', 'startup', 'ack'))"
_NEW_CHECK = "CHECK (source IN ('watch', 'replace', 'startup', 'ack', 'date'))"
_CHUNK = 400   # refs per query (SQLite's default limit of bound parameters is far above)


def deadline_events(history, refs) -> list[tuple[str, str, str]]:
    """(ref, transition, detail) of every deadline event recorded for `refs`, oldest first."""
    refs = sorted(set(refs))
    rows: list[tuple] = []
    for start in range(0, len(refs), _CHUNK):
        part = refs[start:start + _CHUNK]
        rows += history.db.execute(
            "SELECT revision_id, seq, ref, transition, detail FROM events WHERE check_id = ? "
            f"AND ref IN ({', '.join('?' * len(part))})", [DEADLINE_CHECK, *part]).fetchall()
    rows.sort(key=lambda r: (r[0], r[1]))
    return [(ref, transition, detail or "") for _, _, ref, transition, detail in rows]


def widen_sources(history) -> None:
    """Migration 3 on SQLite: `date` added to the sources revisions.source may hold. The table's
    definition is edited in place, as SQLite's documentation describes for a constraint that only
    loosens (no stored row changes; the schema's version is raised so every connection re-reads
    it). On PostgreSQL the migration's SQL does it."""
    conn = history.db.conn
    if not isinstance(conn, sqlite3.Connection):
        return
    row = conn.execute("SELECT sql FROM sqlite_master WHERE type = 'table' AND name = 'revisions'").fetchone()
    if row is None or _OLD_CHECK not in row[0]:
        raise HistoryError("the revisions table is not as migration 1 made it (its list of sources differs); "
                           "the history is left as it is", "unusable")
    version = conn.execute("PRAGMA schema_version").fetchone()[0]
    conn.execute("PRAGMA writable_schema = ON")
    try:
        conn.execute("UPDATE sqlite_master SET sql = ? WHERE type = 'table' AND name = 'revisions'",
                     [row[0].replace(_OLD_CHECK, _NEW_CHECK)])
        conn.execute(f"PRAGMA schema_version = {int(version) + 1}")
    finally:
        conn.execute("PRAGMA writable_schema = OFF")


MIGRATION_STEPS["0003-revisions-of-the-date"] = widen_sources
