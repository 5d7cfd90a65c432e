"""Worker processes: the same results as one process, in order; and a watcher that starts them
(with its own signal handlers and threads running) neither hangs nor leaves them behind."""
from __future__ import annotations

import json
import signal
import subprocess
import sys
import time

import psutil

from tests.benchmark.generate import generate
from tracker.cli import main


def test_check_with_workers_equals_one_process(tmp_path, capsys):
    generate(tmp_path / "estate", 60, 6, seed=4)       # enough sites for the workers to be used
    outs = []
    for jobs in ("1", "2"):
        main(["check", str(tmp_path / "estate"), "--json", "--jobs", jobs])
        outs.append(json.loads(capsys.readouterr().out))
    assert outs[0] == outs[1] and len(outs[0]["circuits"]) == 360


def test_watch_start_with_workers_then_stop(tmp_path):
    """Found by the benchmark: forked workers inherited the watcher's SIGTERM handler, so the pool
    could not end them and the watcher hung at start."""
    root = tmp_path / "estate"
    generate(root, 80, 5, seed=6)
    for _ in range(2):                                   # the first record, then a start with history
        proc = subprocess.Popen([sys.executable, "-m", "tracker.cli", "watch", str(root), "--json"],
                                stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
        try:
            ready = json.loads(proc.stdout.readline())
            assert ready["event"] == "ready" and ready["sites"] == 80
            children = psutil.Process(proc.pid).children(recursive=True)
            proc.send_signal(signal.SIGINT)
            assert proc.wait(timeout=20) == 0
            time.sleep(0.2)
            assert not [c for c in children if c.is_running() and c.status() != psutil.STATUS_ZOMBIE]
        finally:
            if proc.poll() is None:
                proc.kill()


def test_workers_take_default_sigterm_even_from_a_process_with_its_own(tmp_path):
    """The cause of that hang, tested directly: the workers of a process that handles SIGTERM
    itself (and runs other threads, as the watcher does) must still die of SIGTERM."""
    code = """
import signal, threading, time, sys
sys.path.insert(0, '.')
signal.signal(signal.SIGTERM, lambda *a: None)
threading.Thread(target=time.sleep, args=(5,), daemon=True).start()
from tracker.parallel import ordered_results
from tests.parallel_probe import signals
print(all(a and b for a, b in ordered_results(signals, list(range(6)), 2)))
"""
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert out.stdout.strip() == "True", out.stderr


PROBE_WITHOUT_STDERR = """
import sys, threading, time
class Capture:                 # what the terminal UI puts in place of stderr while it runs
    def write(self, text): return len(text)
    def flush(self): pass
    def fileno(self): return -1
sys.stderr = Capture()
threading.Thread(target=time.sleep, args=(10,), daemon=True).start()   # threads running: spawned workers
from tracker.parallel import ordered_results
from tests.parallel_probe import signals
print(list(ordered_results(signals, [1, 2, 3], 2)))
"""


def test_workers_start_while_stderr_has_no_descriptor():
    """Found in a real terminal: the UI on an estate of 40 sites or more stopped watching at once
    ("bad value(s) in fds_to_keep"), because starting workers hands stderr's descriptor on."""
    proc = subprocess.run([sys.executable, "-c", PROBE_WITHOUT_STDERR], capture_output=True, text=True,
                          timeout=120)
    assert proc.returncode == 0, proc.stderr[-2000:]
    assert proc.stdout.strip() == "[(True, True), (True, True), (True, True)]"
