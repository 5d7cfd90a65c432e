"""The history on a PostgreSQL server (psycopg 3), for a team writing one trail from many machines.

The same tables, the same hash chain and the same answers as the SQLite store; what differs is
how the guarantees are kept:

- **One chain per estate.** The tables live in the connection's current schema (the first of its
  `search_path`); an estate gets a database of its own, or a schema of its own in a shared one
  (`…?options=-csearch_path%3Destate_name`).
- **A lock on the chain head.** Every write transaction first takes a transaction-scoped advisory
  lock keyed on the schema's `revisions` table, then reads the head: writers on different hosts
  append one after the other, each to the head the one before it left. The primary key on the
  revision number and the unique index on each file's succession refuse a second successor even
  so. An advisory lock needs no privilege, so a writing role with only SELECT and INSERT can take
  it.
- **Append-only in the server.** Triggers refuse UPDATE, DELETE and TRUNCATE of the chained
  tables, and the role `izwatch_writer` (created by the database's administrator; see README,
  "Working as a team") is granted SELECT and INSERT only.

psycopg is imported here only, so the command line never loads it for a SQLite history.
"""
from __future__ import annotations

import re
from contextlib import contextmanager
from pathlib import Path
from urllib.parse import urlsplit, urlunsplit

from tracker.history.store import History, HistoryError, migrations_dir

# Keys of the transaction-scoped advisory locks (pg_advisory_xact_lock(int, int)): our own
# class number, with the oid of the schema's `revisions` table (the chain head) or of the schema
# itself (migrations, before the tables exist).
LOCK_CLASS = 0x697A77   # "izw"


def server_migrations_dir() -> Path:
    return migrations_dir() / "postgresql"


def shown(dsn: str) -> str:
    """The connection string without its password, to print."""
    parts = urlsplit(dsn)
    if parts.password is None:
        return dsn
    netloc = parts.netloc.rsplit("@", 1)
    user = (parts.username or "") + ":***"
    return urlunsplit(parts._replace(netloc=f"{user}@{netloc[1]}"))


def server_history_exists(dsn: str) -> bool:
    """Whether the schema holds a history (True also when the server cannot be asked: opening it
    then says why)."""
    try:
        import psycopg
        with psycopg.connect(dsn, autocommit=True, connect_timeout=30) as conn:
            return conn.execute("SELECT to_regclass('_izwatch_migrations')").fetchone()[0] is not None
    except Exception:   # noqa: BLE001 — any failure is reported by the open that follows
        return True


class ServerDb:
    """The few calls the store, the queries and `verify` make on `history.db`, over psycopg, with
    SQLite's `?` placeholders (our SQL holds no other `?` and no `%`)."""

    def __init__(self, conn):
        self.conn = conn

    def execute(self, sql: str, params=None):
        return self.conn.execute(sql.replace("?", "%s"), list(params) if params else None)

    def executemany(self, sql: str, rows) -> None:
        with self.conn.cursor() as cur:
            cur.executemany(sql.replace("?", "%s"), rows)

    def table_names(self) -> list[str]:
        return [r[0] for r in self.conn.execute(
            "SELECT c.relname FROM pg_class c WHERE c.relnamespace = current_schema()::regnamespace "
            "AND c.relkind IN ('r', 'p') ORDER BY c.relname")]


class ServerHistory(History):
    MIGRATIONS_TABLE = "_izwatch_migrations"

    def __init__(self, db: ServerDb, dsn: str, migrations: Path | None = None, read_only: bool = False):
        super().__init__(db, None, migrations)
        self.dsn = dsn
        self.read_only = read_only

    @classmethod
    def open_server(cls, dsn: str, create: bool = True, migrations: Path | None = None,
                    read_only: bool = False) -> ServerHistory:
        try:
            import psycopg
        except ImportError:
            raise HistoryError(f"{shown(dsn)}: a PostgreSQL history needs the psycopg package "
                               "(pip install 'psycopg[binary]')", "unusable") from None
        try:
            conn = psycopg.connect(dsn, autocommit=True, connect_timeout=30)
        except psycopg.Error as exc:
            raise HistoryError(f"{shown(dsn)}: cannot connect to the history's server "
                               f"({_first_line(exc)})", "unwritable") from None
        store = cls(ServerDb(conn), dsn, migrations, read_only)
        try:
            if conn.execute("SELECT current_schema()").fetchone()[0] is None:
                raise HistoryError("the connection's search_path names no schema that exists: create the "
                                   "estate's schema first (CREATE SCHEMA …)", "missing")
            if read_only:
                conn.execute("SET default_transaction_read_only = on")
                pending = store._pending()
                if pending:
                    raise HistoryError(
                        "no history recorded yet" if not store._applied() else
                        f"history schema {len(store._applied())}, this izwatch reads schema "
                        f"{len(store._applied()) + len(pending)}", "missing")
            else:
                pending = store._pending()
                if pending and not create and not store._applied():
                    raise HistoryError("no history recorded yet", "missing")
                if pending:
                    store._migrate()
        except HistoryError as exc:
            conn.close()
            raise HistoryError(f"{shown(dsn)}: {exc}", exc.kind) from None
        except psycopg.Error as exc:
            conn.close()
            raise HistoryError(f"{shown(dsn)}: {_plain(exc)}", "unwritable") from None
        return store

    # -- what differs from SQLite ----------------------------------------------------------

    def _migrations_folder(self) -> Path:
        return Path(self.migrations) if self.migrations is not None else server_migrations_dir()

    def _table_names(self) -> set[str]:
        return set(self.db.table_names())

    def _user_version(self) -> int:
        # PostgreSQL has no user_version: the number of migrations recorded stands for it
        return len(self._applied())

    def _set_user_version(self, number: int) -> None:
        pass

    def _ensure_migrations_table(self) -> None:
        self.db.execute(f"CREATE TABLE IF NOT EXISTS {self.MIGRATIONS_TABLE} (id SERIAL PRIMARY KEY, "
                        "migration_set TEXT NOT NULL, name TEXT NOT NULL, applied_at TEXT NOT NULL, "
                        "UNIQUE (migration_set, name))")

    def _run_migration_sql(self, sql: str) -> None:
        self.db.conn.execute(sql)   # one script: PL/pgSQL bodies hold semicolons

    def _executemany(self, sql: str, rows: list) -> None:
        self.db.executemany(sql, rows)

    def integrity_problems(self) -> list[str]:
        return []   # the server keeps its own pages consistent; there is no PRAGMA integrity_check

    def guards(self) -> dict[str, str]:
        return {name: ("disabled" if enabled == "D" else "enabled") for name, enabled in self.db.execute(
            "SELECT t.tgname, t.tgenabled FROM pg_trigger t JOIN pg_class c ON c.oid = t.tgrelid "
            "WHERE c.relnamespace = current_schema()::regnamespace AND NOT t.tgisinternal")}

    def before_erase(self) -> None:
        pass

    def after_erase(self) -> None:
        """Old row versions hold the erased text until VACUUM removes them (the owner's right)."""
        with self._said_plainly():
            self.db.execute("VACUUM people, notes")

    @contextmanager
    def guard_suspended(self, table: str):
        """Inside a migration only (the owner's transaction): the table's row trigger switched off."""
        self.db.execute(f"ALTER TABLE {table} DISABLE TRIGGER {table}_append_only")
        yield
        self.db.execute(f"ALTER TABLE {table} ENABLE TRIGGER {table}_append_only")

    def columns(self, table: str) -> list[str]:
        return [r[0] for r in self.db.execute(
            "SELECT column_name FROM information_schema.columns WHERE table_schema = current_schema() "
            "AND table_name = ? ORDER BY ordinal_position", [table])]

    def location(self) -> str:
        return shown(self.dsn)

    def now(self) -> str:
        # one clock for every writer: the server's
        return self.db.execute("SELECT to_char(clock_timestamp() AT TIME ZONE 'UTC', "
                               "'YYYY-MM-DD\"T\"HH24:MI:SS.MS\"Z\"')").fetchone()[0]

    def close(self) -> None:
        self.db.conn.close()

    def _begin(self, migrating: bool = False) -> None:
        """Start a transaction holding the chain head's lock (and, to migrate, the schema's)."""
        if self.read_only:
            raise HistoryError(f"{shown(self.dsn)}: opened for reading only")
        with self._said_plainly():
            conn = self.db.conn
            conn.execute("BEGIN")
            self._names = {}    # an erasure may have happened since: look names up afresh
            try:
                if migrating:   # the schema's lock first: the tables may not exist yet
                    conn.execute("SELECT pg_advisory_xact_lock(%s, current_schema()::regnamespace::oid::int)",
                                 [LOCK_CLASS])
                if not migrating or conn.execute("SELECT to_regclass('revisions')").fetchone()[0] is not None:
                    conn.execute("SELECT pg_advisory_xact_lock(%s, 'revisions'::regclass::oid::int)", [LOCK_CLASS])
            except BaseException:
                self._rollback()
                raise

    def _commit(self) -> None:
        with self._said_plainly():
            self.db.conn.execute("COMMIT")

    def _rollback(self) -> None:
        import psycopg
        conn = self.db.conn
        if conn.closed or conn.info.transaction_status == psycopg.pq.TransactionStatus.IDLE:
            return
        try:
            conn.execute("ROLLBACK")
        except psycopg.Error:
            pass

    @contextmanager
    def _write(self, migrating: bool = False):
        """One transaction holding the chain head's lock from its start; a server error inside it
        (a lost connection, a refused privilege) is a HistoryError saying so."""
        self._begin(migrating)
        try:
            with self._said_plainly():
                yield
        except BaseException:
            self._rollback()
            raise
        else:
            self._commit()

    @contextmanager
    def _said_plainly(self):
        import psycopg
        try:
            yield
        except psycopg.Error as exc:
            raise HistoryError(f"{shown(self.dsn)}: {_plain(exc)}", "unwritable") from None


def _first_line(exc: Exception) -> str:
    return (str(exc).strip().splitlines() or [type(exc).__name__])[0]


def _plain(exc: Exception) -> str:
    text = _first_line(exc)
    if re.search(r"permission denied", text):
        return (f"{text} — the history's tables belong to its owner; a writer needs the role izwatch_writer, "
                "and only the owner can bring the schema up to date (see README, 'Working as a team')")
    return text
