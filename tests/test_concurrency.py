"""Two processes on one history: a watcher and a replace, or two watchers by mistake, never
corrupt it nor record one change twice."""
from __future__ import annotations

import json
import subprocess
import sys
import threading
import time

from tests.watch_helpers import settle, start_watcher
from tracker.history.store import migration_files, migrations_dir
from tracker.history import History, NewRevision
from tracker.history.verify import verify
from tracker.loading.estate import sha256_hex

FILE = "quill-court-2/site.yaml"


def _cli(*args, **kw):
    return subprocess.run([sys.executable, "-m", "tracker.cli", *map(str, args)], capture_output=True,
                          text=True, timeout=120, **kw)


def test_watcher_and_replace_record_once_and_both_report(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        out = _cli("replace", demo_copy, "quill-court-2/CU1/3/shower", "--power-kw", "8.5", "--by", "Ruth",
                   "--note", "8.5 kW fitted")
        assert out.returncode == 1 and "NEWLY FAILING" in out.stdout
        got = settle(w, until=lambda g: g)
        assert got and got[0].recorded.duplicate and got[0].recorded.author == "Ruth"
        assert ("quill-court-2/CU1/3", "capacity", "newly-failing") in {
            (e["ref"], e["check"], e["transition"]) for u in got for e in u.outcome.events}
        rows = h.db.execute("SELECT source, author FROM named_revisions WHERE file = ? ORDER BY id", [FILE]).fetchall()
        assert rows[-1] == ("replace", "Ruth") and [r[0] for r in rows].count("replace") == 1
        assert len(rows) == 2   # the first record and the replacement: nothing twice
        assert verify(h).ok
    finally:
        w.stop()
        h.close()


def test_two_watchers_by_mistake(demo_copy):
    procs = [subprocess.Popen([sys.executable, "-m", "tracker.cli", "watch", str(demo_copy), "--json"],
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) for _ in range(2)]
    try:
        for p in procs:
            line = p.stdout.readline()
            assert line, p.stderr.read()
            assert json.loads(line)["event"] == "ready"
        path = demo_copy / FILE
        base = path.read_text()
        states = []
        for kw in ("8.5", "9.5", "7.25", "8.0"):
            path.write_text(base.replace("power_kw: 7.5", f"power_kw: {kw}"))
            states.append(sha256_hex(path.read_bytes()))
            time.sleep(0.6)
        time.sleep(1.5)
    finally:
        for p in procs:
            p.terminate()
            p.wait(timeout=10)
    h = History.open(demo_copy / ".izwatch" / "history.sqlite")
    hashes = [r[0] for r in h.db.execute("SELECT content_hash FROM revisions WHERE file = ? ORDER BY id", [FILE])]
    assert hashes[1:] == states            # every state once, in order, after the first record
    first_records = h.db.execute("SELECT count(*) FROM revisions WHERE source = 'startup'").fetchone()[0]
    assert first_records == len(list(demo_copy.glob("*/*.yaml")))   # the first record made once, not twice
    assert verify(h).ok


def test_concurrent_writers_of_the_same_change(tmp_path):
    path = tmp_path / "h.sqlite"
    History.open(path).close()
    results = []

    def writer():
        h = History.open(path)
        r = h.record(NewRevision(source="watch", author="x", file="f.yaml", site="s", content=b"a: 1\n",
                                 content_hash=sha256_hex(b"a: 1\n")))
        results.append(r.duplicate)
        h.close()

    threads = [threading.Thread(target=writer) for _ in range(8)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert sorted(results) == [False] + [True] * 7
    assert verify(History.open(path)).ok


def test_processes_creating_the_history_at_once(tmp_path):
    """Found with two watchers started together: the second once saw the first's new, still
    empty file and took it for a truncated history. A new history is now linked into place whole."""
    path = tmp_path / ".izwatch" / "history.sqlite"
    code = ("import sys; from tracker.history import History; h = History.open(sys.argv[1]); "
            "print(h.db.execute('PRAGMA user_version').fetchone()[0])")
    procs = [subprocess.Popen([sys.executable, "-c", code, str(path)], stdout=subprocess.PIPE,
                              stderr=subprocess.PIPE, text=True) for _ in range(6)]
    outs = [p.communicate(timeout=60) for p in procs]
    shipped = str(len(migration_files(migrations_dir())))     # every migration applied, once
    assert [o[0].strip() for o in outs] == [shipped] * 6, [o[1] for o in outs]
    assert sorted(p.name for p in path.parent.iterdir() if not p.name.startswith("history.sqlite")) == []


def test_an_open_that_meets_a_lock_at_once_tries_again(tmp_path, monkeypatch):
    """SQLite reports some locks at once, without waiting for its busy timeout (two processes
    switching a new history to WAL together): opening tries again instead of failing."""
    from tracker.history import History
    from tracker.history import store
    path = tmp_path / "h.sqlite"
    History.open(path).close()
    real = store.History._open_existing.__func__
    calls = []

    def locked_once(cls, p, migrations):
        calls.append(p)
        if len(calls) == 1:
            raise store._LockedOnOpen()
        return real(cls, p, migrations)

    monkeypatch.setattr(store.History, "_open_existing", classmethod(locked_once))
    monkeypatch.setattr(store.time, "sleep", lambda s: None)
    h = History.open(path)
    assert len(calls) == 2
    h.close()
