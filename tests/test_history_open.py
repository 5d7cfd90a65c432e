"""Opening the history says plainly what stands in the way: a full disk or a read-only folder is
not a damaged history; a foreign or newer database is left exactly as it is (not even switched to
WAL); a new history file's mode follows the umask."""
from __future__ import annotations

import errno
import os
import sqlite3
import stat

import pytest

from tests.reliability.conftest import FIGURES
from tracker.history import History, HistoryError
from tracker.history.store import plain_error


def _left_as_it_is(what: str) -> None:
    key = "histories opened that were foreign, newer, read-only or on a full disk: said plainly, none called damaged"
    FIGURES[key] = ", ".join(sorted({*str(FIGURES.get(key, "")).split(", "), what} - {""}))


def _journal_mode(path) -> str:
    # the file header's bytes 18 and 19 are 2 in WAL mode, 1 in rollback mode (SQLite file format, 1.3)
    header = path.read_bytes()[:20]
    return "wal" if header[18:20] == b"\x02\x02" else "rollback"


def test_a_foreign_database_is_left_as_it_is(tmp_path):
    other = tmp_path / "invoices.sqlite"
    conn = sqlite3.connect(other)
    conn.execute("CREATE TABLE invoices (n INTEGER)")
    conn.commit()
    conn.close()
    before = other.read_bytes()
    with pytest.raises(HistoryError, match="not an izwatch history") as caught:
        History.open(other)
    assert caught.value.kind == "foreign"
    _left_as_it_is("foreign database")
    assert other.read_bytes() == before and _journal_mode(other) == "rollback"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["invoices.sqlite"]


def test_a_newer_history_is_left_as_it_is(tmp_path):
    path = tmp_path / "h.sqlite"
    History.open(path).close()
    conn = sqlite3.connect(path)
    conn.execute("PRAGMA journal_mode = DELETE")
    conn.execute("PRAGMA user_version = 99")
    conn.close()
    before = path.read_bytes()
    with pytest.raises(HistoryError, match="newer izwatch") as caught:
        History.open(path)
    assert caught.value.kind == "newer"
    _left_as_it_is("newer history")
    assert path.read_bytes() == before and _journal_mode(path) == "rollback"


def test_a_new_history_follows_the_umask(tmp_path):
    old = os.umask(0o027)
    try:
        History.open(tmp_path / "a" / "h.sqlite").close()
    finally:
        os.umask(old)
    assert stat.S_IMODE((tmp_path / "a" / "h.sqlite").stat().st_mode) == 0o640   # 0666 & ~0027
    old = os.umask(0o002)
    try:
        History.open(tmp_path / "b" / "h.sqlite").close()
    finally:
        os.umask(old)
    assert stat.S_IMODE((tmp_path / "b" / "h.sqlite").stat().st_mode) == 0o664   # 0666 & ~0002


def test_a_full_disk_is_said_plainly(tmp_path, monkeypatch):
    def full(*_a, **_k):
        raise OSError(errno.ENOSPC, "No space left on device")
    monkeypatch.setattr(History, "_create", classmethod(full))
    with pytest.raises(HistoryError, match="the disk is full") as caught:
        History.open(tmp_path / "h.sqlite")
    assert caught.value.kind == "full" and "damaged" not in str(caught.value)
    # SQLite's own SQLITE_FULL (a database at its page limit raises it as a full disk does)
    conn = sqlite3.connect(tmp_path / "small.sqlite")
    conn.execute("PRAGMA max_page_count = 2")
    with pytest.raises(sqlite3.OperationalError) as sqlite_full:
        conn.execute("CREATE TABLE a (x)")
        conn.execute("CREATE TABLE b (x)")
        conn.executemany("INSERT INTO a VALUES (?)", [("x" * 2000,)] * 10)
    conn.close()
    assert plain_error(tmp_path / "small.sqlite", sqlite_full.value).kind == "full"
    _left_as_it_is("full disk")


def test_a_read_only_place_is_not_called_damage(demo_copy, monkeypatch, capsys):
    from tracker.cli import main
    from tracker.history import store as store_module
    assert main(["replace", str(demo_copy), "quill-court-2/CU1/3/shower", "--power-kw", "8", "--by", "R"]) == 0
    db = demo_copy / ".izwatch" / "history.sqlite"
    conn = sqlite3.connect(db)
    conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    conn.execute("PRAGMA journal_mode = DELETE")
    conn.close()
    before = db.read_bytes()
    real_connect = sqlite3.connect

    def read_only(database, *args, **kwargs):
        # what a read-only folder or file gives (root may write anywhere, so it is made, not found)
        kwargs.pop("uri", None)
        return real_connect(f"file:{database}?mode=ro", *args, uri=True, **kwargs)

    monkeypatch.setattr(store_module.sqlite3, "connect", read_only)
    capsys.readouterr()
    assert main(["ack", str(demo_copy), "quill-court-2/CU1/3", "--by", "x", "--note", "y"]) == 2
    err = capsys.readouterr().err
    assert "cannot write there" in err and "damaged" not in err and "backup" not in err
    assert main(["verify", str(demo_copy)]) == 0       # read through a query-only connection
    assert "history intact: 2 revisions" in capsys.readouterr().out
    monkeypatch.undo()
    assert db.read_bytes() == before
    _left_as_it_is("read-only place")
