"""A team on one history on a PostgreSQL server: the README's walkthrough with `--db` and with
IZWATCH_DB; two watchers on two copies of the demo estate writing to one chain, replacements and
acknowledgements from both, one watcher killed with SIGKILL and started again — `verify` green and
nothing recorded twice."""
from __future__ import annotations

import json
import os
import shutil
import signal
import subprocess
import sys
import time

from tests.reliability.conftest import record
from tracker.history import History
from tracker.history.verify import verify


def _cli(*args, env=None):
    return subprocess.run([sys.executable, "-m", "tracker.cli", *map(str, args)], capture_output=True, text=True,
                          timeout=120, env={**os.environ, **(env or {})})


def _watch(estate, dsn):
    proc = subprocess.Popen([sys.executable, "-m", "tracker.cli", "watch", str(estate), "--db", dsn, "--json"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    line = proc.stdout.readline()
    assert line and json.loads(line)["event"] == "ready", proc.stderr.read() if not line else line
    return proc


def _nothing_twice(h: History) -> None:
    """No file has two revisions in a row of the same state, and each file's succession is one line."""
    last: dict[str, tuple] = {}
    for file, chash, valid, prev, rid in h.db.execute(
            "SELECT file, content_hash, valid, file_prev_id, id FROM revisions WHERE file IS NOT NULL ORDER BY id"):
        if file in last:
            assert (chash, valid) != last[file][:2], f"{file} recorded twice in a row (revision {rid})"
            assert prev == last[file][2], f"revision {rid} does not follow its file's latest"
        last[file] = (chash, valid, rid)


def test_walkthrough_on_the_server(demo_copy, pg_schema, tmp_path):
    shower = "quill-court-2/CU1/3/shower"
    out = _cli("replace", demo_copy, shower, "--power-kw", "8.5", "--by", "R. Ashdown-Pike",
               "--note", "8.5 kW shower fitted, job 2231", "--db", pg_schema)
    assert out.returncode == 1 and "NEWLY FAILING" in out.stdout, out.stderr
    assert not (demo_copy / ".izwatch").exists()            # nothing written beside the estate
    env = {"IZWATCH_DB": pg_schema}
    out = _cli("history", demo_copy, "--ref", "quill-court-2/CU1/3", "--json", env=env)
    revs = json.loads(out.stdout)
    assert revs[-1]["author"] == "R. Ashdown-Pike" and revs[-1]["changes"][0]["new"] == 8.5
    assert ("quill-court-2/CU1/3", "capacity", "newly-failing") in {
        (e["ref"], e["check"], e["transition"]) for e in revs[-1]["events"]}
    out = _cli("ack", demo_copy, "quill-court-2/CU1/3", "--by", "M. Oduya", "--note", "cable upgrade booked",
               env=env)
    assert out.returncode == 0, out.stderr
    out = _cli("verify", demo_copy, env=env)
    assert out.returncode == 0 and "history intact" in out.stdout
    report = tmp_path / "report.json"
    out = _cli("report", demo_copy, "--site", "quill-court-2", "--format", "json", "-o", report, "--db", pg_schema)
    assert out.returncode == 0, out.stderr
    doc = json.loads(report.read_text())
    assert doc["verification"]["ok"] is True and doc["verification"]["state"] == "intact"
    assert doc["history"]["path"] == pg_schema                      # no password in it to hide
    shutil.rmtree(demo_copy / ".izwatch", ignore_errors=True)


def test_two_watchers_on_two_copies_share_one_chain(demo_copy, pg_schema, tmp_path):
    copy_a, copy_b = demo_copy, tmp_path / "estate-b"
    shutil.copytree(copy_a, copy_b)
    a = _watch(copy_a, pg_schema)
    b = _watch(copy_b, pg_schema)
    killed = False
    try:
        # a replacement and an acknowledgement from each copy
        assert _cli("replace", copy_a, "quill-court-2/CU1/3/shower", "--power-kw", "8.5", "--by", "Ruth",
                    "--db", pg_schema).returncode == 1
        assert _cli("replace", copy_b, "bracken-cottage/CU1/4/lounge", "--power-kw", "3.0", "--by", "Tomas",
                    "--db", pg_schema).returncode in (0, 1)
        assert _cli("ack", copy_a, "quill-court-2/CU1/3", "--by", "Ruth", "--note", "booked",
                    "--db", pg_schema).returncode == 0
        assert _cli("ack", copy_b, "tansy-walk-9a/FB1/1", "--by", "Tomas", "--note", "RCD board booked",
                    "--db", pg_schema).returncode == 0
        # edits saved in copy B while its watcher runs; it is killed in the middle of them
        heater = copy_b / "larkspur-yard-4" / "site.yaml"
        base = heater.read_text()
        values = [v for v in ("0.5", "0.6", "0.7", "0.8") if f"power_kw: {v}" not in base]
        target = next(line.split("power_kw:")[1].split("}")[0].split(",")[0].strip()
                      for line in base.splitlines() if "power_kw:" in line)
        for i, v in enumerate(values):
            heater.write_text(base.replace(f"power_kw: {target}", f"power_kw: {v}", 1))
            time.sleep(0.4)
            if i == 1:
                b.send_signal(signal.SIGKILL)
                b.wait(timeout=10)
                killed = True
        # copy B takes copy A's replacement as git would bring it, then its watcher starts again
        shutil.copy2(copy_a / "quill-court-2" / "site.yaml", copy_b / "quill-court-2" / "site.yaml")
        b = _watch(copy_b, pg_schema)
        time.sleep(1.0)
    finally:
        for proc in (a, b):
            if proc.poll() is None:
                proc.terminate()
                proc.wait(timeout=10)
    assert killed
    h = History.open(pg_schema)
    report = verify(h)
    assert report.ok, report.problem
    _nothing_twice(h)
    sources = dict(h.db.execute("SELECT source, count(*) FROM revisions GROUP BY source").fetchall())
    files = len(list(copy_a.glob("*/*.yaml")))
    first = h.db.execute("SELECT count(*) FROM revisions WHERE file_prev_id = 0 AND file IS NOT NULL").fetchone()[0]
    assert first == files                              # the first record once, though two watchers started
    assert sources["replace"] == 2 and sources["ack"] == 2
    final = {f: c for f, c in h.db.execute(
        "SELECT r.file, r.content_hash FROM revisions r JOIN (SELECT file, max(id) AS id FROM revisions "
        "WHERE file IS NOT NULL GROUP BY file) m ON r.id = m.id")}
    from tracker.loading.estate import sha256_hex
    for path in copy_b.glob("*/*.yaml"):               # every file's state in copy B is the latest recorded
        assert final[str(path.relative_to(copy_b))] == sha256_hex(path.read_bytes()), path
    h.close()
    record("two watchers on two copies, one PostgreSQL history, one killed with SIGKILL mid-edits",
           f"{report.revisions} revisions, 2 replacements and 2 acknowledgements once each, "
           "verify green, 0 recorded twice, every file's final state recorded")


def test_the_terminal_ui_on_the_server(demo_copy, pg_schema):
    """The UI opens on a server history (its watcher records the first record there) and an
    acknowledgement made in it is written to the server's chain."""
    from tests.tui_helpers import loaded, make_app, run

    async def go():
        app = make_app(demo_copy, db=pg_schema)
        async with app.run_test(size=(80, 24)) as pilot:
            await loaded(pilot)
            row = next(r for r in app.snapshot.rows if r.status == "fail")
            app.write_ack(row, "M. Oduya", "remedial work booked")
            await pilot.pause(0.2)
            return row.ref
    ref = run(go())
    assert not (demo_copy / ".izwatch").exists()
    h = History.open(pg_schema)
    acks = [r for r in h.db.execute("SELECT a.ref, r.author FROM acks a JOIN named_revisions r "
                                    "ON r.id = a.revision_id")]
    assert acks == [(ref, "M. Oduya")] and verify(h).ok
    h.close()
