"""Watching an estate: every saved change is re-checked and recorded.

Editors save in many ways (write in place, temp file + rename, delete and re-create, several
writes in a row), so events are only a hint, and a file's content is re-read and hashed: only a
real change of content goes on. A file closed after writing, or moved into place, is looked at at
once (the save is complete: the writer has let go of it). Any other touch (a write not yet closed,
a deletion, a file moved away) waits until the path has been quiet for the settle interval, as a
writer that keeps the file open gives no close. Content that does not load is read once more after
the settle interval before it is recorded as an input error, so a file caught half-written (a
second writer, or a write still going on at a close) is not called one. A created or moved
directory is scanned (a new site folder); a removed one re-checks every file known under it.
An attribute change (a file or folder made readable again) is looked at as a touch is.

A site file may be a link to a file elsewhere inside the estate (or lie in a linked site folder):
the kernel reports an edit under the target's path, so the watcher keeps a map from each target
to the site files that lead to it, and from each linked site folder's target to the site folder
(made at start, kept up as such files are looked at, and redone by the safety scan), and looks at
those site files too (a file made or removed in a linked folder's target among them).

Only the events that can mean a change are asked of the kernel: not opens and closes without a
write, or the watcher's own reading of every file at start would flood the kernel's queue.

The watcher also knows the date: at start, and whenever the local date has changed, the deadlines
the date made overdue are recorded (tracker/tracking/datepassed.py) and handed on like a change.

Events can still be lost: the queue overflows in a burst of saves. Watchdog then says so in its
log; the watcher listens for that and rescans every site file. Every minute a scan of file sizes
and times, in a thread of its own, catches anything else that slipped through.
"""
from __future__ import annotations

import datetime
import gc
import logging
import os
import sys
import threading
import time
from dataclasses import dataclass
from pathlib import Path

from watchdog.events import (DirAttribEvent, DirCreatedEvent, DirDeletedEvent, DirMovedEvent, FileAttribEvent,
                             FileClosedEvent, FileCreatedEvent, FileDeletedEvent, FileModifiedEvent, FileMovedEvent,
                             FileSystemEvent, FileSystemEventHandler)
from watchdog.observers import Observer

from tracker.history import History
from tracker.history.store import Recorded
from tracker.loading.discover import STATE_DIR, EstateError, site_folders, split_problems
from tracker.output.terminal_text import clean
from tracker.tracking import warm
from tracker.tracking.authors import Authors
from tracker.tracking.datepassed import DatePassed, record_date
from tracker.tracking.outcome import FileOutcome, to_revisions
from tracker.tracking.startup import start
from tracker.tracking.state import EstateState

DEBOUNCE_S = 0.15
SAFETY_SCAN_S = 60.0
# The events that can mean a site file changed (the kernel is asked for nothing else). An
# attribute change counts: a file or a site folder made readable again (chmod) has news to read.
EVENTS = [FileCreatedEvent, FileModifiedEvent, FileClosedEvent, FileDeletedEvent, FileMovedEvent, FileAttribEvent,
          DirCreatedEvent, DirDeletedEvent, DirMovedEvent, DirAttribEvent]


@dataclass
class Update:
    outcome: FileOutcome
    recorded: Recorded
    source: str


class _Handler(FileSystemEventHandler):
    def __init__(self, watcher: "Watcher"):
        self.watcher = watcher

    def on_any_event(self, event: FileSystemEvent) -> None:
        try:
            if event.event_type in ("opened", "closed_no_write"):
                return
            if event.is_directory and event.event_type == "modified":
                return   # a file in it changed: that file has its own event
            paths = [event.src_path]
            dest = getattr(event, "dest_path", "")
            if dest:
                paths.append(dest)
            # a file closed after writing, or moved into place, is complete: look at it now; so is
            # one whose attributes changed (made readable again: no write is going on)
            now = event.event_type in ("closed", "attrib")
            for i, p in enumerate(paths):
                self.watcher.touch(Path(p if isinstance(p, str) else p.decode()), event.is_directory,
                                   now or (i == 1 and event.event_type == "moved"))
        except Exception:   # noqa: BLE001 - never let the observer thread die: rescan instead
            self.watcher.request_rescan()


class _OverflowListener(logging.Handler):
    """Watchdog logs a warning when the kernel dropped events: rescan then."""

    def __init__(self, watcher: "Watcher"):
        super().__init__(logging.WARNING)
        self.watcher = watcher

    def emit(self, record: logging.LogRecord) -> None:
        if "overflow" in record.getMessage().lower() and not self.watcher._stop.is_set():
            self.watcher.request_rescan()


class Watcher:
    """Keeps an EstateState and the history in step with the files of an estate."""

    def __init__(self, root: Path, history: History, authors: Authors | None = None,
                 debounce_s: float = DEBOUNCE_S, today=None):
        self.root = Path(root)
        self.today = today or datetime.date.today   # the local date (tests give a fake one)
        self._day: datetime.date | None = None       # the last day whose deadlines were recorded
        self.abs_root = self.root.resolve()
        self.history = history
        self.authors = authors or Authors(self.root)
        self.debounce_s = debounce_s
        self.state: EstateState | None = None
        self._pending: dict[str, float] = {}  # path -> when it is due (monotonic seconds)
        self._dirs: set[str] = set()          # folders created, moved or removed: expanded by the main thread
        self._rescan = False
        self._nesting = False                 # folders came or went: look for site folders nested too deep
        self._scanner: threading.Thread | None = None
        self._cond = threading.Condition()
        self._stop = threading.Event()
        self._observer = None
        self._listener = _OverflowListener(self)
        # target rel -> site files (rels) that are links to it or lie in a linked folder; replaced
        # whole (never changed in place) so the observer thread reads it without the lock
        self._linked: dict[str, frozenset[str]] = {}
        self._linked_folders: dict[str, str] = {}   # target folder rel -> the site folder linked to it

    # -- start ----------------------------------------------------------------------------

    def start(self, progress=None) -> list[Update]:
        """Reconcile with the history (recording offline changes), then start watching.

        Watching starts before the reconciliation reads the files, so nothing saved meanwhile is
        missed (a file read twice is harmless: unchanged content is ignored).
        """
        for name in ("watchdog.observers.inotify_c", "watchdog.observers.inotify"):
            logging.getLogger(name).addHandler(self._listener)
        self._observer = Observer()
        self._observer.schedule(_Handler(self), str(self.abs_root), recursive=True, event_filter=EVENTS)
        self._observer.daemon = True
        self._observer.start()
        # The estate's state lives until the watcher stops: build it with the cyclic collector
        # off, then freeze it, so later collections (after each edit) never scan it again. On a
        # large estate a full collection over it would take seconds and stall every edit.
        gc.disable()
        try:
            briefs = warm.load(self._warm_path)
            self.state, done = start(self.root, self.history, self.authors, progress=progress, today=self.today,
                                     briefs=briefs)
            first = self._stat_all()
        finally:
            gc.freeze()
            gc.enable()
        self._save_briefs(briefs)
        self._scanner = threading.Thread(target=self._safety_scans, args=(first,), name="izwatch-scan", daemon=True)
        self._scanner.start()
        return [Update(o, r, "startup") for o, r in done]

    @property
    def _warm_path(self):
        return warm.record_path(getattr(self.history, "path", None))

    def _save_briefs(self, before: dict | None = None) -> None:
        """Keep each clean folder's brief for the next start (tracker.tracking.warm)."""
        if self.state is None:
            return
        now = self.state.briefs()
        if now != before:
            warm.save(self._warm_path, now)

    def _safety_scans(self, previous: dict) -> None:
        """Every minute: files whose size, time or inode changed since the last scan, or that came
        or went, are looked at again (a change inotify reported is simply found unchanged)."""
        while not self._stop.wait(SAFETY_SCAN_S):
            try:
                now = self._stat_all()
            except Exception:  # noqa: BLE001 - a scan that fails is tried again next minute
                continue
            changed = [rel for rel in set(now) | set(previous) if now.get(rel) != previous.get(rel)]
            previous = now
            if changed:
                t = time.monotonic() + self.debounce_s
                with self._cond:
                    for rel in changed:
                        self._pending.setdefault(rel, t)
                    self._cond.notify_all()

    def stop(self) -> None:
        self._stop.set()
        with self._cond:
            self._cond.notify_all()
        if self._observer is not None:
            self._observer.stop()
            self._observer.join(timeout=5)
        if self._scanner is not None:
            self._scanner.join(timeout=5)
        try:
            self._save_briefs()
        except Exception:  # noqa: BLE001 - the briefs only make the next start faster
            pass
        # detached last: watchdog's own notes while stopping are not an overflow, nor for stderr
        for name in ("watchdog.observers.inotify_c", "watchdog.observers.inotify"):
            logging.getLogger(name).removeHandler(self._listener)

    # -- events ---------------------------------------------------------------------------

    def _rel(self, path: Path) -> str | None:
        try:
            rel = path.relative_to(self.abs_root).as_posix()
        except ValueError:
            return None
        if rel == "." or rel.split("/")[0] == STATE_DIR:
            return None
        return rel

    def touch(self, path: Path, is_directory: bool, complete: bool = False) -> None:
        """Called from the observer thread: note the path, nothing more. `complete`: the file was
        closed after writing or moved into place, so it is due at once; otherwise it is due when
        it has been quiet for the settle interval."""
        rel = self._rel(path)
        if rel is None:
            return
        through = () if is_directory else self._linked.get(rel, ())   # site files that are links to it
        if not is_directory and not through:
            # a file made or removed in the target of a linked site folder: the site's own file
            parent, _, name = rel.rpartition("/")
            site = self._linked_folders.get(parent)
            if site is not None and name.endswith(".yaml"):
                through = (f"{site}/{name}",)
        if not (is_directory or rel.endswith(".yaml") or through):
            return
        due = time.monotonic() + (0.0 if complete else self.debounce_s)
        with self._cond:
            if is_directory:
                self._dirs.add(rel)
            else:
                if rel.endswith(".yaml"):
                    self._pending[rel] = due
                for link in through:
                    self._pending[link] = due
            self._cond.notify_all()

    def request_rescan(self) -> None:
        with self._cond:
            self._rescan = True
            self._cond.notify_all()

    def _stat_all(self) -> dict[str, tuple]:
        """Size, times and inode of every site file (a link's target's), and the link map redone."""
        out: dict[str, tuple] = {}
        found: dict[str, set[str]] = {}
        folders: dict = {}
        for rel, path in self.state.disk_files().items():
            try:
                st = os.stat(path)
                target = self._target_of(path, folders)
            except OSError:
                continue
            # the change time moves on any write and any change of mode: a file made readable again
            out[rel] = (st.st_size, st.st_mtime_ns, st.st_ctime_ns, st.st_ino)
            if target is not None and target != rel:
                found.setdefault(target, set()).add(rel)
        self._linked = {t: frozenset(rels) for t, rels in found.items()}
        linked_folders = {}
        for folder, linked in folders.items():
            target = self._rel(Path(os.path.realpath(folder))) if linked else None
            if target is not None:
                linked_folders[target] = Path(os.path.relpath(folder, self.root)).as_posix()
        self._linked_folders = linked_folders
        return out

    def _target_of(self, path: Path, linked_folders: dict) -> str | None:
        """The rel of the file a site file leads to when it is a link or lies in a linked folder
        (None when it is neither, or leads out of the estate)."""
        folder = path.parent
        linked = linked_folders.get(folder)
        if linked is None:
            linked = linked_folders[folder] = folder.is_symlink()
        if not (linked or path.is_symlink()):
            return None
        return self._rel(Path(os.path.realpath(path)))

    def _relink(self, rel: str) -> None:
        """Keep the link map right for one site file just looked at (made, removed or re-pointed)."""
        try:
            target = self._target_of(self.root / rel, {})
        except OSError:
            target = None
        old = {t for t, rels in self._linked.items() if rel in rels}
        if old == ({target} if target and target != rel else set()):
            return
        new = {t: rels - {rel} for t, rels in self._linked.items()}
        if target and target != rel:
            new[target] = new.get(target, frozenset()) | {rel}
        self._linked = {t: rels for t, rels in new.items() if rels}

    def _expand(self) -> None:
        """Main thread, lock held: turn folder events and a rescan request into files to look at
        (their content is compared, so looking at an unchanged file costs little)."""
        now = time.monotonic()
        if self._rescan:
            self._rescan = False
            for rel in set(self.state.disk_files()) | set(self.state.hashes):
                self._pending.setdefault(rel, now)
        for rel in self._dirs:
            d = self.root / rel
            found = [p.relative_to(self.root).as_posix() for p in d.glob("*.yaml")] if d.is_dir() else []
            if rel.endswith(".yaml"):
                found.append(rel)          # a folder under a site file's name: an error naming it
            for r in found + [r for r in self.state.hashes if r.startswith(rel + "/")]:
                self._pending[r] = now + self.debounce_s
        if self._dirs:
            self._nesting = True
        self._dirs.clear()

    def _due(self) -> tuple[list[str], float | None]:
        now = time.monotonic()
        due, wait = [], None
        for rel, t in self._pending.items():
            left = t - now
            if left <= 0:
                due.append(rel)
            else:
                wait = left if wait is None else min(wait, left)
        for rel in due:
            del self._pending[rel]
        return sorted(due), wait

    def wait_and_process(self, timeout: float | None = None) -> list[Update]:
        """Block until some path has settled (or `timeout`), then process what is due."""
        deadline = None if timeout is None else time.monotonic() + timeout
        with self._cond:
            while not self._stop.is_set():
                self._expand()
                due, wait = self._due()
                if due:
                    break
                remaining = None if deadline is None else deadline - time.monotonic()
                if remaining is not None and remaining <= 0:
                    return []
                self._cond.wait(min(x for x in (wait, remaining, 1.0) if x is not None))
            else:
                return []
        return self.process(due)

    def process(self, rels: list[str]) -> list[Update]:
        updates = []
        if self._nesting or any(self.state.folder_of(rel) is None for rel in rels):
            self._nesting = False
            self.check_nesting()
        for rel in rels:
            self._relink(rel)
            try:
                outcome = self.state.apply_disk(rel, self._settle)
            except Exception as exc:  # noqa: BLE001 - one file the watcher cannot take never stops it
                if os.environ.get("IZWATCH_DEBUG"):
                    raise
                self.on_problem(f"izwatch: {rel} could not be taken in ({type(exc).__name__}: {exc}); its last good "
                                "state stays in force and the watcher goes on (please report it)")
                continue
            if outcome is None:
                continue
            recs = self.history.record_many(to_revisions(outcome, "watch", self.authors))
            for o, rec in zip([*outcome.along, outcome], recs):
                updates.append(Update(o, rec, rec.source if rec.duplicate else "watch"))
        return updates

    def date_passed(self) -> list[DatePassed]:
        """At the first call, and whenever the local date has changed since the last: record the
        deadlines overdue today that the history does not hold as overdue (a revision of the date
        per site, never twice). Cheap when the date is unchanged: it only reads the clock."""
        day = self.today()
        if day == self._day or self.state is None:
            return []
        sites, overdue = [], {}
        for s in list(self.state.sites.values()):
            if s.brief is not None:      # a site not read: its brief knows its deadlines, unless too old
                items = s.brief.overdue_on(day)
                if items is not None:
                    overdue[s.brief.site_id] = items
                    continue
            if s.site is not None:
                sites.append((s.site, s.result.notification if s.result is not None else None))
        passed = record_date(sites, self.history, day, overdue)
        self._day = day      # after the record: a write that failed is tried again
        return passed

    def check_nesting(self) -> None:
        """Site folders nested deeper than site folders are read, met while watching: each is an
        input error of the state (the UI lists it) and said once, as at the start; one moved
        away or hidden is taken off."""
        try:
            _, _, problems = site_folders(self.root)
        except EstateError:
            return
        errors = split_problems(problems)[0]
        for err in errors:
            if self.state.errors.get(err.file) != [err]:
                self.state.errors[err.file] = [err]
                self.on_problem(f"izwatch: {clean(err)}")
        now = {err.file for err in errors}
        for rel in [r for r in self.state.errors if self.state.folder_of(r) is None and r not in now]:
            del self.state.errors[rel]

    def on_problem(self, text: str) -> None:
        """Say something went wrong with one file (the terminal UI shows it in its own way)."""
        print(text, file=sys.stderr, flush=True)

    def _settle(self) -> None:
        """Wait the settle interval before a file that did not load is read once more."""
        self._stop.wait(self.debounce_s)

    def run(self, on_update, stop: threading.Event | None = None, on_date=None) -> None:
        """Process changes until stopped, handing each Update to `on_update`; and, where `on_date`
        is given, the deadlines a change of date made overdue (each DatePassed) to it."""
        stop = stop or self._stop
        while not stop.is_set() and not self._stop.is_set():
            if on_date is not None:
                for d in self.date_passed():
                    on_date(d)
            for u in self.wait_and_process(timeout=0.5):
                on_update(u)

    def pending(self) -> int:
        with self._cond:
            return len(self._pending)
