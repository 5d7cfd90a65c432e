"""`izwatch tui`: bad input gets one clear line and exit 2, never a traceback; the core does
not load the UI to get there."""
from __future__ import annotations

import subprocess
import sys

from tracker.cli import build_parser, main


def test_tui_is_a_command():
    args = build_parser().parse_args(["tui", "somewhere", "--db", "h.sqlite"])
    assert args.path == "somewhere" and args.db == "h.sqlite"


def test_a_missing_folder_is_refused(tmp_path, capsys):
    assert main(["tui", str(tmp_path / "nowhere")]) == 2
    err = capsys.readouterr().err
    assert err.startswith("izwatch: ") and "Traceback" not in err


def test_an_unusable_history_is_refused(demo_copy, capsys, monkeypatch):
    monkeypatch.setattr("sys.stdin.isatty", lambda: True, raising=False)
    monkeypatch.setattr("sys.stdout.isatty", lambda: True, raising=False)
    bad = demo_copy / "not-a-history.sqlite"
    bad.write_bytes(b"this is not a database, just some bytes" * 100)
    assert main(["tui", str(demo_copy), "--db", str(bad)]) == 2
    err = capsys.readouterr().err
    assert "not a usable izwatch history" in err and "Traceback" not in err


def test_without_a_terminal_it_says_so_and_writes_nothing(demo_copy):
    out = subprocess.run([sys.executable, "-m", "tracker.cli", "tui", str(demo_copy)], capture_output=True,
                         text=True, stdin=subprocess.DEVNULL, timeout=60)
    assert out.returncode == 2
    assert out.stderr.startswith("izwatch: tui needs a terminal") and "Traceback" not in out.stderr
    assert not (demo_copy / ".izwatch").exists()
