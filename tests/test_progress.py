"""The progress line of long runs: drawn on a terminal once a run passes its delay, silent in a
pipe; the terminal UI's variant reports to its status line."""
from __future__ import annotations

import io

from tracker.progress import Progress
from tui.live import StatusProgress


class Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def test_silent_when_not_a_terminal():
    out = io.StringIO()
    p = Progress(10, "checking sites", stream=out, delay_s=0)
    for _ in range(10):
        p.advance()
    p.close()
    assert out.getvalue() == ""


def test_drawn_on_a_terminal_after_the_delay_then_cleared():
    out = Terminal()
    p = Progress(4, "checking sites", stream=out, delay_s=0)
    p.advance(2)
    assert out.getvalue() == "\rchecking sites [" + "#" * 15 + "-" * 15 + "] 2/4"
    p.close()
    assert out.getvalue().endswith("\r")


def test_nothing_drawn_before_the_delay():
    out = Terminal()
    p = Progress(4, "checking sites", stream=out, delay_s=60)
    p.advance(4)
    p.close()
    assert out.getvalue() == ""


def test_the_ui_variant_reports_to_the_status_line():
    shown = []
    p = StatusProgress(shown.append, "re-checking")
    p.delay_s, p.total = 0, 500
    p.advance(250)
    # the UI shows a status that ends in "…" as work in progress (tui/app.py, on_watch_status)
    assert shown == ["re-checking sites 250/500 [#####-----]…"]

