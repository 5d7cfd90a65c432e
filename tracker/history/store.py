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
import time
import re
import sqlite3
import tempfile
import zlib
from contextlib import contextmanager
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path

import sqlite_utils

from tracker import __version__
from tracker.history import chain
from tracker.schemas_access import schema_dir

DB_DIR, DB_NAME = ".izwatch", "history.sqlite"
BUSY_TIMEOUT_MS = 30_000
# Opening tries again after a lock SQLite reports without waiting (common practice for SQLite)
OPEN_ATTEMPTS = 4


class _LockedOnOpen(Exception):
    """An open met a lock SQLite reported at once; `History.open` tries again."""


class HistoryError(Exception):
    """The history database cannot be used. `kind` says why, so that a full disk or a read-only
    folder is never reported as damage: "damaged", "unwritable", "full", "foreign", "newer",
    "missing", "busy" (locked by another process all the while it was opened) or "unusable"."""

    def __init__(self, message: str, kind: str = "unusable"):
        super().__init__(message)
        self.kind = kind


def plain_error(path: Path, exc: BaseException) -> HistoryError:
    """One line saying what is wrong with opening or writing the history, in the words that fit:
    a full disk or a read-only place is not a damaged history."""
    text = str(exc)
    errno_ = getattr(exc, "errno", None)
    low = text.lower()
    if errno_ == 28 or "disk is full" in low or "no space" in low:
        return HistoryError(f"{path}: the disk is full; the history is left as it is and nothing was "
                            "recorded — free some space and run again", "full")
    if errno_ in (1, 13, 30) or "readonly" in low or "read-only" in low or "unable to open" in low:
        return HistoryError(f"{path}: cannot write there ({text}): the history and its folder (SQLite makes "
                            "its -wal and -shm files beside it) must be writable by you; the history is left "
                            "as it is", "unwritable")
    return HistoryError(f"{path}: not a usable izwatch history ({text}); it is left as it is — "
                        "restore it from a backup or move it aside", "damaged")


def current_umask() -> int:
    """The process's umask, read without changing it where Linux shows it (/proc/self/status)."""
    try:
        for line in Path("/proc/self/status").read_text().splitlines():
            if line.startswith("Umask:"):
                return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


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


MIGRATION_NAME = re.compile(r"(\d{4})-[a-z0-9-]+\.sql")


def migrations_dir() -> Path:
    """The SQLite history's migrations: `schema/history/NNNN-name.sql`, applied in order."""
    return schema_dir() / "history"


def migration_files(directory: Path | None = None) -> list[tuple[str, str]]:
    """(name, SQL) of every migration in `directory`, in the order of their numbers.

    Numbers must run 1, 2, 3 … without a gap or a repeat: a history's `user_version` is the
    number of migrations applied, so a hole would make two different sets look alike."""
    directory = Path(directory) if directory is not None else migrations_dir()
    found = sorted((int(m.group(1)), f.name) for f in directory.iterdir()
                   if f.is_file() and (m := MIGRATION_NAME.fullmatch(f.name)))
    numbers = [n for n, _ in found]
    if numbers != list(range(1, len(found) + 1)):
        raise HistoryError(f"{directory}: the history's migrations must be numbered 1, 2, 3 … without a gap "
                           f"(found {numbers})")
    return [(name[:-len(".sql")], (directory / name).read_text(encoding="utf-8")) for _, name in found]


def is_server_location(location) -> bool:
    """True for a PostgreSQL connection string (`postgresql://…`, `postgres://…`)."""
    return isinstance(location, str) and location.split("://", 1)[0] in ("postgresql", "postgres")


def history_location(value) -> Path | str:
    """A history's location as given by `--db` or `IZWATCH_DB`: a server's connection string as it
    is, anything else a file path."""
    return str(value) if is_server_location(value) else Path(value)


def location_exists(location) -> bool:
    """Whether a history has been recorded there (a server: whether the schema holds one)."""
    if is_server_location(location):
        from tracker.history.server import server_history_exists
        return server_history_exists(location)
    return Path(location).exists()


def shown_location(location) -> str:
    """The location to print: a file path, or a server's address without its password."""
    if is_server_location(location):
        from tracker.history.server import shown
        return shown(location)
    return str(location)


# What every open checks, at a cost that does not grow with the history (README, "Reliability"):
# the file's header (SQLite file format, section 1.3: SQLite refuses a foreign magic string or an
# impossible page size; here, a file at least as long as the page count its header gives), the
# schema read back, and the
# first and last row of every table (the b-tree's root and both edges read). `PRAGMA quick_check`
# reads every page: it runs on open only while the files are small enough for it to be cheap.
# A damaged page met later by a read is reported where it is met (`is_damage`); `izwatch verify`
# runs SQLite's full integrity check.
QUICK_CHECK_UP_TO_BYTES = 4 << 20


def _log_in_use(path: Path) -> bool:
    """Whether the history's write-ahead log holds anything (a checkpoint may then be writing the
    file: its header and its length are not compared)."""
    try:
        return os.stat(path.with_name(path.name + "-wal")).st_size > 0
    except OSError:
        return False


def header_problem(conn: sqlite3.Connection, path: Path) -> str:
    """What the SQLite header says is wrong with the file ('' when nothing), read through SQLite:
    a header that is not SQLite's or gives an impossible page size is refused by SQLite itself
    ("file is not a database"); here, a file shorter than the page count its header gives (SQLite
    file format, sqlite.org/fileformat.html, 1.3.9) — truncated. The file is never opened
    beside SQLite's connection (closing another descriptor of it would drop SQLite's POSIX locks),
    only its length read; and the count is compared only while no write-ahead log is in use,
    before and after it is read (a checkpoint writes the first page before the file grows)."""
    quiet = not _log_in_use(path)
    page_size = conn.execute("PRAGMA page_size").fetchone()[0]
    pages = conn.execute("PRAGMA page_count").fetchone()[0]
    size = os.stat(path).st_size
    quiet = quiet and not _log_in_use(path)
    if quiet and pages * page_size > size:
        return (f"the file is shorter than its header says ({size} bytes for {pages} pages of {page_size}): "
                "it was truncated")
    return ""


def is_damage(exc: BaseException) -> bool:
    """An SQLite error that means the file's pages are damaged (not a lock, a full disk or a
    permission)."""
    low = str(exc).lower()
    return isinstance(exc, sqlite3.DatabaseError) and ("malformed" in low or "not a database" in low
                                                       or "disk image" in low)


def open_check(conn: sqlite3.Connection, path: Path) -> str:
    """The checks of every open ('' when all pass): the header, the schema, each table's first and
    last row, and `PRAGMA quick_check` while the history and its log are at most
    QUICK_CHECK_UP_TO_BYTES together."""
    problem = header_problem(conn, path)
    if problem:
        return problem
    tables = [name for (name,) in conn.execute(
        "SELECT name FROM sqlite_master WHERE type = 'table' AND rootpage > 0 AND name NOT LIKE 'sqlite_%'")]
    for name in tables:
        conn.execute(f"SELECT min(rowid), max(rowid) FROM [{name}]").fetchone()
    wal = path.with_name(path.name + "-wal")
    size = path.stat().st_size + (wal.stat().st_size if os.path.exists(wal) else 0)
    if size <= QUICK_CHECK_UP_TO_BYTES:
        found = [r[0] for r in conn.execute("PRAGMA quick_check").fetchall()]
        if found != ["ok"]:
            return found[0]
    return ""


# Python steps that a migration runs after its SQL, in the same transaction (data moved between
# tables): migration name -> function(history). Registered by the modules that own the data.
MIGRATION_STEPS: dict = {}


@dataclass
class NewRevision:
    source: str                  # watch | replace | startup | ack | date (tracker/history/datepassed.py)
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
    signature: str | None = None   # a change that arrived as a git commit: verified | unverified | bad | unsigned
    signer: str | None = None      # the verified signer (git's principal for the key)


@dataclass
class Recorded:
    id: int
    duplicate: bool      # True: the same change was already recorded (by another process)
    at: str
    author: str
    source: str


class History:
    def __init__(self, db: sqlite_utils.Database, path: Path | None, migrations: Path | None = None):
        self.db = db
        self.path = path
        self.migrations = migrations   # a folder of migrations other than the shipped one (tests)
        self._people: bool | None = None   # whether names are kept outside the chain (migration 2)
        self._names: dict = {}             # actor ids and note digests looked up in this transaction

    # -- opening -------------------------------------------------------------------------

    @classmethod
    def open(cls, path: Path | str | None, create: bool = True, migrations: Path | None = None) -> History:
        """Open (and on first use create) the store, applying every pending migration. Never
        replaces or alters an existing file that is not a healthy izwatch history of a schema
        this version knows: that raises HistoryError and the file is left exactly as it is (a
        foreign or newer database is not even switched to WAL).

        `path` may also be a PostgreSQL connection string (`postgresql://…`): the history then lives
        on that server (`tracker/history/server.py`), with the same semantics."""
        if is_server_location(path):
            from tracker.history.server import ServerHistory
            return ServerHistory.open_server(path, create=create, migrations=migrations)
        if path is None or str(path) == ":memory:":
            db = sqlite_utils.Database(memory=True)
            store = cls(db, None, migrations)
            store._migrate()
            return store
        path = Path(path)
        try:
            if not path.exists():
                if not create:
                    raise HistoryError(f"{path}: no history recorded yet", "missing")
                cls._create(path, migrations)
            if path.stat().st_size == 0:
                raise HistoryError(f"{path}: the history file is empty (truncated?); it is left as it is — "
                                   "restore it from a backup or move it aside", "damaged")
        except OSError as exc:
            raise plain_error(path, exc) from None
        for attempt in range(OPEN_ATTEMPTS):
            try:
                return cls._open_existing(path, migrations)
            except _LockedOnOpen:
                if attempt == OPEN_ATTEMPTS - 1:
                    raise HistoryError(f"{path}: the history stayed locked by another process while it was being "
                                       "opened; try again", "busy") from None
                time.sleep(0.2 * (attempt + 1))
        raise AssertionError("unreachable")

    @classmethod
    def _open_existing(cls, path: Path, migrations: Path | None) -> History:
        """One attempt at opening an existing history file (see `open`). A lock that SQLite reports
        at once, without waiting (two processes switching a new file to WAL or migrating it at the
        same moment), raises _LockedOnOpen so that `open` tries again."""
        conn = None
        try:
            conn = sqlite3.connect(str(path), timeout=BUSY_TIMEOUT_MS / 1000, check_same_thread=False)
            conn.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
            db = sqlite_utils.Database(conn)
            bad = open_check(conn, path)
            if bad:
                raise HistoryError(f"{path}: the history database is damaged ({bad}); it is left as it "
                                   "is — restore it from a backup (see README, 'Reliability')", "damaged")
            store = cls(db, path, migrations)
            pending = store._pending()     # refuses a foreign or newer file before anything is written
            db.execute("PRAGMA journal_mode = WAL")
            db.execute("PRAGMA synchronous = NORMAL")
            if pending:
                store._migrate()
        except HistoryError as exc:
            if conn is not None:
                conn.close()
            if str(path) in str(exc):
                raise
            raise HistoryError(f"{path}: {exc}", exc.kind) from None
        except (sqlite3.DatabaseError, OSError) as exc:
            if conn is not None:
                conn.close()
            if isinstance(exc, sqlite3.OperationalError) and "locked" in str(exc):
                raise _LockedOnOpen() from None
            raise plain_error(path, exc) from None
        return store

    @classmethod
    def open_for_reading(cls, path: Path | str, older: bool = False) -> History:
        """Open an existing store that nothing may write through (the landlord's report).

        An ordinary connection with ``PRAGMA query_only``: every write is refused, no migration
        runs, and the journal mode is left as it is. A ``mode=ro`` connection would leave the WAL
        index files behind when it closes; this one removes them as the last reader leaves, so
        the folder and the database's bytes are as they were."""
        if is_server_location(path):
            from tracker.history.server import ServerHistory
            return ServerHistory.open_server(path, create=False, read_only=True)
        path = Path(path)
        if not path.exists():
            raise HistoryError(f"{path}: no history recorded yet", "missing")
        if path.stat().st_size == 0:
            raise HistoryError(f"{path}: the history file is empty (truncated?)", "damaged")
        conn = None
        try:
            conn = sqlite3.connect(str(path), timeout=BUSY_TIMEOUT_MS / 1000, check_same_thread=False)
            conn.execute("PRAGMA query_only = ON")
            conn.execute(f"PRAGMA busy_timeout = {BUSY_TIMEOUT_MS}")
            bad = open_check(conn, path)
            if bad:
                conn.close()
                raise HistoryError(f"{path}: the history database is damaged ({bad})", "damaged")
            version = conn.execute("PRAGMA user_version").fetchone()[0]
            known = len(migration_files(migrations_dir()))
            if version != known and not (older and 0 < version < known):
                conn.close()
                raise HistoryError(f"{path}: history schema {version}, this izwatch reads schema {known}"
                                   + (" (open it once with `watch` or `verify` to bring it up to date)"
                                      if 0 < version < known else ""))
        except sqlite3.DatabaseError as exc:
            if conn is not None:
                conn.close()
            raise HistoryError(f"{path}: not a usable izwatch history ({exc})",
                               "damaged" if is_damage(exc) else "unusable") from None
        return cls(sqlite_utils.Database(conn), path)

    @classmethod
    def _create(cls, path: Path, migrations: Path | None = None) -> None:
        """Make a new, migrated history at `path` atomically: built in a temporary file beside it and
        linked into place only if nothing is there yet (another process may be creating it too).
        The file's mode follows the umask, as any other file the user makes."""
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=".history-", suffix=".sqlite", dir=str(path.parent))
        os.close(fd)
        try:
            os.chmod(tmp, 0o666 & ~current_umask())
            conn = sqlite3.connect(tmp)
            store = cls(sqlite_utils.Database(conn), Path(tmp), migrations)
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

    MIGRATIONS_TABLE = "_sqlite_migrations"

    def _migrations_folder(self) -> Path:
        return Path(self.migrations) if self.migrations is not None else migrations_dir()

    def _table_names(self) -> set[str]:
        return set(self.db.table_names())

    def _user_version(self) -> int:
        return self.db.execute("PRAGMA user_version").fetchone()[0]

    def schema_behind(self) -> tuple[int, int] | None:
        """(this history's schema, the schema this izwatch writes) where an earlier izwatch wrote it
        and nothing has opened it for writing since (a reader never migrates); None where it is up
        to date."""
        version, known = self._user_version(), len(migration_files(self._migrations_folder()))
        return (version, known) if 0 < version < known else None

    def _set_user_version(self, number: int) -> None:
        self.db.execute(f"PRAGMA user_version = {int(number)}")

    def _applied(self) -> list[str]:
        if self.MIGRATIONS_TABLE not in self._table_names():
            return []
        return [r[0] for r in self.db.execute(f"SELECT name FROM {self.MIGRATIONS_TABLE} "
                                               "WHERE migration_set = 'izwatch-history' ORDER BY id")]

    def _pending(self) -> list[tuple[str, str]]:
        """The migrations not yet applied, in order; HistoryError for a store that is not an izwatch
        history or was written by a newer izwatch (its applied set is not a start of ours)."""
        files = migration_files(self._migrations_folder())
        names = [name for name, _ in files]
        version = self._user_version()
        applied = self._applied()
        if version == 0 and not applied and self._table_names() - {self.MIGRATIONS_TABLE}:
            raise HistoryError("the file holds tables that are not an izwatch history; it is left as it is", "foreign")
        if version > len(names) or applied != names[:len(applied)]:
            raise HistoryError(f"the history was written by a newer izwatch (schema {version}, this version "
                               f"knows {len(names)}); it is left as it is", "newer")
        if version != len(applied):
            raise HistoryError(f"the history's schema number ({version}) does not match the migrations recorded "
                               f"in it ({len(applied)}); it is left as it is")
        return files[len(applied):]

    def _ensure_migrations_table(self) -> None:
        self.db.execute(f"CREATE TABLE IF NOT EXISTS [{self.MIGRATIONS_TABLE}] ([id] INTEGER PRIMARY KEY, "
                        "[migration_set] TEXT, [name] TEXT, [applied_at] TEXT)")
        self.db.execute(f"CREATE UNIQUE INDEX IF NOT EXISTS [idx_{self.MIGRATIONS_TABLE}_migration_set_name] "
                        f"ON [{self.MIGRATIONS_TABLE}] ([migration_set], [name])")

    def _run_migration_sql(self, sql: str) -> None:
        for statement in _statements(sql):
            self.db.execute(statement)

    def _migrate(self) -> None:
        """Apply every pending migration, in one write transaction; `user_version` is then the
        number of migrations applied."""
        if not self._pending():
            return
        with self._write(migrating=True):
            pending = self._pending()    # again under the lock: another process may have migrated
            if not pending:
                return
            self._ensure_migrations_table()
            from tracker.history import datepassed, people  # noqa: F401  (register migrations 2 and 3's steps)
            for name, sql in pending:
                self._run_migration_sql(sql)
                step = MIGRATION_STEPS.get(name)
                if step is not None:
                    step(self)
                self.db.execute(f"INSERT INTO {self.MIGRATIONS_TABLE} (migration_set, name, applied_at) "
                                "VALUES ('izwatch-history', ?, ?)", [name, now_iso()])
            self._set_user_version(len(self._applied()))

    def close(self) -> None:
        self.db.conn.close()

    def _executemany(self, sql: str, rows: list) -> None:
        self.db.conn.executemany(sql, rows)

    def integrity_problems(self) -> list[str]:
        """What the database's own consistency check finds (empty: nothing)."""
        found = [r[0] for r in self.db.execute("PRAGMA integrity_check").fetchall()]
        return [] if found == ["ok"] else found

    def guards(self) -> dict[str, str]:
        """The append-only triggers present: name -> "enabled" (SQLite cannot disable one)."""
        return {name: "enabled" for (name,) in self.db.execute(
            "SELECT name FROM sqlite_master WHERE type = 'trigger'")}

    def before_erase(self) -> None:
        self.db.execute("PRAGMA secure_delete = ON")   # freed space is overwritten with zeros

    def after_erase(self) -> None:
        """The erased bytes out of the WAL as well: its pages copied back and the file emptied."""
        self.db.execute("PRAGMA wal_checkpoint(TRUNCATE)")

    @contextmanager
    def guard_suspended(self, table: str):
        """Inside a migration only: the table's update trigger dropped, and made again after."""
        name = f"{table}_append_only_u"
        row = self.db.execute("SELECT sql FROM sqlite_master WHERE type = 'trigger' AND name = ?", [name]).fetchone()
        if row is not None:
            self.db.execute(f"DROP TRIGGER {name}")
        yield
        if row is not None:
            self.db.execute(row[0])

    def columns(self, table: str) -> list[str]:
        return [r[1] for r in self.db.execute(f"PRAGMA table_info({table})")]

    def optional_fields(self) -> list[str]:
        """The later, hashed-where-set fields of revisions this history has (chain.OPTIONAL_FIELDS)."""
        present = set(self.columns("revisions"))
        return [f for f in chain.OPTIONAL_FIELDS if f in present]

    def expected_guards(self) -> list[str]:
        """The triggers the applied migrations create (and do not drop again), in order."""
        applied = set(self._applied())
        names: list[str] = []
        for name, sql in migration_files(self._migrations_folder()):
            if name not in applied:
                continue
            for verb, trigger in re.findall(r"\b(CREATE|DROP)\s+TRIGGER\s+(?:IF\s+(?:NOT\s+)?EXISTS\s+)?(\w+)",
                                            sql, flags=re.IGNORECASE):
                if verb.upper() == "CREATE":
                    names.append(trigger)
                elif trigger in names:
                    names.remove(trigger)
        return names

    def location(self) -> str:
        """Where the history is, to print (a file path, or a server address without its password)."""
        return str(self.path) if self.path is not None else ":memory:"

    def now(self) -> str:
        return now_iso()

    def _begin(self, migrating: bool = False) -> None:
        """Start a write transaction holding SQLite's write lock from its start."""
        self.db.conn.execute("BEGIN IMMEDIATE")
        self._names = {}    # an erasure may have happened since: look names up afresh

    def _commit(self) -> None:
        self.db.conn.execute("COMMIT")

    def _rollback(self) -> None:
        """End a write transaction without keeping anything (quietly, if it already ended)."""
        conn = self.db.conn
        if conn.in_transaction:
            try:
                conn.execute("ROLLBACK")
            except sqlite3.Error:
                pass

    @contextmanager
    def _write(self, migrating: bool = False):
        """One write transaction holding the store's write lock from its start."""
        self._begin(migrating)
        try:
            yield
        except BaseException:
            self._rollback()
            raise
        else:
            self._commit()

    # -- reading -------------------------------------------------------------------------

    def head(self) -> tuple[int, str]:
        row = self.db.execute("SELECT id, hash FROM revisions ORDER BY id DESC LIMIT 1").fetchone()
        return (row[0], row[1]) if row else (0, chain.GENESIS)

    def count(self) -> int:
        return self.db.execute("SELECT count(*) FROM revisions").fetchone()[0]

    def latest_by_file(self, files=None) -> dict[str, tuple[int, str | None, bool]]:
        """file -> (revision id, content hash, valid) of its latest revision; `files`: of these
        files only, each read by index."""
        if files is not None:
            out = {}
            for f in files:
                row = self.db.execute("SELECT id, content_hash, valid FROM revisions WHERE file = ? "
                                      "ORDER BY id DESC LIMIT 1", [f]).fetchone()
                if row is not None:
                    out[f] = (row[0], row[1], bool(row[2]))
            return out
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
        if row is None:
            return None
        try:
            return zlib.decompress(row[0])
        except (zlib.error, TypeError):     # not what izwatch writes
            raise HistoryError(f"the file content recorded as {digest[:12]}… is not what izwatch writes (not zlib "
                               "data): the history was changed outside izwatch; run `izwatch verify`",
                               "damaged") from None

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

    def record_checked(self, make) -> list[Recorded]:
        """Write the revisions `make(self)` returns, deciding and writing in one transaction under
        the write lock: what `make` reads of the history is what the revisions follow, whatever
        another process does (the date's revisions: tracker/history/datepassed.py)."""
        out = []
        with self._write():
            head_id, head_hash = self.head()
            for rev in make(self):
                rec = self._insert(rev, head_id, head_hash)
                if not rec.duplicate:
                    head_id, head_hash = rec.id, self._hash_of(rec.id)
                out.append(rec)
        return out

    def record_after(self, rev: NewRevision, action, undo=None) -> Recorded:
        """Record `rev` and do `action` (write the file) in one write transaction, so a watcher
        that sees the file change finds it already recorded.

        The revision is written first: a full disk or any other failure to record stops before
        the file is touched. `action` may raise to abandon the whole (nothing is recorded). If the
        commit itself fails after `action`, `undo` puts the file back before the error goes on:
        a file is never left changed without its revision."""
        self._begin()
        try:
            head_id, head_hash = self.head()
            rec = self._insert(rev, head_id, head_hash)
            action()
        except BaseException:
            self._rollback()
            raise
        try:
            self._commit()
        except BaseException:
            try:
                if undo is not None:
                    undo()
            finally:
                self._rollback()
            raise
        return rec

    def _hash_of(self, rev_id: int) -> str:
        return self.db.execute("SELECT hash FROM revisions WHERE id = ?", [rev_id]).fetchone()[0]

    def _insert(self, rev: NewRevision, head_id: int, head_hash: str) -> Recorded:
        file_prev_id = 0
        if rev.file is not None:
            row = self.db.execute("SELECT id, content_hash, valid, at, author, source FROM revisions "
                                  "WHERE file = ? ORDER BY id DESC LIMIT 1", [rev.file]).fetchone()
            if row is not None:
                if row[1] == rev.content_hash and bool(row[2]) == rev.valid:
                    from tracker.history.people import name_of
                    return Recorded(row[0], True, row[3], name_of(self, row[4]), row[5])
                file_prev_id = row[0]
            elif rev.content_hash is None:  # deleting a file never recorded: nothing to say
                return Recorded(0, True, "", rev.author, rev.source)
        rev_id = head_id + 1
        at = rev.at or self.now()
        if rev.content is not None:
            self.db.execute("INSERT INTO blobs (hash, size, content) VALUES (?, ?, ?) ON CONFLICT (hash) DO NOTHING",
                            [rev.content_hash, len(rev.content), zlib.compress(rev.content, 6)])
        author, note, signer = rev.author, rev.note, rev.signer
        from tracker.history import people
        if people.has_people(self):     # migration 2: ids and digests in the chain, names beside it
            author = people.actor_for(self, rev.author, self._names)
            note = people.note_for(self, author, rev.note, self._names)
            signer = people.actor_for(self, rev.signer, self._names) if rev.signer is not None else None
        revision = {
            "id": rev_id, "at": at, "source": rev.source, "file": rev.file, "site": rev.site,
            "content_hash": rev.content_hash, "valid": int(rev.valid), "file_prev_id": file_prev_id,
            "author": author, "note": note, "tool_version": __version__, "prev_hash": head_hash,
        }
        if rev.signature is not None:
            revision.update(signature=rev.signature, signer=signer)
        changes = [(rev_id, i, ref, kind, fld, _j(old), _j(new))
                   for i, (ref, kind, fld, old, new) in enumerate(rev.changes)]
        results = sorted((rev_id, ref, status, json.dumps(checks, sort_keys=True, separators=(",", ":")))
                         for ref, status, checks in rev.results)
        events = [(rev_id, i, e["ref"], e.get("check"), e["transition"], e.get("value"), e.get("limit"),
                   e.get("unit"), e.get("detail")) for i, e in enumerate(rev.events)]
        acks = [(rev_id, rev.ack[0], json.dumps(sorted(rev.ack[1])))] if rev.ack else []
        revision["hash"] = chain.revision_hash(revision, changes, results, events, acks)
        self.db.execute(f"INSERT INTO revisions ({', '.join(revision)}) VALUES ({', '.join('?' * len(revision))})",
                        list(revision.values()))
        if changes:
            self._executemany("INSERT INTO changes VALUES (?, ?, ?, ?, ?, ?, ?)", changes)
        if results:
            self._executemany("INSERT INTO results VALUES (?, ?, ?, ?)", results)
        if events:
            self._executemany("INSERT INTO events VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)", events)
        if acks:
            self._executemany("INSERT INTO acks VALUES (?, ?, ?)", acks)
        return Recorded(rev_id, False, at, rev.author, rev.source)


def _j(value):
    return None if value is None else json.dumps(value, ensure_ascii=False)
