"""Personal data outside the hash chain: names and notes in erasable tables, the chain holding
pseudonymous ids and salted digests; an existing history migrated without breaking its chain;
`erase` leaving a history that verifies, with "erased" shown where the name was; the chain head
exported and checked later."""
from __future__ import annotations

import json
import shutil
import sqlite3

import pytest

from tests.reliability.conftest import record
from tests.test_history_store import rev
from tracker.cli import main
from tracker.history import History, HistoryError, NewRevision
from tracker.history.people import altered
from tracker.history.query import latest_acks, revisions
from tracker.history.store import migrations_dir
from tracker.history.verify import verify

NAME, OTHER = "R. Ashdown-Pike", "M. Oduya"


def _first_schema_only(tmp_path):
    """The migrations as they were before names left the chain (migration 1 only)."""
    folder = tmp_path / "v1"
    folder.mkdir()
    shutil.copy(migrations_dir() / "0001-initial.sql", folder)
    return folder


def _record_some(h: History) -> None:
    h.record(rev(b"a: 1\n", author=NAME, note="8.5 kW shower fitted, job 2231"))
    h.record(rev(b"a: 2\n", author=OTHER, note="cooker moved"))
    h.record(NewRevision(source="ack", author=NAME, note="cable upgrade booked", ack=("flat-1/CU1/3", ["capacity"])))


def test_names_and_notes_are_not_in_the_chain(tmp_path):
    h = History.open(tmp_path / "h.sqlite")
    _record_some(h)
    stored = h.db.execute("SELECT author, note FROM revisions ORDER BY id").fetchall()
    assert all(a.startswith("actor:") and n.startswith("note:") for a, n in stored)
    assert stored[0][0] == stored[2][0] != stored[1][0]          # one id per person
    assert [(r["author"], r["note"]) for r in revisions(h)] == [
        (NAME, "8.5 kW shower fitted, job 2231"), (OTHER, "cooker moved"), (NAME, "cable upgrade booked")]
    assert verify(h).ok
    h.close()


def test_an_existing_history_is_migrated_without_breaking_its_chain(tmp_path):
    path = tmp_path / "h.sqlite"
    old = History.open(path, migrations=_first_schema_only(tmp_path))
    _record_some(old)
    before = verify(old)
    shown_before = revisions(old)
    assert before.ok and old.db.execute("SELECT author FROM revisions WHERE id = 1").fetchone()[0] == NAME
    old.close()
    h = History.open(path)                                        # migration 2 applied here
    after = verify(h)
    assert after.ok and after.revisions == 3
    assert [{k: v for k, v in r.items() if k != "hash"} for r in revisions(h)] == \
        [{k: v for k, v in r.items() if k != "hash"} for r in shown_before]
    assert h.db.execute("SELECT count(*) FROM revisions WHERE author = ? OR note LIKE '%shower%'",
                        [NAME]).fetchone()[0] == 0                # no name or note text left in the chain
    # each revision's earlier hash is kept: a chain head kept from before can still be matched
    assert h.db.execute("SELECT old_hash FROM rechained WHERE revision_id = 3").fetchone()[0] == before.head_hash
    h.close()


def test_a_broken_old_history_is_not_migrated(tmp_path, demo_copy, capsys):
    path = tmp_path / "h.sqlite"
    old = History.open(path, migrations=_first_schema_only(tmp_path))
    _record_some(old)
    old.close()
    conn = sqlite3.connect(path)
    conn.execute("DROP TRIGGER revisions_append_only_u")
    conn.execute("UPDATE revisions SET note = 'nothing happened' WHERE id = 2")
    conn.commit()
    conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    conn.close()
    before = path.read_bytes()
    with pytest.raises(HistoryError, match="does not verify") as caught:
        History.open(path)
    assert caught.value.kind == "unmigratable" and path.read_bytes() == before
    # verify still reads it as it is and names the revision at fault
    capsys.readouterr()
    assert main(["verify", str(demo_copy), "--db", str(path)]) == 1
    assert "revision 2 was altered" in capsys.readouterr().out


def test_erase_keeps_the_chain_and_shows_erased(tmp_path, demo_copy, capsys):
    path = tmp_path / "h.sqlite"
    h = History.open(path)
    _record_some(h)
    head = verify(h).head_hash
    h.close()
    assert main(["erase", str(demo_copy), "--person", NAME, "--db", str(path)]) == 0
    out = capsys.readouterr().out
    assert "erased" in out and "2 notes" in out and f"chain head {head}" in out
    h = History.open(path)
    report = verify(h)
    assert report.ok and report.head_hash == head                 # not one hash changed
    shown = [(r["author"], r["note"]) for r in revisions(h)]
    assert shown == [("erased", "erased"), (OTHER, "cooker moved"), ("erased", "erased")]
    assert latest_acks(h)["flat-1/CU1/3"]["author"] == "erased"
    h.close()
    # the erased bytes are gone from the database's files, not only from its answers
    for f in tmp_path.glob("h.sqlite*"):
        data = f.read_bytes()
        assert NAME.encode() not in data and b"job 2231" not in data, f.name
    record("a person erased from a SQLite history", "verify green with the same chain head; 0 bytes of the name "
           "or their notes left in the database files")
    # a later revision by the same name is credited to them again, under a new id
    h = History.open(path)
    h.record(rev(b"a: 3\n", author=NAME, note="back on site"))
    assert revisions(h)[-1]["author"] == NAME and verify(h).ok
    h.close()
    assert main(["erase", str(demo_copy), "--person", "Nobody Here", "--db", str(path)]) == 2


def test_names_and_notes_cannot_be_changed_unseen(tmp_path):
    path = tmp_path / "h.sqlite"
    h = History.open(path)
    _record_some(h)
    with pytest.raises(sqlite3.IntegrityError, match="can only be erased"):
        h.db.execute("UPDATE people SET name = 'Someone Else' WHERE name = ?", [NAME])
    with pytest.raises(sqlite3.IntegrityError, match="erased, not deleted"):
        h.db.execute("DELETE FROM notes")
    h.db.execute("DROP TRIGGER people_erase_only")
    h.db.execute("UPDATE people SET name = 'Someone Else' WHERE name = ?", [NAME])
    assert "altered" in altered(h) and not verify(h).ok
    h.close()


def test_the_report_shows_erased(demo_copy, tmp_path):
    assert main(["replace", str(demo_copy), "quill-court-2/CU1/3/shower", "--power-kw", "8.5", "--by", NAME,
                 "--note", "8.5 kW shower fitted, job 2231"]) == 1
    assert main(["erase", str(demo_copy), "--person", NAME]) == 0
    out = tmp_path / "r.json"
    assert main(["report", str(demo_copy), "--site", "quill-court-2", "--format", "json", "-o", str(out)]) == 0
    doc = json.loads(out.read_text())
    text = out.read_text()
    assert NAME not in text and "job 2231" not in text
    assert doc["verification"]["ok"] is True
    assert any(r["author"] == "erased" and r["note"] == "erased" for r in doc["history"]["revisions"])


def test_export_head_and_check_it_later(demo_copy, tmp_path, capsys):
    assert main(["replace", str(demo_copy), "quill-court-2/CU1/3/shower", "--power-kw", "8", "--by", NAME]) == 0
    anchor = tmp_path / "head.json"
    assert main(["export-head", str(demo_copy), "-o", str(anchor)]) == 0
    doc = json.loads(anchor.read_text())
    assert doc["schema"] == "izwatch.chain-head/1" and doc["revisions"] == 2 and doc["taken_at"].endswith("Z")
    assert main(["ack", str(demo_copy), "tansy-walk-9a/FB1/1", "--by", OTHER, "--note", "RCD board booked"]) == 0
    capsys.readouterr()
    assert main(["verify", str(demo_copy), "--head", str(anchor)]) == 0
    assert "holds the chain head exported on" in capsys.readouterr().out
    # a history rewritten and recomputed from start to end verifies on its own, but not against the head
    db = demo_copy / ".izwatch" / "history.sqlite"
    conn = sqlite3.connect(db)     # someone with write access: triggers off, the end cut, triggers back
    triggers = conn.execute("SELECT name, sql FROM sqlite_master WHERE type = 'trigger'").fetchall()
    for name, _ in triggers:
        conn.execute(f"DROP TRIGGER {name}")
    for table in ("acks", "changes", "results", "events"):
        conn.execute(f"DELETE FROM {table} WHERE revision_id >= 2")
    conn.execute("DELETE FROM revisions WHERE id >= 2")
    for _, sql in triggers:
        conn.execute(sql)
    conn.commit()
    conn.close()
    assert main(["verify", str(demo_copy)]) == 0                  # the shortened chain verifies on its own
    capsys.readouterr()
    assert main(["verify", str(demo_copy), "--head", str(anchor)]) == 1
    assert "cut off" in capsys.readouterr().out
