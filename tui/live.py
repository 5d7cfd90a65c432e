"""The watcher, run for the UI (no Textual here).

`LiveEstate.run` is the body of the UI's worker thread: it owns a `Watcher` and its own
`History` connection, builds a `Snapshot` after every change and hands it to the UI through
callbacks (which post Textual messages). Requests from the UI (re-check everything, refresh
after an acknowledgement) are flags the loop reads between waits, so the UI never waits for it.
"""
from __future__ import annotations

import os
import threading
import time
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from tracker.history import History, HistoryError
from tracker.output.terminal_text import clean
from tracker.progress import Progress
from tracker.tracking.authors import Authors
from tracker.tracking.datepassed import DatePassed
from tracker.watcher import DEBOUNCE_S, Update, Watcher
from tui.snapshot import RowCache, Snapshot, build

POLL_S = 0.1             # how long one wait for file events lasts (the loop's reaction time)
HEAD_CHECK_S = 1.0       # how often to look for revisions written by other processes


class StatusProgress(Progress):
    """The watcher's start, shown as a bar in the UI's status line once it takes over a second."""

    def __init__(self, show: Callable[[str], None], label: str):
        super().__init__(0, label)
        self.live, self._show = True, show

    def line(self) -> str:
        return f"{self.label} sites {self.done}/{self.total} [{self.bar(10)}]…"   # "…": work in progress

    def draw(self, line: str) -> None:
        self._show(line)


@dataclass(frozen=True)
class News:
    """What one processed save did, in a form the UI can announce."""

    file: str
    valid: bool
    first_record: bool
    events: tuple[dict, ...] = ()
    errors: tuple[str, ...] = ()          # 'file:line:col: path: message'
    author: str = ""
    revision: int = 0
    loads_again: bool = False             # it had an input error and loads now
    warnings: tuple[str, ...] = ()        # what a save brought that `check` warns of (misspelt keys first)
    passed_on: str = ""                   # the date's own revision: deadlines the day made overdue

    @classmethod
    def of_date(cls, d: DatePassed) -> "News":
        return cls(clean(d.site), True, False, tuple(d.events), author=clean(d.recorded.author),
                   revision=d.recorded.id, passed_on=d.on.isoformat())

    @classmethod
    def of(cls, u: Update) -> "News":
        o = u.outcome
        return cls(clean(o.file), o.valid, o.first_record, tuple(o.events), tuple(clean(e) for e in o.errors),
                   clean(u.recorded.author), u.recorded.id, o.loads_again,
                   tuple(clean(t) for t in o.misspelt) + tuple(clean(warning) for warning in o.new_warnings))


@dataclass
class Callbacks:
    snapshot: Callable[[Snapshot, str], None]
    news: Callable[[list[News]], None] = lambda news: None
    status: Callable[[str], None] = lambda text: None
    failed: Callable[[str], None] = lambda text: None


@dataclass
class LiveEstate:
    root: Path
    db_path: Path
    authors: Authors | None = None
    debounce_s: float = DEBOUNCE_S
    today: Callable | None = None         # the local date (tests give a fake one)
    _recheck: threading.Event = field(default_factory=threading.Event)
    _refresh: threading.Event = field(default_factory=threading.Event)

    def request_recheck(self) -> None:
        """Re-read every file and re-run every check from scratch (a fresh start of the watcher)."""
        self._recheck.set()

    def request_refresh(self) -> None:
        """Rebuild the snapshot from the history (after an acknowledgement, say)."""
        self._refresh.set()

    def run(self, cb: Callbacks, stopped: Callable[[], bool]) -> None:
        try:
            history = History.open(self.db_path)
        except HistoryError as exc:
            cb.failed(str(exc))
            return
        abandoned = False
        try:
            abandoned = self._loop(history, cb, stopped)
        except HistoryError as exc:
            cb.failed(str(exc))
        except Exception as exc:  # noqa: BLE001 - reported in the UI, never a traceback
            cb.failed(f"watching stopped: {type(exc).__name__}: {exc}")
        finally:
            if not abandoned:     # an abandoned start still uses the connection until the process ends
                history.close()

    def _start(self, watcher: Watcher, stopped: Callable[[], bool], progress=None) -> list[Update] | None:
        """`watcher.start()`, which on a large estate takes a while, without holding up a quit:
        it runs in a daemon thread that is left behind (None) if the UI stops meanwhile. The
        history is safe either way: each write is one transaction, done whole or not at all."""
        box: dict = {}

        def start() -> None:
            try:
                box["updates"] = watcher.start(progress)
                # the UI shows every circuit: sites taken from their briefs are read through now
                watcher.state.wake_all(os.cpu_count() or 1)
            except BaseException as exc:  # noqa: BLE001 - handed back to the loop below
                box["error"] = exc

        thread = threading.Thread(target=start, name="izwatch-start", daemon=True)
        thread.start()
        while thread.is_alive():
            thread.join(POLL_S)
            if stopped() and thread.is_alive():
                return None
        if "error" in box:
            raise box["error"]
        return box["updates"]

    def _loop(self, history: History, cb: Callbacks, stopped: Callable[[], bool]) -> bool:
        """Watch until stopped; True if a start was left running."""
        cache = RowCache()
        reason = "start"
        while not stopped():
            self._recheck.clear()
            label = "checking every circuit…" if reason == "start" else "re-checking every circuit…"
            cb.status(label)
            t0 = time.monotonic()
            watcher = Watcher(self.root, history, self.authors or Authors(self.root), self.debounce_s, self.today)
            updates = self._start(watcher, stopped, StatusProgress(cb.status, label.split()[0]))
            if updates is None:
                return True
            try:
                first = bool(updates) and all(u.outcome.first_record for u in updates)
                passed = watcher.date_passed()       # overdue since the history last looked
                cb.snapshot(build(watcher.state, history, cache, first_record=first), reason)
                cb.status(f"{'checked' if reason == 'start' else 're-checked'} in {time.monotonic() - t0:.1f} s")
                news = [News.of(u) for u in updates if not (u.outcome.first_record and u.outcome.valid)]
                news += [News.of_date(d) for d in passed]
                if news:
                    cb.news(news)
                self._watch(watcher, history, cache, cb, stopped)
            finally:
                watcher.stop()
            reason = "re-check"
        return False

    def _watch(self, watcher: Watcher, history: History, cache: RowCache, cb: Callbacks,
               stopped: Callable[[], bool]) -> None:
        head = history.head()[0]
        next_head_check = time.monotonic() + HEAD_CHECK_S
        while not stopped() and not self._recheck.is_set():
            passed = watcher.date_passed()          # the local date changed: deadlines it passed
            updates = watcher.wait_and_process(timeout=POLL_S)
            rebuild = bool(updates) or bool(passed)
            if self._refresh.is_set():
                self._refresh.clear()
                rebuild = True
            if not rebuild and time.monotonic() >= next_head_check:
                next_head_check = time.monotonic() + HEAD_CHECK_S
                rebuild = history.head()[0] != head      # another process wrote (an `izwatch ack`, say)
            if not rebuild:
                continue
            snap = build(watcher.state, history, cache)
            head = snap.head
            cb.snapshot(snap, "change" if updates or passed else "refresh")
            if updates or passed:
                cb.news([News.of(u) for u in updates] + [News.of_date(d) for d in passed])
