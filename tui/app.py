"""`izwatch tui PATH`: the problems of an estate, live, with their working and their history.

The watcher runs in a thread worker (`tui.live.LiveEstate`) and posts whole snapshots; history
reads, acknowledgements and remedies run in thread workers of their own. The UI thread only
draws and dispatches.
"""
from __future__ import annotations

import sqlite3
import threading
from collections.abc import Callable
from datetime import datetime
from pathlib import Path

from textual import work
from rich.markup import escape
from textual.app import App
from textual.binding import Binding
from textual.worker import get_current_worker

from tracker.checks import remedy as remedies
from tracker.history import HistoryError, default_db_path, history_location
from tracker.output.terminal_text import clean
from tracker.tracking.authors import Authors
from tracker.watcher import DEBOUNCE_S
from tui.components.ack_dialog import AckAnswer, AckDialog
from tui.components.details_screen import DetailsScreen
from tui.components.help_screen import HelpScreen
from tui.components.overview import OverviewScreen
from tui.live import Callbacks, LiveEstate, News
from tui.messages import (AckDone, AckFailed, EstateChanged, FilesProcessed, OpenElement, RemedyFound,
                          TimelineLoaded, WatchFailed, WatchStatus)
from tui.records import AckRefused, Records
from tui.snapshot import EMPTY, Row, Snapshot
from tui.timeline import timeline
from tui.wording import utc_now

NEWS_SHOWN = 4


def news_lines(news: list[News]) -> tuple[list[str], list[str]]:
    """(problem lines, good-news lines) announcing what saves did."""
    bad, good = [], []
    for n in news:
        if n.passed_on:        # no file and no person: the day passed these deadlines
            bad.extend(f"▲ overdue: {clean(e['ref'])} {clean(e.get('what') or e.get('detail') or '')} — the last "
                       f"day was {e.get('due')} (the date passed: {n.passed_on})" for e in n.events)
            continue
        if not n.valid:
            bad.append(f"⚠ input error in {n.file}: " + (n.errors[0] if n.errors else "it does not load"))
            continue
        if n.loads_again:
            good.append(f"✓ loads again: {n.file}")
        bad.extend(f"! warning: {warning}" for warning in n.warnings)
        for e in n.events:
            if e["transition"] in ("newly-failing", "worse"):
                word = "▲ newly failing" if e["transition"] == "newly-failing" else "▼ worse"
                bad.append(f"{word}: {clean(e['ref'])} {e['check']} ({n.file}, by {n.author})")
            elif e["transition"] == "cleared":
                good.append(f"✓ cleared: {e['ref']} {e['check']} ({n.file})")
    return bad, good


class IzwatchApp(App):
    CSS_PATH = "app.tcss"
    TITLE = "izwatch"
    ENABLE_COMMAND_PALETTE = False
    BINDINGS = [
        Binding("question_mark,f1", "help", "help", key_display="?"),
        Binding("r", "recheck", "re-check"),
        Binding("d", "deadlines", "deadlines", show=False),
        Binding("q", "quit", "quit"),
    ]

    def __init__(self, root: Path | str, db: Path | str | None = None, *,
                 clock: Callable[[], datetime] = utc_now, authors: Authors | None = None,
                 debounce_s: float = DEBOUNCE_S):
        super().__init__()
        self.root = Path(root)
        self.db_path = history_location(db) if db else default_db_path(self.root)
        self.clock = clock
        self.live = LiveEstate(self.root, self.db_path, authors, debounce_s)
        self.records = Records(self.db_path)
        self.snapshot: Snapshot = EMPTY
        self.snapshots = 0               # how many snapshots arrived (tests wait on it)
        self.failure = ""
        self._quitting = threading.Event()

    def get_default_screen(self) -> OverviewScreen:
        self.overview = OverviewScreen(self.root.resolve().name, self.clock, id="overview")
        return self.overview

    def on_mount(self) -> None:
        self.watch_estate()

    def on_unmount(self) -> None:
        self._quitting.set()
        self.records.close()

    # -- the watcher ----------------------------------------------------------------------

    @work(thread=True, exclusive=True, group="watch", exit_on_error=False)
    def watch_estate(self) -> None:
        worker = get_current_worker()
        cb = Callbacks(snapshot=lambda snap, why: self.post_message(EstateChanged(snap, why)),
                       news=lambda news: self.post_message(FilesProcessed(news)),
                       status=lambda text: self.post_message(WatchStatus(text)),
                       failed=lambda text: self.post_message(WatchFailed(text)))
        self.live.run(cb, lambda: worker.is_cancelled or self._quitting.is_set())

    def on_estate_changed(self, message: EstateChanged) -> None:
        self.snapshot = message.snapshot
        self.snapshots += 1
        snap = message.snapshot
        self.overview.show_snapshot(snap)
        self.overview.set_status(f"watching {snap.circuits} circuits in {len(snap.sites)} sites",
                                 f"{snap.revisions} revisions recorded")
        for screen in self.screen_stack:
            if isinstance(screen, DetailsScreen):
                screen.show_snapshot(snap)

    def on_watch_status(self, message: WatchStatus) -> None:
        # Work in progress shows in the top line; once a snapshot is in, the line says what is watched.
        if message.text.endswith("…"):
            self.overview.set_status(message.text)

    def on_watch_failed(self, message: WatchFailed) -> None:
        self.failure = message.text
        self.overview.show_failure(message.text)
        self.overview.set_status("not watching")

    def on_files_processed(self, message: FilesProcessed) -> None:
        bad, good = news_lines(message.news)
        for lines, severity in ((bad, "warning"), (good, "information")):
            if lines:
                more = f"\n(+{len(lines) - NEWS_SHOWN} more)" if len(lines) > NEWS_SHOWN else ""
                self.notify(escape("\n".join(lines[:NEWS_SHOWN]) + more), severity=severity, timeout=6)

    def action_recheck(self) -> None:
        if self.failure:
            self.notify("Watching has stopped; restart izwatch tui to watch again.", severity="error")
            return
        self.live.request_recheck()
        self.overview.set_status("re-checking every circuit…")

    # -- details ----------------------------------------------------------------------------

    def on_open_element(self, message: OpenElement) -> None:
        rows = self.overview.problem_list.rows
        neighbours = [r.ref for r in rows] if any(r.ref == message.row.ref for r in rows) else [message.row.ref]
        self.push_screen(DetailsScreen(message.row, self.snapshot, neighbours, self.clock))

    @work(thread=True, exclusive=True, group="timeline", exit_on_error=False)
    def load_timeline(self, ref: str) -> None:
        try:
            entries = timeline(self.records.timeline(ref), ref)
        except (HistoryError, OSError, sqlite3.Error) as exc:
            self.post_message(TimelineLoaded(ref, [], str(exc)))
            return
        self.post_message(TimelineLoaded(ref, entries))

    def on_timeline_loaded(self, message: TimelineLoaded) -> None:
        for screen in self.screen_stack:
            if isinstance(screen, DetailsScreen):
                screen.show_timeline(message.ref, message.entries, message.error)

    @work(thread=True, exclusive=True, group="remedy", exit_on_error=False)
    def find_remedy(self, ref: str, result) -> None:
        try:
            found = remedies.find(result)
        except Exception as exc:  # noqa: BLE001 - shown in place of the remedy, never a traceback
            self.post_message(RemedyFound(ref, f"not found: {type(exc).__name__}: {exc}"))
            return
        text = found["text"] if found else "none needed: nothing fails"
        self.post_message(RemedyFound(ref, text))

    def on_remedy_found(self, message: RemedyFound) -> None:
        for screen in self.screen_stack:
            if isinstance(screen, DetailsScreen):
                screen.show_remedy(message.ref, message.text)

    # -- acknowledgements -------------------------------------------------------------------

    def ask_acknowledgement(self, row: Row | None) -> None:
        if row is None:
            self.notify("Nothing under the cursor to acknowledge.", severity="warning", timeout=3)
            return
        row = self.snapshot.by_ref.get(row.ref, row)
        if not row.open_checks:
            self.notify(f"{row.ref} passes every check: nothing to acknowledge.", timeout=3)
            return

        def answered(answer: AckAnswer | None) -> None:
            if answer is not None:
                self.write_ack(row, answer.by, answer.note)

        self.push_screen(AckDialog(row), answered)

    @work(thread=True, group="ack", exit_on_error=False)
    def write_ack(self, row: Row, by: str, note: str) -> None:
        try:
            written = self.records.acknowledge(row, by, note)
        except (AckRefused, HistoryError, OSError, sqlite3.Error) as exc:
            self.post_message(AckFailed(row.ref, str(exc)))
            return
        self.post_message(AckDone(written))

    def on_ack_done(self, message: AckDone) -> None:
        written = message.written
        self.notify(escape(f"△ {written.ref} acknowledged ({', '.join(written.checks)}) as revision {written.revision} "
                           f"by {clean(written.author)}"), timeout=5)
        if self.screen is self.overview:
            self.overview.hold_position()
        self.live.request_refresh()

    def on_ack_failed(self, message: AckFailed) -> None:
        self.notify(escape(f"⚠ not acknowledged: {clean(message.text)}"), severity="error", timeout=8)

    # -- help -------------------------------------------------------------------------------

    def action_deadlines(self) -> None:
        from tui.components.deadlines_screen import DeadlinesScreen
        if not isinstance(self.screen, DeadlinesScreen):
            self.push_screen(DeadlinesScreen(self.snapshot, self.clock))

    def action_help(self) -> None:
        if not isinstance(self.screen, HelpScreen):
            self.push_screen(HelpScreen())
