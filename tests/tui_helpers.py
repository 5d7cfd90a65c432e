"""Helpers for the terminal UI's tests: a fixed clock, a fixed author, waiting on the app."""
from __future__ import annotations

import asyncio
import time
from datetime import datetime, timezone

from tracker.tracking.authors import Authors

AUTHOR = "T. Marlow"           # an invented contractor
FIXED_NOW = datetime(2026, 3, 2, 9, 30, tzinfo=timezone.utc)


def make_app(root, **kwargs):
    from tui.app import IzwatchApp

    kwargs.setdefault("authors", Authors(root, by=AUTHOR))
    kwargs.setdefault("debounce_s", 0.1)
    return IzwatchApp(root, **kwargs)


async def until(pilot, condition, timeout: float = 8.0, step: float = 0.02) -> float:
    """Wait until `condition()` holds; the seconds it took. Fails the test on timeout."""
    t0 = time.monotonic()
    while not condition():
        if time.monotonic() - t0 > timeout:
            raise AssertionError(f"timed out after {timeout} s waiting for {condition}")
        await pilot.pause(step)
    return time.monotonic() - t0


async def loaded(pilot) -> None:
    await until(pilot, lambda: pilot.app.snapshots >= 1)
    await pilot.pause()


def replace_atomically(path, old, new) -> None:
    """An edit saved the way many editors do it: a whole new file renamed over the old one, so
    a watcher never reads it half-written (snapshots need the same revisions every run)."""
    import os

    text = path.read_text(encoding="utf-8")
    assert old in text, old
    tmp = path.with_name("." + path.name + ".tmp")
    tmp.write_text(text.replace(old, new, 1), encoding="utf-8")
    os.replace(tmp, path)


def run(coro):
    return asyncio.run(coro)


def settle_file(watcher, root, rel: str, seconds: float = 8.0) -> None:
    """Process events until the watcher holds the file's content as it is on disk (an editor's
    save can arrive as several writes; the first may catch the file half-written)."""
    from tracker.loading.estate import sha256_hex

    want = sha256_hex((root / rel).read_bytes())
    deadline = time.monotonic() + seconds
    while time.monotonic() < deadline:
        watcher.wait_and_process(timeout=0.1)
        if watcher.state.hashes.get(rel) == want and rel not in watcher.state.errors and watcher.pending() == 0:
            return
    raise AssertionError(f"the watcher never settled on {rel}")
