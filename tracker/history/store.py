"""The history store.

Every write takes SQLite's write lock first (``BEGIN IMMEDIATE``), so two processes — a watcher
and a `replace`, or two watchers by mistake — are serialised: each reads the chain's head and
the file's latest revision under the lock. A change already recorded (same file, same content)
is not recorded again, and a unique index on each file's succession makes a second successor of
the same file state impossible even so.
"""
from __future__ import annotations

import json
import os
import sqlite3
import tempfile
import zlib
from contextlib import contextmanager
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path

import sqlite_utils
from sqlite_utils.migrations import Migrations

from tracker import __version__
from tracker.history import chain
from tracker.schemas_access import schema_text

DB_DIR, DB_NAME = ".izwatch", "history.sqlite"
BUSY_TIMEOUT_MS = 30_000


class HistoryError(Exception):
    """The history database cannot be used (corrupt, not a database, newer than this version)."""


def default_db_path(root: Path) -> Path:
    return Path(root) / DB_DIR / DB_NAME


def now_iso() -> str:
    return datetime.now(timezone.utc).isoformat(timespec="milliseconds").replace("+00:00", "Z")


def _statements(sql: str):
    buf = ""
    for line in sql.splitlines(keepends=True):
        if not buf and (not line.strip() or line.lstrip().startswith("--")):
            continue
        buf += line
        if sqlite3.complete_statement(buf):
            yield buf.strip()
            buf = ""


MIGRATIONS = Migrations("izwatch-history")


@MIGRATIONS(name="0001-initial")
def _m0001(db: sqlite_utils.Database) -> None:
    for statement in _statements(schema_text("history/0001-initial.sql")):
        db.execute(statement)


SCHEMA_VERSION = 1   # the number of migrations above; PRAGMA user_version


@dataclass
class NewRevision:
    source: str
    author: str
    file: str | None = None
    site: str | None = None
    content: bytes | None = None          # the file's bytes; None when deleted (or for an ack)
    content_hash: str | None = None
    valid: bool = True
    note: str | None = None
    changes: list = field(default_factory=list)   # (ref, change, field, old, new) with old/new JSON-able
    results: list = field(default_factory=list)   # (ref, status, {check: [status, value, limit, unit]})
    events: list = field(default_factory=list)    # dicts: ref, check, transition, value, limit, unit, detail
    ack: tuple | None = None                      # (ref, [check ids])
    at: str | None = None


@dataclass
class Recorded:
    id: int
    duplicate: bool      # True: the same change was already recorded (by another process)
    at: str
    author: str
    source: str


class History:
    def __init__(self, db: sqlite_utils.Database, path: Path | None):
        self.db = db
        self.path = path

    # -- opening -------------------------------------------------------------------------

    @classmethod
    def open(cls, path: Path | str | None, create: bool = True) -> History:
        """Open (and on first use create) the store. Never replaces an existing file: a file
        that is not a healthy izwatch history raises HistoryError."""
        if path is None or str(path) == ":memory:":
            db = sqlite_utils.Database(memory=True)
            store = cls(db, None)
            store._migrate()
            return store
        path = Path(path)
        if not path.exists():
            if not create:
                raise HistoryError(f"{path}: no history recorded yet")
            cls._create(path)
        if path.stat().st_size == 0:
            raise HistoryError(f"{path}: the history file is empty (truncated?); it is left as it is — "
                               "restore it from a backup or move it aside")
        try:
            conn = sqlite3.connect(str(path), timeout=BUSY_TIMEOUT_MS / 1000, check_same_thread=False)
            conn.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
            db = sqlite_utils.Database(conn)
            db.execute("PRAGMA journal_mode = WAL")
            db.execute("PRAGMA synchronous = NORMAL")
            if path.stat().st_size > 0:
                bad = [r[0] for r in db.execute("PRAGMA integrity_check").fetchall()]
                if bad != ["ok"]:
                    raise HistoryError(f"{path}: the history database is damaged ({bad[0]}); it is left as it "
                                       "is — restore it from a backup (see README, 'Reliability')")
            store = cls(db, path)
            store._migrate()
        except sqlite3.DatabaseError as exc:
            raise HistoryError(f"{path}: not a usable izwatch history ({exc}); it is left as it is — "
                               "restore it from a backup or move it aside") from None
        return store

    @classmethod
    def open_for_reading(cls, path: Path | str) -> History:
        """Open an existing store that nothing may write through (the landlord's report).

        An ordinary connection with ``PRAGMA query_only``: every write is refused, no migration
        runs, and the journal mode is left as it is. A ``mode=ro`` connection would leave the WAL
        index files behind when it closes; this one removes them as the last reader leaves, so
        the folder and the database's bytes are as they were."""
        path = Path(path)
        if not path.exists():
            raise HistoryError(f"{path}: no history recorded yet")
        if path.stat().st_size == 0:
            raise HistoryError(f"{path}: the history file is empty (truncated?)")
        try:
            conn = sqlite3.connect(str(path), timeout=BUSY_TIMEOUT_MS / 1000, check_same_thread=False)
            conn.execute("PRAGMA query_only = ON")
            conn.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
            bad = [r[0] for r in conn.execute("PRAGMA integrity_check").fetchall()]
            if bad != ["ok"]:
                conn.close()
                raise HistoryError(f"{path}: the history database is damaged ({bad[0]})")
            version = conn.execute("PRAGMA user_version").fetchone()[0]
            if version != SCHEMA_VERSION:
                conn.close()
                raise HistoryError(f"{path}: history schema {version}, this izwatch reads schema {SCHEMA_VERSION}")
        except sqlite3.DatabaseError as exc:
            raise HistoryError(f"{path}: not a usable izwatch history ({exc})") from None
        return cls(sqlite_utils.Database(conn), path)

    @classmethod
    def _create(cls, path: Path) -> None:
        """Make a new, migrated history at `path` atomically: built in a temporary file beside it and
        linked into place only if nothing is there yet (another process may be creating it too)."""
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=".history-", suffix=".sqlite", dir=str(path.parent))
        os.close(fd)
        try:
            conn = sqlite3.connect(tmp)
            store = cls(sqlite_utils.Database(conn), Path(tmp))
            store._migrate()
            conn.close()
            try:
                os.link(tmp, path)
            except FileExistsError:
                pass   # another process made it first: use theirs
        finally:
            for leftover in (tmp, tmp + "-wal", tmp + "-shm", tmp + "-journal"):
                if os.path.exists(leftover):
                    os.unlink(leftover)

    def _migrate(self) -> None:
        version = self.db.execute("PRAGMA user_version").fetchone()[0]
        if version > SCHEMA_VERSION:
            raise HistoryError(f"the history was written by a newer izwatch (schema {version} > {SCHEMA_VERSION})")
        if version == SCHEMA_VERSION:
            return
        tables = set(self.db.table_names())
        if version == 0 and tables - {"_sqlite_migrations"}:
            raise HistoryError("the file holds tables that are not an izwatch history; it is left as it is")
        with self._write():
            MIGRATIONS.apply(self.db)
            self.db.execute(f"PRAGMA user_version = {SCHEMA_VERSION}")

    def close(self) -> None:
        self.db.conn.close()

    @contextmanager
    def _write(self):
        """One write transaction holding SQLite's write lock from its start."""
        conn = self.db.conn
        conn.execute("BEGIN IMMEDIATE")
        try:
            yield
        except BaseException:
            conn.execute("ROLLBACK")
            raise
        else:
            conn.execute("COMMIT")

    # -- reading -------------------------------------------------------------------------

    def head(self) -> tuple[int, str]:
        row = self.db.execute("SELECT id, hash FROM revisions ORDER BY id DESC LIMIT 1").fetchone()
        return (row[0], row[1]) if row else (0, chain.GENESIS)

    def count(self) -> int:
        return self.db.execute("SELECT count(*) FROM revisions").fetchone()[0]

    def latest_by_file(self) -> dict[str, tuple[int, str | None, bool]]:
        """file -> (revision id, content hash, valid) of its latest revision."""
        rows = self.db.execute(
            "SELECT r.file, r.id, r.content_hash, r.valid FROM revisions r "
            "JOIN (SELECT file, max(id) AS id FROM revisions WHERE file IS NOT NULL GROUP BY file) m "
            "ON r.id = m.id").fetchall()
        return {f: (i, h, bool(v)) for f, i, h, v in rows}

    def latest_good_content(self, file: str) -> bytes | None:
        """The file's content at its latest revision that loaded (None: deleted or never good)."""
        row = self.db.execute("SELECT content_hash FROM revisions WHERE file = ? AND valid = 1 "
                              "ORDER BY id DESC LIMIT 1", [file]).fetchone()
        if row is None or row[0] is None:
            return None
        return self.blob(row[0])

    def blob(self, digest: str) -> bytes | None:
        row = self.db.execute("SELECT content FROM blobs WHERE hash = ?", [digest]).fetchone()
        return zlib.decompress(row[0]) if row else None

    # -- writing -------------------------------------------------------------------------

    def record(self, rev: NewRevision) -> Recorded:
        return self.record_many([rev])[0]

    def record_many(self, revs) -> list[Recorded]:
        """Write revisions (any iterable, consumed one by one) in one transaction, each chained to
        the one before it."""
        out = []
        with self._write():
            head_id, head_hash = self.head()
            for rev in revs:
                rec = self._insert(rev, head_id, head_hash)
                if not rec.duplicate:
                    head_id, head_hash = rec.id, self._hash_of(rec.id)
                out.append(rec)
        return out

    def record_after(self, rev: NewRevision, action) -> Recorded:
        """Do `action` (write the file) and record `rev`, both under the write lock, so a watcher
        that sees the file change finds it already recorded."""
        with self._write():
            head_id, head_hash = self.head()
            action()
            return self._insert(rev, head_id, head_hash)

    def _hash_of(self, rev_id: int) -> str:
        return self.db.execute("SELECT hash FROM revisions WHERE id = ?", [rev_id]).fetchone()[0]

    def _insert(self, rev: NewRevision, head_id: int, head_hash: str) -> Recorded:
        file_prev_id = 0
        if rev.file is not None:
            row = self.db.execute("SELECT id, content_hash, valid, at, author, source FROM revisions "
                                  "WHERE file = ? ORDER BY id DESC LIMIT 1", [rev.file]).fetchone()
            if row is not None:
                if row[1] == rev.content_hash and bool(row[2]) == rev.valid:
                    return Recorded(row[0], True, row[3], row[4], row[5])
                file_prev_id = row[0]
            elif rev.content_hash is None:  # deleting a file never recorded: nothing to say
                return Recorded(0, True, "", rev.author, rev.source)
        rev_id = head_id + 1
        at = rev.at or now_iso()
        if rev.content is not None:
            self.db.execute("INSERT OR IGNORE INTO blobs (hash, size, content) VALUES (?, ?, ?)",
                            [rev.content_hash, len(rev.content), zlib.compress(rev.content, 6)])
        revision = {
            "id": rev_id, "at": at, "source": rev.source, "file": rev.file, "site": rev.site,
            "content_hash": rev.content_hash, "valid": int(rev.valid), "file_prev_id": file_prev_id,
            "author": rev.author, "note": rev.note, "tool_version": __version__, "prev_hash": head_hash,
        }
        changes = [(rev_id, i, ref, kind, fld, _j(old), _j(new))
                   for i, (ref, kind, fld, old, new) in enumerate(rev.changes)]
        results = sorted((rev_id, ref, status, json.dumps(checks, sort_keys=True, separators=(",", ":")))
                         for ref, status, checks in rev.results)
        events = [(rev_id, i, e["ref"], e.get("check"), e["transition"], e.get("value"), e.get("limit"),
                   e.get("unit"), e.get("detail")) for i, e in enumerate(rev.events)]
        acks = [(rev_id, rev.ack[0], json.dumps(sorted(rev.ack[1])))] if rev.ack else []
        revision["hash"] = chain.revision_hash(revision, changes, results, events, acks)
        self.db["revisions"].insert(revision)
        if changes:
            self.db.conn.executemany("INSERT INTO changes VALUES (?, ?, ?, ?, ?, ?, ?)", changes)
        if results:
            self.db.conn.executemany("INSERT INTO results VALUES (?, ?, ?, ?)", results)
        if events:
            self.db.conn.executemany("INSERT INTO events VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)", events)
        if acks:
            self.db.conn.executemany("INSERT INTO acks VALUES (?, ?, ?)", acks)
        return Recorded(rev_id, False, at, rev.author, rev.source)


def _j(value):
    return None if value is None else json.dumps(value, ensure_ascii=False)
