"""Bringing the state and the history together at start.

First use: every file is recorded as found (source `startup`), with its elements as added, the
failing checks as newly failing and the deadlines overdue that day as newly overdue. Later starts:
a site whose files all match the history is taken from disk as it is (the common case, and as fast as a plain check); a site with files
changed, added or removed while nothing watched is first set to its recorded state and then
brought up to date file by file, each change recorded like any other.
"""
from __future__ import annotations

import os
from pathlib import Path

from tracker.history import History
from tracker.loading.discover import estate_problems, read_regular
from tracker.loading.estate import read_content, sha256_hex
from tracker.tracking.authors import Authors
from tracker.tracking.diff import ADDED, Change, elements
from tracker.events import input_error_event
from tracker.inspection.events import deadline_events
from tracker.tracking.outcome import FileOutcome, to_revision, to_revisions
from tracker.parallel import available_cores
from tracker.tracking.state import EstateState, seed_folder, seed_in_parallel
from tracker.tracking.warm import SiteBrief
from tracker.tracking.transitions import compare


def _first_record(state: EstateState, contents: dict[str, bytes]):
    """The first record of every file, one outcome at a time."""
    for rel in sorted(contents):
        folder = state.folder_of(rel)
        if folder is None:
            continue
        site_state = state.sites.get(folder)
        raw = contents[rel]
        errors = state.errors.get(rel, [])
        site = site_state.site if site_state is not None else None
        out = FileOutcome(rel, folder, site.id if site else state.folder_name(folder), raw, sha256_hex(raw),
                          not errors, list(errors), first_record=True)
        if errors:
            out.events = [input_error_event(out.site_id, "; ".join(str(e) for e in errors[:5]))]
        elif site is not None:
            out.changes = [Change(ref, ADDED) for ref in elements(site, rel)]
            if rel == site.files[0]:
                out.events, out.results = compare(None, site_state.result)
                state.explain_events(out.events, site_state.result)
                out.events += deadline_events(None, site, state.today(),      # overdue as found
                                              new_origin=site_state.result.notification)
        yield out


def start(root: Path, history: History, authors: Authors, folders: set[str] | None = None,
          jobs: int | None = None, progress=None, today=None,
          briefs: dict[str, SiteBrief] | None = None) -> tuple[EstateState, list[tuple]]:
    """(state, [(outcome, recorded)]) with every difference between disk and history recorded.

    `folders` limits the work to some site folders (a `replace` or `ack` needs only its site);
    `jobs` worker processes seed the folders (default: one per core; 1: in this process);
    `progress` (a tracker.progress.Progress, or None) is advanced once per site folder;
    `today` (a function giving a date; default the local date) is the day deadlines are judged on;
    `briefs` (tracker.tracking.warm.load): a folder whose files are all as its brief and the
    history's latest revisions say is taken from its brief, unread until first needed.
    """
    state = EstateState(root)
    if today is not None:
        state.today = today

    def recorded_content(rel: str, digest: str) -> bytes | None:
        raw = _read(state.root / rel)
        return raw if raw is not None and sha256_hex(raw) == digest else history.blob(digest)

    state.recorded_content = recorded_content
    recorded = history.latest_by_file()
    if folders is not None:
        recorded = {f: v for f, v in recorded.items() if state.folder_of(f) in folders}
    # What leaves a part of the estate unread (a name that holds a FIFO, a folder or a dangling
    # link; a file or site folder that cannot be read; a site folder nested too deep): never
    # opened, never taken for a deletion. Its last good state stays in force, as when the watcher
    # meets it live, and the input error is recorded (once) and shown.
    problems = [p for p in estate_problems(root) if folders is None or state.folder_of(p.file) in folders]
    odd = {p.file for p in problems if state.folder_of(p.file) is not None}
    odd |= {rel for rel in recorded if _unlistable(root, state.folder_of(rel))}
    disk = {rel: p for rel, p in state.disk_files().items()
            if (folders is None or state.folder_of(rel) in folders) and rel not in odd}
    jobs = jobs if jobs else available_cores()
    if not recorded:
        done = _record_first(state, disk, history, authors, jobs, progress)
    else:
        done = _catch_up(state, disk, recorded, history, authors, jobs, progress, odd, briefs or {})
    for rel in sorted(odd):
        latest = recorded.get(rel)
        if latest is not None and latest[1] is None and not latest[2]:
            state.hashes.pop(rel, None)    # said already; whatever comes back under the name is news
            continue
        outcome = state.apply_disk(rel)
        if outcome is not None:
            recs = history.record_many(to_revisions(outcome, "startup", authors, "changed while nothing was watching"))
            done += list(zip([*outcome.along, outcome], recs))
    for problem in problems:
        if problem not in state.errors.get(problem.file, []):
            state.errors.setdefault(problem.file, []).append(problem)
    return state, done


def _unlistable(root: Path, folder: str | None) -> bool:
    """Whether a site folder is there but its files cannot be listed (mode 000)."""
    if folder is None:
        return False
    try:
        os.scandir(root / folder if folder else root).close()
    except FileNotFoundError:
        return False
    except OSError:
        return True
    return False


def _read(path: Path) -> bytes | None:
    try:
        return read_regular(path)
    except OSError:        # gone or made unreadable since it was listed: its next event says so
        return None


def _by_folder(state: EstateState, rels) -> dict[str, list[str]]:
    out: dict[str, list[str]] = {}
    for rel in rels:
        out.setdefault(state.folder_of(rel), []).append(rel)
    return out


def _record_first(state: EstateState, disk: dict[str, Path], history: History, authors: Authors, jobs: int,
                  progress) -> list[tuple]:
    """A history with nothing in it: every file on disk recorded as found."""
    contents = {rel: raw for rel, raw in ((rel, _read(p)) for rel, p in disk.items()) if raw is not None}
    by_folder = _by_folder(state, contents)
    if progress is not None:
        progress.total = len(by_folder)
    for seed in seed_in_parallel(state, by_folder, jobs):
        state.adopt(seed)
        if progress is not None:
            progress.advance()
    if len(contents) > 20:
        authors.preload()
    outcomes: list[FileOutcome] = []

    def revisions():
        # One revision at a time into one transaction: on a large estate the whole first
        # record (every element added, every circuit's results) would not be held at once.
        for outcome in _first_record(state, contents):
            revision = to_revision(outcome, "startup", authors(outcome.file, outcome.content),
                                   "first record of this file")
            outcome.content = None
            if outcome.valid:   # what was written is not needed again: nothing to report yet
                outcome.changes, outcome.results, outcome.events = [], [], []
            outcomes.append(outcome)
            yield revision
    recorded = history.record_many(revisions())
    return list(zip(outcomes, recorded))


def _as_briefed(folder: str, rels: set[str], disk: dict[str, Path], recorded: dict,
                brief: SiteBrief | None) -> bool:
    """Whether every file of the folder, on disk and in the history, has the content its brief
    names, each file's latest revision loaded, and no file came or went."""
    if brief is None:
        return False
    files = brief.files()
    if set(files) != rels:
        return False
    for rel, digest in files.items():
        rec = recorded.get(rel)
        if rec is None or rec[1] != digest or not rec[2] or rel not in disk:
            return False
        raw = _read(disk[rel])
        if raw is None or sha256_hex(raw) != digest:
            return False
    return True


def _catch_up(state: EstateState, disk: dict[str, Path], recorded: dict, history: History, authors: Authors,
              jobs: int, progress, odd: set[str] = frozenset(),
              briefs: dict[str, SiteBrief] | None = None) -> list[tuple]:
    """A history with revisions: every folder seeded from disk (or taken from its brief where
    nothing changed); those that differ from the history are set to their recorded state and
    brought up to date file by file. A file of `odd` (its name holds no regular file, or it
    cannot be read) stands at its last good content: it is neither a change nor a deletion (its
    input error is recorded after)."""
    briefs = briefs or {}
    stand_in = {rel: raw for rel in sorted(odd) if rel in recorded
                and (raw := history.latest_good_content(rel)) is not None}
    on_disk = _by_folder(state, disk)
    known: dict[str, set[str]] = {}
    for rel in recorded:
        folder = state.folder_of(rel)
        if folder is not None:
            known.setdefault(folder, set()).add(rel)
    redo: list[str] = []
    if progress is not None:
        progress.total = len(on_disk)
    briefed = {f for f, rels in on_disk.items()
               if _as_briefed(f, set(rels) | known.get(f, set()), disk, recorded, briefs.get(f))}
    seeded = seed_in_parallel(state, {f: rels for f, rels in on_disk.items() if f not in briefed}, jobs)

    def seeds():
        # every folder in order (a site id two folders claim goes to the first, as before)
        for folder in sorted(on_disk):
            if folder not in briefed:
                yield next(seeded)
            elif state.adopt_brief(folder, briefs[folder]):
                if progress is not None:
                    progress.advance()
            else:   # its site id is taken: read as any other folder (which reports it)
                yield seed_folder(folder, state.folder_name(folder),
                                  {rel: raw for rel in on_disk[folder] if (raw := _read(disk[rel])) is not None})

    # Seed every folder from disk (in worker processes for a large estate); a folder whose files
    # all match the history is taken as it is — the common case, as fast as a plain check.
    for seed in seeds():
        rels = set(on_disk[seed.folder]) | known.get(seed.folder, set())
        # (a file whose latest revision did not load, and that loads now, is a change to record:
        # the state it is part of was never recorded)
        same = all(rel in recorded and recorded[rel][1] == seed.hashes.get(rel)
                   and (recorded[rel][2] or rel in seed.errors) for rel in rels)
        if same and not seed.errors:
            state.adopt(seed)
        else:
            redo.append(seed.folder)
        if progress is not None:
            progress.advance()
    redo += [f for f in known if f not in on_disk]          # folders removed while nothing watched
    pending: list[tuple[str, bytes | None, dict]] = []
    for folder in redo:
        rels = set(on_disk.get(folder, ())) | known.get(folder, set())
        current = {rel: raw for rel in on_disk.get(folder, ()) if (raw := _read(disk[rel])) is not None}
        current |= {rel: raw for rel, raw in stand_in.items() if state.folder_of(rel) == folder}
        rels -= odd - set(stand_in)
        pending += [(rel, raw, current) for rel, raw in _set_to_recorded(state, rels, current, recorded, history, odd)]
    done = []
    for rel, raw, current in pending:
        # the folder's other files as they are now: a change made across files is one change
        outcome = state.apply_bytes(rel, raw, alongside={f: b for f, b in current.items() if f != rel})
        if outcome is None:
            continue
        recs = history.record_many(to_revisions(outcome, "startup", authors, "changed while nothing was watching"))
        done += list(zip([*outcome.along, outcome], recs))
    return done


def _set_to_recorded(state: EstateState, rels: set[str], current: dict[str, bytes], recorded: dict,
                     history: History, odd: set[str] = frozenset()) -> list[tuple[str, bytes | None]]:
    """Seed one folder as the history last saw it; the files to apply since then, with their
    content now (None: removed)."""
    def loads_now(rel: str) -> bool:
        return rel in current and not read_content(current[rel], rel).errors

    # a file is to be applied when its content differs from its latest revision, or when that
    # revision did not load and the file does now (with the others as they are)
    changed = [rel for rel in sorted(rels - odd)
               if rel not in recorded or recorded[rel][1] != (sha256_hex(current[rel]) if rel in current else None)
               or (not recorded[rel][2] and loads_now(rel))]
    if not changed:   # unchanged, but a file does not load: keep its last good state in force
        state.seed(current, last_good=history.latest_good_content)
        return []
    old = {rel: history.latest_good_content(rel) for rel in rels if rel in recorded}
    state.seed({rel: raw for rel, raw in old.items() if raw is not None}, last_good=history.latest_good_content)
    for rel in rels:
        if rel in recorded and recorded[rel][1] is not None and rel not in changed:
            state.hashes[rel] = recorded[rel][1]   # the history's latest, even a bad one
    return [(rel, current.get(rel)) for rel in changed]
