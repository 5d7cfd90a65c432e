"""A long run: a watcher over thousands of edits across many files keeps steady memory and loses
no final state. 2,000 edits in the suite; --soak runs 20,000."""
from __future__ import annotations

import json
import subprocess
import sys
import threading
import time

import psutil
import pytest

from tests.benchmark.generate import generate
from tests.reliability.conftest import record
from tests.reliability.helpers import Editor, recorded_matches_disk
from tracker.history import History
from tracker.history.verify import verify


def _soak(demo_copy, edits: int, growth_limit_mib: float):
    generate(demo_copy, 40, 10, seed=3)                 # 40 more sites beside the demo ones
    files = sorted(demo_copy.glob("*/*.yaml"))
    proc = subprocess.Popen([sys.executable, "-m", "tracker.cli", "watch", str(demo_copy), "--json"],
                            stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True)
    try:
        assert json.loads(proc.stdout.readline())["event"] == "ready"
        lines = []   # keep reading what it prints, or it blocks once the pipe is full
        threading.Thread(target=lambda: lines.extend(proc.stdout), daemon=True).start()
        mem = psutil.Process(proc.pid)
        editor = Editor(files, seed=9, pause_s=(0.0005, 0.004), limit=edits)
        editor.start()
        samples = []
        while editor.is_alive():
            time.sleep(0.5)
            samples.append((editor.edits, mem.memory_info().rss / 2**20))
        editor.join()
        h = History.open(demo_copy / ".izwatch" / "history.sqlite")
        deadline = time.monotonic() + 120
        while recorded_matches_disk(h, demo_copy, files) and time.monotonic() < deadline:
            time.sleep(0.5)
        samples.append((editor.edits, mem.memory_info().rss / 2**20))
        assert recorded_matches_disk(h, demo_copy, files) == []
        assert verify(h).ok
        revisions = h.count()
        h.close()
    finally:
        proc.terminate()
        proc.wait(timeout=20)
    warm = [rss for n, rss in samples if n >= edits // 5] or [samples[-1][1]]
    growth = max(warm) - warm[0]
    assert growth <= growth_limit_mib, samples
    assert all(json.loads(x)["transition"] for x in lines)
    record(f"soak: edits across {len(files)} files", f"{editor.edits} edits, {revisions} revisions, "
                                                      f"{len(lines)} events printed, memory "
                                                      f"{warm[0]:.0f} → {max(warm):.0f} MiB "
                                                      f"(growth {growth:.1f} MiB after warm-up), final state recorded")


def test_soak_2000_edits(demo_copy):
    _soak(demo_copy, 2000, growth_limit_mib=25)


@pytest.mark.slow
def test_soak_20000_edits(demo_copy):
    _soak(demo_copy, 20000, growth_limit_mib=25)
