"""`History.open_for_reading`: the report reads the history without writing a byte of it."""
from __future__ import annotations

import hashlib
import sqlite3

import pytest

from tracker.cli import main
from tracker.history import History, HistoryError, default_db_path
from tracker.history import query


def _snapshot(folder):
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in sorted(folder.iterdir())}


@pytest.fixture
def recorded(demo_copy, capsys):
    main(["replace", str(demo_copy), "quill-court-2/CU1/3/shower", "--power-kw", "8.5", "--by", "R", "--note", "n"])
    capsys.readouterr()
    return demo_copy


def test_reading_leaves_the_folder_and_bytes_as_they_were(recorded):
    db = default_db_path(recorded)
    before = _snapshot(db.parent)
    assert list(before) == ["history.sqlite"]      # the writer closed: no WAL files left
    h = History.open_for_reading(db)
    assert len(query.revisions(h, ref="quill-court-2")) == 2   # the first record and the replacement
    h.close()
    assert _snapshot(db.parent) == before


def test_writes_are_refused(recorded):
    h = History.open_for_reading(default_db_path(recorded))
    with pytest.raises(sqlite3.OperationalError, match="readonly"):
        h.db.execute("INSERT INTO blobs (hash, size, content) VALUES ('x', 1, x'00')")
    h.close()


def test_missing_empty_and_foreign_files_are_errors(tmp_path):
    with pytest.raises(HistoryError, match="no history"):
        History.open_for_reading(tmp_path / "none.sqlite")
    assert not (tmp_path / "none.sqlite").exists()
    empty = tmp_path / "empty.sqlite"
    empty.write_bytes(b"")
    with pytest.raises(HistoryError, match="empty"):
        History.open_for_reading(empty)
    text = tmp_path / "notes.sqlite"
    text.write_text("not a database at all, just some words " * 50)
    with pytest.raises(HistoryError, match="not a usable"):
        History.open_for_reading(text)
    other = tmp_path / "other.sqlite"
    conn = sqlite3.connect(other)
    conn.execute("CREATE TABLE t (x)")
    conn.commit()
    conn.close()
    with pytest.raises(HistoryError, match="schema 0"):
        History.open_for_reading(other)
