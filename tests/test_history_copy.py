"""`copy-history`: a SQLite history copied into PostgreSQL (and back) keeps every row and
verifies with the same chain head; nothing is copied from a history that does not verify or into
one that exists. `erase` on the server keeps its chain too, and only the owner may erase."""
from __future__ import annotations

import json

import pytest

from tracker.cli import main
from tracker.history import History
from tracker.history.query import revisions
from tracker.history.verify import verify

NAME = "R. Ashdown-Pike"


@pytest.fixture
def recorded(demo_copy):
    assert main(["replace", str(demo_copy), "quill-court-2/CU1/3/shower", "--power-kw", "8.5", "--by", NAME,
                 "--note", "8.5 kW shower fitted, job 2231"]) == 1
    assert main(["ack", str(demo_copy), "quill-court-2/CU1/3", "--by", "M. Oduya", "--note", "booked"]) == 0
    return demo_copy, demo_copy / ".izwatch" / "history.sqlite"


def test_sqlite_to_server_and_back(recorded, pg_schema, tmp_path, capsys):
    estate, db = recorded
    source = History.open(db)
    head, shown = verify(source).head_hash, revisions(source)
    source.close()
    capsys.readouterr()
    assert main(["copy-history", str(estate), "--to", pg_schema]) == 0
    out = capsys.readouterr().out
    assert f"chain head {head}" in out and "the same as the source" in out
    server = History.open(pg_schema)
    assert verify(server).head_hash == head and revisions(server) == shown
    server.close()
    back = tmp_path / "back.sqlite"
    assert main(["copy-history", str(estate), "--db", pg_schema, "--to", str(back)]) == 0
    copy = History.open(back)
    assert verify(copy).head_hash == head and revisions(copy) == shown
    copy.close()
    # never over a history that is there already
    assert main(["copy-history", str(estate), "--to", str(back)]) == 2
    assert main(["copy-history", str(estate), "--to", pg_schema]) == 2
    assert "a history is there already" in capsys.readouterr().err


def test_a_history_that_does_not_verify_is_not_copied(recorded, tmp_path, capsys):
    import sqlite3
    estate, db = recorded
    conn = sqlite3.connect(db)
    conn.execute("DROP TRIGGER events_append_only_d")
    conn.execute("DELETE FROM events WHERE revision_id = (SELECT max(revision_id) FROM events)")
    conn.commit()
    conn.close()
    target = tmp_path / "copy.sqlite"
    assert main(["copy-history", str(estate), "--to", str(target)]) == 2
    assert "does not verify" in capsys.readouterr().err and not target.exists()


def test_erase_on_the_server(recorded, pg_server, pg_schema):
    import psycopg
    estate, _ = recorded
    assert main(["copy-history", str(estate), "--to", pg_schema]) == 0
    with pg_server.admin() as admin:
        admin.execute("DO $$ BEGIN CREATE ROLE izwatch_writer NOLOGIN; EXCEPTION WHEN duplicate_object THEN "
                      "NULL; END $$")
        admin.execute("DO $$ BEGIN CREATE ROLE operative_b LOGIN IN ROLE izwatch_writer; EXCEPTION WHEN "
                      "duplicate_object THEN NULL; END $$")
        schema = pg_schema.rsplit("%3D", 1)[1]
        admin.execute(f"GRANT USAGE ON SCHEMA {schema} TO izwatch_writer")
        admin.execute(f"GRANT SELECT, INSERT ON ALL TABLES IN SCHEMA {schema} TO izwatch_writer")
    as_writer = pg_schema.replace("user=postgres", "user=operative_b")
    assert main(["erase", str(estate), "--person", NAME, "--db", as_writer]) == 2     # a writer may not erase
    with psycopg.connect(as_writer) as conn:
        with pytest.raises(psycopg.Error, match="permission denied"):
            conn.execute("UPDATE people SET name = NULL")
    head = None
    h = History.open(pg_schema)
    head = verify(h).head_hash
    h.close()
    assert main(["erase", str(estate), "--person", NAME, "--db", pg_schema]) == 0       # the owner may
    h = History.open(pg_schema)
    report = verify(h)
    assert report.ok and report.head_hash == head
    assert {r["author"] for r in revisions(h)} >= {"erased", "M. Oduya"}
    assert NAME not in json.dumps(revisions(h)) and "job 2231" not in json.dumps(revisions(h))
    h.close()
