"""Bringing the state and the history together at start.

First use: every file is recorded as found (source `startup`), with its elements as added and
the failing checks as newly failing. Later starts: a site whose files all match the history is
taken from disk as it is (the common case, and as fast as a plain check); a site with files
changed, added or removed while nothing watched is first set to its recorded state and then
brought up to date file by file, each change recorded like any other.
"""
from __future__ import annotations

from pathlib import Path

from tracker.history import History, NewRevision
from tracker.loading.estate import sha256_hex
from tracker.tracking.authors import Authors
from tracker.tracking.diff import ADDED, Change, elements
from tracker.tracking.state import EstateState, FileOutcome
from tracker.tracking.transitions import INPUT_ERROR, compare


def to_revision(outcome: FileOutcome, source: str, author: str, note: str | None = None) -> NewRevision:
    return NewRevision(
        source=source, author=author, file=outcome.file, site=outcome.site_id, content=outcome.content,
        content_hash=outcome.content_hash, valid=outcome.valid, note=note,
        changes=[c.as_row() for c in outcome.changes], results=outcome.results, events=outcome.events,
    )


def _first_record(state: EstateState, contents: dict[str, bytes]) -> list[FileOutcome]:
    outcomes = []
    for rel in sorted(contents):
        folder = state.folder_of(rel)
        if folder is None:
            continue
        ss = state.sites.get(folder)
        raw = contents[rel]
        errors = state.errors.get(rel, [])
        site = ss.site if ss is not None else None
        out = FileOutcome(rel, folder, site.id if site else state.folder_name(folder), raw, sha256_hex(raw),
                          not errors, list(errors), first_record=True)
        if errors:
            out.events = [{"ref": out.site_id, "check": None, "transition": INPUT_ERROR,
                           "detail": "; ".join(str(e) for e in errors[:5])}]
        elif site is not None:
            out.changes = [Change(ref, ADDED) for ref in elements(site, rel)]
            if rel == site.files[0]:
                out.events, out.results = compare(None, ss.result)
                state._explain_events(out.events, ss.result)
        outcomes.append(out)
    return outcomes


def start(root: Path, history: History, authors: Authors, folders: set[str] | None = None,
          contents: dict[str, bytes] | None = None) -> tuple[EstateState, list[tuple]]:
    """(state, [(outcome, recorded)]) with every difference between disk and history recorded.

    `folders` limits the work to some site folders (a `replace` or `ack` needs only its site).
    """
    state = EstateState(root)
    if contents is None:
        contents = {rel: p.read_bytes() for rel, p in state.disk_files().items()
                    if folders is None or state.folder_of(rel) in folders}
    recorded = history.latest_by_file()
    if folders is not None:
        recorded = {f: v for f, v in recorded.items() if state.folder_of(f) in folders}
    if not recorded:
        state.seed(contents)
        outcomes = _first_record(state, contents)
        if len(outcomes) > 20:
            authors.preload()
        revs = [to_revision(o, "startup", authors(o.file), "first record of this file") for o in outcomes]
        return state, list(zip(outcomes, history.record_many(revs))) if revs else []

    disk_hash = {rel: sha256_hex(raw) for rel, raw in contents.items()}
    by_folder: dict[str, set[str]] = {}
    for rel in set(disk_hash) | set(recorded):
        folder = state.folder_of(rel)
        if folder is not None:
            by_folder.setdefault(folder, set()).add(rel)
    seed: dict[str, bytes] = {}
    pending: list[tuple[str, bytes | None]] = []
    for folder, rels in by_folder.items():
        same = all(rel in recorded and rel in disk_hash and recorded[rel][1] == disk_hash[rel] for rel in rels)
        if same:
            seed.update({rel: contents[rel] for rel in rels})
            continue
        for rel in sorted(rels):
            if rel in recorded:
                old = history.latest_good_content(rel)
                if old is not None:
                    seed[rel] = old
            if rel not in recorded or recorded[rel][1] != disk_hash.get(rel):
                pending.append((rel, contents.get(rel)))
    state.seed(seed, last_good=history.latest_good_content)
    # The seeded hash of a file is its last good content; the history's latest may be a bad one.
    for rel, (_, digest, _) in recorded.items():
        if digest is not None and rel in state.hashes and rel not in dict(pending):
            state.hashes[rel] = digest
    done = []
    for rel, raw in pending:
        outcome = state.apply_bytes(rel, raw)
        if outcome is None:
            continue
        rec = history.record(to_revision(outcome, "startup", authors(rel), "changed while nothing was watching"))
        done.append((outcome, rec))
    return state, done
