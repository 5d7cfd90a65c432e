"""Standard output that goes away, is closed or cannot encode a character: the command's answer
(its exit code) stays the same and there is no internal error (tracker/output/streams.py)."""
from __future__ import annotations

import os
import subprocess
import sys

from tests.reliability.conftest import FIGURES
from tracker.cli import main

CLI = [sys.executable, "-m", "tracker.cli"]


def _count() -> None:
    key = "check into a closed pipe, a closed stdout (text, JSON), a Latin-1 stdout: real exit code"
    FIGURES[key] = FIGURES.get(key, 0) + 1


def test_check_piped_into_a_reader_that_stops_keeps_its_exit_code(demo_copy):
    """Found in review: `izwatch check | head -1` exited 0 although circuits fail."""
    read_end, write_end = os.pipe()
    os.close(read_end)                                # the reader has gone before the first line
    try:
        proc = subprocess.run([*CLI, "check", str(demo_copy)], stdout=write_end, stderr=subprocess.PIPE,
                              text=True, timeout=120)
    finally:
        os.close(write_end)
    assert proc.returncode == 1                       # the demo has failing circuits (README)
    _count()
    assert "Traceback" not in proc.stderr and "internal error" not in proc.stderr and "Exception" not in proc.stderr


def test_a_closed_standard_output_is_not_an_internal_error(demo_copy):
    """Found in review: `izwatch check >&-` exited 3."""
    for extra in ([], ["--json"]):
        proc = subprocess.run([*CLI, "check", str(demo_copy), *extra], stdout=None, stderr=subprocess.PIPE,
                              text=True, timeout=120, pass_fds=(), close_fds=True,
                              preexec_fn=lambda: os.close(1))
        assert proc.returncode == 1, proc.stderr
        assert "internal error" not in proc.stderr
        _count()


def test_an_output_that_cannot_encode_a_character_gets_an_escape(demo_copy):
    """Found in review: a non-UTF-8 standard output (here Latin-1, which has no Ω or →) exited 3."""
    env = {**os.environ, "PYTHONIOENCODING": "latin-1"}
    proc = subprocess.run([*CLI, "check", str(demo_copy)], capture_output=True, env=env, timeout=120)
    assert proc.returncode == 1, proc.stderr
    out = proc.stdout.decode("latin-1")
    assert "\\u03a9" in out and "internal error" not in proc.stderr.decode("latin-1")
    _count()


def test_in_process_a_reader_that_goes_away_does_not_change_the_answer(demo_copy, monkeypatch):
    class GoneAfterOneLine:
        def __init__(self):
            self.lines = 0

        def write(self, text):
            self.lines += text.count("\n")
            if self.lines > 1:
                raise BrokenPipeError(32, "Broken pipe")
            return len(text)

        def flush(self):
            pass

        def isatty(self):
            return False

    monkeypatch.setattr(sys, "stdout", GoneAfterOneLine())
    assert main(["check", str(demo_copy)]) == 1


def test_watch_stops_when_its_reader_goes_away(demo_copy):
    proc = subprocess.Popen([*CLI, "watch", str(demo_copy), "--json"], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True)
    try:
        assert '"event": "ready"' in proc.stdout.readline()
        proc.stdout.close()                           # the reader goes away
        path = demo_copy / "quill-court-2" / "site.yaml"
        path.write_text(path.read_text().replace("power_kw: 7.5", "power_kw: 9.5"))
        assert proc.wait(timeout=30) == 0
        err = proc.stderr.read()
        assert "Traceback" not in err and "internal error" not in err
    finally:
        if proc.poll() is None:
            proc.kill()
    from tracker.history import History
    from tracker.history.query import revisions
    h = History.open(demo_copy / ".izwatch" / "history.sqlite")
    try:                                              # the change was recorded before it stopped
        assert h.latest_by_file()["quill-court-2/site.yaml"][1] is not None
        assert any(r["source"] == "watch" for r in revisions(h))
    finally:
        h.close()
