"""Helpers for tests that run a watcher in-process."""
from __future__ import annotations

import time

from tracker.history import History
from tracker.watcher import Watcher


def edit(path, old, new) -> None:
    """Replace the first `old` of a site file by `new` (which must be there), as a save would."""
    text = path.read_text(encoding="utf-8")
    assert old in text, old
    path.write_text(text.replace(old, new, 1), encoding="utf-8")


def start_watcher(root, db=None, debounce_s=0.1):
    history = History.open(db or root / ".izwatch" / "history.sqlite")
    w = Watcher(root, history, debounce_s=debounce_s)
    updates = w.start()
    return w, history, updates


def settle(w, seconds=5.0, until=None):
    """Process events until `until(updates)` holds or nothing has happened for a while."""
    got = []
    deadline = time.monotonic() + seconds
    quiet_since = time.monotonic()
    while time.monotonic() < deadline:
        new = w.wait_and_process(timeout=0.2)
        got += new
        if new:
            quiet_since = time.monotonic()
        if until is not None and until(got):
            break
        if until is None and time.monotonic() - quiet_since > 1.0 and w.pending() == 0:
            break
    return got
