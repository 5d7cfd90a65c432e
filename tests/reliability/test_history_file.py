"""A damaged history is detected when it is opened and reported in one clear line; it is never
recreated over, and `verify` says so too. A backup made with SQLite's backup API verifies."""
from __future__ import annotations

import sqlite3
import subprocess
import sys

import pytest

from tests.reliability.conftest import record
from tracker.cli import main
from tracker.history import History
from tracker.history.verify import verify
from tracker.tracking.authors import Authors
from tracker.tracking.startup import start


def _cli(*args):
    return subprocess.run([sys.executable, "-m", "tracker.cli", *map(str, args)], capture_output=True,
                          text=True, timeout=120)


@pytest.fixture
def recorded(demo_copy):
    assert main(["replace", str(demo_copy), "quill-court-2/CU1/3/shower", "--power-kw", "8", "--by", "R"]) == 0
    db = demo_copy / ".izwatch" / "history.sqlite"
    conn = sqlite3.connect(db)
    conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    conn.close()
    return demo_copy, db


def _damage(db, how):
    data = bytearray(db.read_bytes())
    if how == "truncated":
        data = data[: len(data) // 2]
    elif how == "zeroed pages":
        data[4096:4096 * 3] = bytes(4096 * 2)
    elif how == "garbage header":
        data[:100] = b"x" * 100
    elif how == "empty":
        data = bytearray()
    db.write_bytes(bytes(data))
    return bytes(data)


@pytest.mark.parametrize("how", ["truncated", "zeroed pages", "garbage header", "empty"])
def test_damaged_history_is_reported_not_recreated(recorded, how):
    estate, db = recorded
    damaged = _damage(db, how)
    for cmd in (["watch", estate], ["history", estate], ["ack", estate, "tansy-walk-9a/FB1/1", "--by", "x",
                                                           "--note", "y"],
                ["replace", estate, "quill-court-2/CU1/3/shower", "--power-kw", "7", "--by", "R"]):
        out = _cli(*cmd)
        assert out.returncode == 2, (how, cmd[0], out.stdout, out.stderr)
        assert "Traceback" not in out.stderr
        assert out.stderr.startswith("izwatch: ") and str(db) in out.stderr
        assert db.read_bytes() == damaged, f"{cmd[0]} changed the damaged file"
    out = _cli("verify", estate)
    assert out.returncode == 1 and "FAILED" in out.stdout
    assert db.read_bytes() == damaged
    record("damaged history files detected (of 4 kinds)", 4)


def test_backup_and_restore(recorded, tmp_path):
    estate, db = recorded
    backup = tmp_path / "backup.sqlite"
    src = sqlite3.connect(db)
    dst = sqlite3.connect(backup)
    src.backup(dst)
    dst.close()
    src.close()
    assert verify(History.open(backup, create=False)).ok
    # a change after the backup, then the history is damaged and the backup restored
    assert main(["replace", str(estate), "quill-court-2/CU1/3/shower", "--power-kw", "9.5", "--by", "S"]) == 1
    _damage(db, "zeroed pages")
    assert _cli("verify", estate).returncode != 0
    db.unlink()
    backup.replace(db)
    assert _cli("verify", estate).returncode == 0
    # the next start finds the change the restored history lacks and records it (README, Reliability)
    history = History.open(db, create=False)
    before = history.count()
    _, done = start(estate, history, Authors(estate))
    # (the fixture's `replace` recorded only its own site: the others are recorded now as found)
    mine = [o for o, _ in done if o.file == "quill-court-2/site.yaml"]
    assert len(mine) == 1 and mine[0].valid
    assert [(c.ref, c.field, c.old, c.new) for c in mine[0].changes] == [
        ("quill-court-2/CU1/3/shower", "power_kw", 8, 9.5)]
    assert history.count() == before + len(done) and verify(history).ok
    history.close()
