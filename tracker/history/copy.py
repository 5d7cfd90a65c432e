"""Copying a history from one store to another (SQLite ↔ PostgreSQL), every row as it is.

The copy is made only from a history that verifies, only into a place that holds no history
yet, in one transaction, and is verified afterwards: it must give the same number of revisions
and the same chain head as the source (the actor ids and note digests are copied with their
salts, so nothing is re-hashed)."""
from __future__ import annotations

from dataclasses import dataclass

from tracker.history.store import History, HistoryError, location_exists, shown_location
from tracker.history.verify import Report, verify

# Parents before children (the server's foreign keys); every table of the schema that holds data.
TABLES = ("revisions", "blobs", "changes", "results", "events", "acks", "people", "notes", "rechained")
BATCH = 500


@dataclass
class Copied:
    source: Report
    target: Report
    rows: dict


def copy_history(source_location, target_location) -> Copied:
    if location_exists(target_location):
        raise HistoryError(f"{shown_location(target_location)}: a history is there already; copy into a new file "
                           "or an empty database or schema", "foreign")
    source = History.open(source_location, create=False)
    try:
        before = verify(source)
        if not before.ok:
            raise HistoryError(f"{shown_location(source_location)} does not verify ({before.problem}); "
                               "nothing was copied", "damaged")
        target = History.open(target_location, create=True)
        try:
            rows = _copy_rows(source, target)
            after = verify(target)
        finally:
            target.close()
    finally:
        source.close()
    if not after.ok or (after.revisions, after.head_hash) != (before.revisions, before.head_hash):
        raise HistoryError(f"the copy at {shown_location(target_location)} does not verify as the source does "
                           f"(source: {before.revisions} revisions, head {before.head_hash}; copy: "
                           f"{after.revisions} revisions, head {after.head_hash or '—'} {after.problem})", "damaged")
    return Copied(before, after, rows)


def _copy_rows(source: History, target: History) -> dict:
    counts = {}
    with target._write():
        if target.count():
            raise HistoryError(f"{target.location()}: a history is there already", "foreign")
        for table in TABLES:
            columns = [c for c in source.columns(table) if c in set(target.columns(table))]
            if not columns:
                continue
            select = f"SELECT {', '.join(columns)} FROM {table} ORDER BY {columns[0]}"
            insert = f"INSERT INTO {table} ({', '.join(columns)}) VALUES ({', '.join('?' * len(columns))})"
            cursor = source.db.execute(select)
            counts[table] = 0
            while True:
                batch = [tuple(_plain(v) for v in row) for row in cursor.fetchmany(BATCH)]
                if not batch:
                    break
                target._executemany(insert, batch)
                counts[table] += len(batch)
    return counts


def _plain(value):
    return bytes(value) if isinstance(value, memoryview) else value
