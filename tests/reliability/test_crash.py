"""Crash safety: the watcher is killed with SIGKILL at random moments (during its first record,
at start, between and during revisions) while edits stream in. After a restart the chain is
intact, no revision is half-written, and the final state of every file is recorded."""
from __future__ import annotations

import json
import random
import subprocess
import sys
import time

from tests.reliability.conftest import record
from tests.reliability.helpers import Editor, recorded_matches_disk
from tests.watch_helpers import start_watcher
from tracker.history.verify import verify

KILLS = 20


def test_twenty_kills_lose_nothing(demo_copy):
    files = sorted(demo_copy.glob("*/*.yaml"))
    editor = Editor(files, seed=5)
    rng = random.Random(17)
    kills, ready_seen = 0, 0
    editor.start()
    try:
        for _ in range(KILLS):
            proc = subprocess.Popen([sys.executable, "-m", "tracker.cli", "watch", str(demo_copy), "--json"],
                                    stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True)
            time.sleep(rng.uniform(0.05, 2.5))
            proc.kill()
            out, _ = proc.communicate(timeout=30)
            ready_seen += any(json.loads(line).get("event") == "ready" for line in out.splitlines() if line)
            kills += 1
    finally:
        editor.stop.set()
        editor.join(timeout=10)
    w, h, _ = start_watcher(demo_copy)     # the restart finds what the killed ones did not record
    try:
        report = verify(h)
        assert report.ok, report.problem
        assert recorded_matches_disk(h, demo_copy, files) == []
        rows = h.db.execute("SELECT count(*) FROM revisions").fetchone()[0]
    finally:
        w.stop()
        h.close()
    assert kills == KILLS
    record("watcher kills (SIGKILL) survived", f"{kills} ({ready_seen} after the ready line), "
                                              f"{editor.edits} edits meanwhile, {rows} revisions, chain intact")
