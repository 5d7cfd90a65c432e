"""The history store: exact schema, WAL, one transaction per revision, append-only, the hash
chain catching an edited and a deleted row, and deduplication of the same change."""
from __future__ import annotations

import shutil
import sqlite3

import pytest

from tracker.history import History, HistoryError, NewRevision
from tracker.history.query import revisions
from tracker.history.store import migration_files, migrations_dir
from tracker.history.verify import verify
from tracker.loading.estate import sha256_hex


def rev(content: bytes | None, file="flat-1/site.yaml", **kw) -> NewRevision:
    return NewRevision(source=kw.pop("source", "watch"), author=kw.pop("author", "tester"), file=file,
                       site="flat-1", content=content,
                       content_hash=sha256_hex(content) if content is not None else None, **kw)


@pytest.fixture
def store(tmp_path):
    h = History.open(tmp_path / ".izwatch" / "history.sqlite")
    yield h
    h.close()


# The schema as schema/history/0001-initial.sql, 0002-people-outside-the-chain.sql and
# 0003-revisions-of-the-date.sql and 0004-verified-heads.sql declare it,
# written out here by hand so that a table, index or trigger added, renamed or dropped without
# this test changing fails it.
EXPECTED_SQLITE_OBJECTS = {
    ("table", "revisions"), ("table", "blobs"), ("table", "changes"), ("table", "results"),
    ("table", "events"), ("table", "acks"), ("table", "_sqlite_migrations"),
    ("table", "people"), ("table", "notes"), ("table", "rechained"), ("view", "named_revisions"),
    ("table", "verified_heads"),
    ("index", "revisions_file_succession"), ("index", "revisions_file"), ("index", "revisions_at"),
    ("index", "changes_ref"), ("index", "results_ref"), ("index", "events_ref"), ("index", "acks_ref"),
    ("index", "idx__sqlite_migrations_migration_set_name"), ("index", "people_name"), ("index", "notes_actor"),
    *(("trigger", f"{t}_append_only_{op}") for t in ("revisions", "changes", "results", "events", "acks", "blobs",
                                                      "rechained", "verified_heads") for op in "ud"),
    ("trigger", "people_keep"), ("trigger", "people_erase_only"), ("trigger", "notes_keep"),
    ("trigger", "notes_erase_only"),
}
EXPECTED_COLUMNS = {
    "revisions": ["id", "at", "source", "file", "site", "content_hash", "valid", "file_prev_id", "author", "note",
                  "tool_version", "prev_hash", "hash", "signature", "signer"],
    "people": ["actor", "name", "salt", "erased_at"],
    "notes": ["digest", "actor", "text", "salt", "erased_at"],
    "rechained": ["revision_id", "old_hash", "at"],
    "verified_heads": ["revision_id", "hash", "verified_at", "tool_version"],
    "blobs": ["hash", "size", "content"],
    "changes": ["revision_id", "seq", "ref", "change", "field", "old", "new"],
    "results": ["revision_id", "ref", "status", "checks"],
    "events": ["revision_id", "seq", "ref", "check_id", "transition", "value", "limit_value", "unit", "detail"],
    "acks": ["revision_id", "ref", "checks"],
    "_sqlite_migrations": ["id", "migration_set", "name", "applied_at"],
}


def test_exact_schema_version_and_wal(store):
    db = store.db
    assert db.execute("PRAGMA user_version").fetchone()[0] == 4   # four migrations applied
    assert db.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    objects = {(t, n) for t, n in db.execute("SELECT type, name FROM sqlite_master")
               if not n.startswith("sqlite_autoindex_")}    # SQLite's own indexes of keys and UNIQUE
    assert objects == EXPECTED_SQLITE_OBJECTS
    for table, columns in EXPECTED_COLUMNS.items():
        assert [c.name for c in db[table].columns] == columns, table
    assert db.execute("SELECT name FROM _sqlite_migrations").fetchall() == [("0001-initial",),
                                                                            ("0002-people-outside-the-chain",),
                                                                            ("0003-revisions-of-the-date",),
                                                                            ("0004-verified-heads",)]
    # migration 3 widened the sources a revision may have: 'date', for what the passing of a day did
    sql = db.execute("SELECT sql FROM sqlite_master WHERE name = 'revisions'").fetchone()[0]
    assert "CHECK (source IN ('watch', 'replace', 'startup', 'ack', 'date'))" in sql
    # the partial unique index of a file's succession keeps its WHERE clause
    sql = db.execute("SELECT sql FROM sqlite_master WHERE name = 'revisions_file_succession'").fetchone()[0]
    assert "UNIQUE" in sql and "WHERE file IS NOT NULL" in sql


def test_migrations_are_not_reapplied(tmp_path):
    path = tmp_path / "h.sqlite"
    History.open(path).close()
    h = History.open(path)
    assert h.db.execute("SELECT count(*) FROM _sqlite_migrations").fetchone()[0] == 4
    h.close()


def _copy_of_migrations(tmp_path):
    folder = tmp_path / "migrations"
    shutil.copytree(migrations_dir(), folder)
    return folder


def test_a_new_migration_is_applied_to_an_existing_history(tmp_path):
    path = tmp_path / "h.sqlite"
    folder = _copy_of_migrations(tmp_path)
    shipped = len(migration_files(folder))
    h = History.open(path, migrations=folder)
    h.record(rev(b"a: 1\n"))
    h.close()
    (folder / f"{shipped + 1:04d}-site-labels.sql").write_text(
        "-- a later migration\nCREATE TABLE site_labels (site TEXT PRIMARY KEY, label TEXT NOT NULL);\n"
        "CREATE INDEX site_labels_label ON site_labels (label);\n")
    h = History.open(path, migrations=folder)
    assert h.db.execute("PRAGMA user_version").fetchone()[0] == shipped + 1
    assert "site_labels" in h.db.table_names()
    assert [n for (n,) in h.db.execute("SELECT name FROM _sqlite_migrations ORDER BY id")][-1] == \
        f"{shipped + 1:04d}-site-labels"
    assert verify(h).ok and h.count() == 1     # the recorded revision is untouched
    h.close()
    # the shipped set is now older than the file: refused, and the file is left as it is
    before = path.read_bytes()
    with pytest.raises(HistoryError, match="newer izwatch"):
        History.open(path)
    assert path.read_bytes() == before


def test_migrations_must_be_numbered_without_a_gap(tmp_path):
    folder = _copy_of_migrations(tmp_path)
    (folder / "0007-far-ahead.sql").write_text("CREATE TABLE x (y);\n")
    with pytest.raises(HistoryError, match="without a gap"):
        History.open(tmp_path / "h.sqlite", migrations=folder)


def test_a_failing_migration_leaves_the_history_as_it_was(tmp_path):
    path = tmp_path / "h.sqlite"
    folder = _copy_of_migrations(tmp_path)
    History.open(path, migrations=folder).close()
    shipped = len(migration_files(folder))
    (folder / f"{shipped + 1:04d}-broken.sql").write_text(
        "CREATE TABLE fine (a);\nCREATE TABLE revisions (a);\n")
    with pytest.raises(HistoryError):
        History.open(path, migrations=folder)
    conn = sqlite3.connect(path)
    assert conn.execute("PRAGMA user_version").fetchone()[0] == shipped
    assert conn.execute("SELECT count(*) FROM sqlite_master WHERE name = 'fine'").fetchone()[0] == 0
    conn.close()


def test_records_chain_and_read_back(store):
    r1 = store.record(rev(b"a: 1\n", changes=[("flat-1/CU1/3/shower", "modified", "power_kw", 7.5, 9.5)],
                          events=[{"ref": "flat-1/CU1/3", "check": "capacity", "transition": "newly-failing",
                                   "value": 35.0, "limit": 41.3, "unit": "A", "detail": "…"}],
                          note="tenant's new shower"))
    r2 = store.record(rev(b"a: 2\n"))
    assert (r1.id, r2.id) == (1, 2) and not r1.duplicate
    out = revisions(store)
    assert out[0]["changes"] == [{"ref": "flat-1/CU1/3/shower", "field": "power_kw", "old": 7.5, "new": 9.5,
                                  "change": "modified"}]
    assert out[0]["events"][0]["transition"] == "newly-failing" and out[0]["note"] == "tenant's new shower"
    assert store.latest_good_content("flat-1/site.yaml") == b"a: 2\n"
    report = verify(store)
    assert report.ok and report.revisions == 2


def test_same_change_is_not_recorded_twice(store):
    a = store.record(rev(b"x: 1\n"))
    b = store.record(rev(b"x: 1\n", source="replace"))
    assert b.duplicate and b.id == a.id and store.count() == 1
    c = store.record(rev(b"x: 2\n"))
    d = store.record(rev(b"x: 1\n"))       # back to the first content: a real change again
    assert not c.duplicate and not d.duplicate and store.count() == 3


def test_a_second_successor_of_one_file_state_is_impossible(store):
    store.record(rev(b"x: 1\n"))
    with pytest.raises(sqlite3.IntegrityError):
        store.db.execute("INSERT INTO revisions (id, at, source, file, site, content_hash, valid, file_prev_id, "
                         "author, tool_version, prev_hash, hash) VALUES (9, 'now', 'watch', 'flat-1/site.yaml', "
                         "'flat-1', 'h', 1, 0, 'x', '0', 'p', 'q')")


def test_append_only_triggers(store):
    store.record(rev(b"x: 1\n"))
    for sql in ("UPDATE revisions SET author = 'someone else'", "DELETE FROM revisions",
                "DELETE FROM blobs"):
        with pytest.raises(sqlite3.IntegrityError, match="append-only"):
            store.db.execute(sql)


def test_a_failed_revision_leaves_nothing(store, monkeypatch):
    store.record(rev(b"x: 1\n"))
    bad = rev(b"x: 2\n", events=[{"ref": "r", "check": "capacity", "transition": "not-a-transition"}])
    with pytest.raises(sqlite3.IntegrityError):   # the CHECK constraint on events.transition
        store.record(bad)
    assert store.count() == 1
    assert store.db.execute("SELECT count(*) FROM blobs").fetchone()[0] == 1   # the blob rolled back too
    assert verify(store).ok


def _tamper(path, *sql):
    conn = sqlite3.connect(path)
    for trig in [r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'trigger'")]:
        conn.execute(f"DROP TRIGGER {trig}")
    for s in sql:
        conn.execute(s)
    conn.commit()
    conn.close()


def _three(path):
    h = History.open(path)
    for i in range(3):
        h.record(rev(f"x: {i}\n".encode(), changes=[("flat-1/CU1/1", "modified", "length_m", i, i + 1)]))
    h.close()


def test_verify_catches_an_edited_row(tmp_path):
    path = tmp_path / "h.sqlite"
    _three(path)
    _tamper(path, "UPDATE changes SET new = '99' WHERE revision_id = 2")
    h = History.open(path)
    report = verify(h)
    assert not report.ok and report.first_bad == 2 and "altered" in report.problem


def test_verify_catches_a_deleted_revision(tmp_path):
    path = tmp_path / "h.sqlite"
    _three(path)
    _tamper(path, "DELETE FROM changes WHERE revision_id = 2", "DELETE FROM revisions WHERE id = 2")
    report = verify(History.open(path))
    assert not report.ok and report.first_bad == 2 and "missing" in report.problem


def test_verify_catches_a_deleted_child_row_and_an_edited_author(tmp_path):
    path = tmp_path / "h.sqlite"
    _three(path)
    _tamper(path, "DELETE FROM changes WHERE revision_id = 3")
    assert verify(History.open(path)).first_bad == 3
    path2 = tmp_path / "h2.sqlite"
    _three(path2)
    _tamper(path2, "UPDATE revisions SET author = 'mallory' WHERE id = 1")
    assert verify(History.open(path2)).first_bad == 1


def test_verify_catches_altered_file_content(tmp_path):
    path = tmp_path / "h.sqlite"
    _three(path)
    import zlib
    conn = sqlite3.connect(path)
    conn.execute("DROP TRIGGER blobs_append_only_u")
    conn.execute("UPDATE blobs SET content = ? WHERE size = 5", [zlib.compress(b"x: 7\n")])
    conn.commit()
    conn.close()
    assert not verify(History.open(path)).ok


def test_not_a_history_is_never_overwritten(tmp_path):
    path = tmp_path / "h.sqlite"
    path.write_bytes(b"this is not a database at all, and it is precious" * 100)
    with pytest.raises(HistoryError, match="left as it is"):
        History.open(path)
    assert path.read_bytes().startswith(b"this is not a database")
    other = tmp_path / "other.sqlite"
    conn = sqlite3.connect(other)
    conn.execute("CREATE TABLE invoices (n INTEGER)")
    conn.commit()
    conn.close()
    with pytest.raises(HistoryError, match="not an izwatch history"):
        History.open(other)


def test_ack_is_part_of_the_chain(store):
    store.record(rev(b"x: 1\n"))
    r = store.record(NewRevision(source="ack", author="Ruth", note="rewire booked for March",
                                 ack=("flat-1/CU1/3", ["capacity"])))
    out = revisions(store, ref="flat-1/CU1/3")
    assert [x["id"] for x in out] == [r.id] and out[0]["ack"] == {"ref": "flat-1/CU1/3", "checks": ["capacity"]}
    assert verify(store).ok
