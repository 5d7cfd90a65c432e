"""What the screens show, built from the estate state and the history (no Textual here).

A `Snapshot` is an immutable picture of the estate at one moment: one `Row` per circuit, board
and origin, in the order the problem list shows them (newly broken first, newest first), the
counts per state, the open input errors and the engine's results for the details. It is built
in the watcher's thread and handed to the UI whole, so the UI never reads state that the
watcher is changing.

"Newly broken": an element with a failing check whose latest newly-failing or worse event came
after the element's latest acknowledgement (or that was never acknowledged).
"""
from __future__ import annotations

from bisect import bisect_left
from collections.abc import Mapping
from dataclasses import dataclass, field
from itertools import takewhile
from operator import itemgetter

from tracker.checks.result import FAIL, PASS
from tracker.checks.readings import unmeasured
from tracker.checks.site import SiteResult
from tracker.history import History
from tracker.history.query import failing_since, latest_acks, refs_touched, revisions_by_id
from tracker.loading.errors import InputError, sort_problems
from tracker.output.terminal_text import clean
from tracker.tracking.state import EstateState
from tui.wording import ACKED, NEW, STATES, change_text

CIRCUIT, BOARD, ORIGIN = "circuit", "board", "origin"
MAX_CAUSE_CHANGES = 2


@dataclass(frozen=True, slots=True)
class Cause:
    """The revision that made an element's problem what it is now."""

    revision: int
    at: str
    author: str
    text: str              # 'shower power 7.5 → 8.5 kW', 'first record', ...
    kind: str              # 'first-record' | 'file-added' | 'change'
    note: str | None = None


@dataclass(frozen=True, slots=True)
class AckNote:
    revision: int
    at: str
    author: str
    note: str
    checks: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class Row:
    ref: str
    kind: str              # circuit | board | origin
    site_id: str
    site_name: str
    board_id: str          # '' for an origin
    circuit_id: str        # '' for a board or an origin
    name: str
    status: str            # the engine's: pass | fail | warn | not-assessed
    state: str             # tui.wording.STATES
    failing: tuple[str, ...]        # checks that fail
    open_checks: tuple[str, ...]    # checks that do not pass (what an acknowledgement covers)
    cause: Cause | None = None
    ack: AckNote | None = None
    order: int = 0         # place within its site, in wiring order
    haystack: str = field(default="", compare=False)

    @property
    def place(self) -> str:
        """Board and circuit as written on a board's chart: 'CU1/3', 'CU1', 'origin'."""
        if self.kind == CIRCUIT:
            return f"{self.board_id}/{self.circuit_id}"
        return self.board_id if self.kind == BOARD else "origin"


@dataclass(frozen=True)
class Snapshot:
    rows: tuple[Row, ...]
    by_ref: dict[str, Row]
    sites: dict[str, SiteResult]          # by site id, in site order
    errors: tuple[InputError, ...]
    counts: dict[str, int]
    circuits: int
    revisions: int
    head: int                             # id of the newest revision seen
    since: dict[tuple[str, str], dict]    # (ref, check) -> failing_since entry, for failing checks
    first_record: bool = False            # this start made the estate's first record
    files_in_force: frozenset = frozenset()   # site files whose (last good) content the results stand on
    warnings: tuple = ()                  # what `check` warns of in the files as they load (LoadWarning)

    def site_of(self, ref: str) -> SiteResult | None:
        return self.sites.get(ref.split("/")[0])


EMPTY = Snapshot((), {}, {}, (), {s: 0 for s in STATES}, 0, 0, 0, {})


def _base_rows(sr: SiteResult) -> list[tuple]:
    """(ref, kind, board, circuit, name, status, failing, open) in wiring order."""
    site = sr.site
    out = []
    if sr.supply_check is not None:
        c = sr.supply_check
        out.append((site.id, ORIGIN, "", "", "origin (supply)", c.status,
                    (c.id,) if c.status == FAIL else (), (c.id,) if c.status != PASS else ()))
    for bref, b in sr.boards.items():
        board = site.board(b.board_id)
        out.append((bref, BOARD, b.board_id, "", clean(board.name) if board else "", b.status,
                    (b.check.id,) if b.status == FAIL else (), (b.check.id,) if b.status != PASS else ()))
    for ref, r in sr.circuits.items():
        out.append((ref, CIRCUIT, r.circuit.board, r.circuit.id, clean(r.circuit.name), r.status,
                    tuple(c.id for c in r.checks if c.status == FAIL),
                    tuple(c.id for c in r.checks if c.status != PASS and not unmeasured(c))))
    return out


class _Piece:
    """One site's part of a snapshot, kept while its results and its history stay the same."""

    __slots__ = ("sr", "version", "by_state", "failing", "by_ref", "kept", "circuits", "count")

    def __init__(self, sr: SiteResult, version: int):
        self.sr, self.version = sr, version
        self.by_state: dict[str, list[Row]] = {}        # rows of each state, in wiring order
        self.failing: dict[str, list[tuple]] = {}       # NEW / ACKED: [(sort key, row)]
        self.by_ref: dict[str, Row] = {}
        self.kept: dict[tuple[str, str], dict] = {}     # failing_since entries of its failing checks
        self.circuits = 0
        self.count: dict[str, int] = {}


class _BySite(Mapping):
    """A read-only mapping made of each site's own dict (by_ref, failing since), found through the
    site id at the head of the key: a new snapshot shares the dicts of the sites that did not
    change instead of copying every entry of the estate."""

    __slots__ = ("_parts", "_len", "_site")

    def __init__(self, parts: dict[str, dict], length: int, site_of):
        self._parts, self._len, self._site = parts, length, site_of

    def __getitem__(self, key):
        try:
            part = self._parts.get(self._site(key))
        except (AttributeError, TypeError, IndexError):
            raise KeyError(key) from None
        if part is None:
            raise KeyError(key)
        return part[key]

    def __iter__(self):
        for part in self._parts.values():
            yield from part

    def __len__(self) -> int:
        return self._len

    def __repr__(self) -> str:
        return f"_BySite({len(self._parts)} sites, {self._len} entries)"


def _site_of_ref(ref: str) -> str:
    return ref.split("/", 1)[0]


def _site_of_key(key: tuple[str, str]) -> str:
    return key[0].split("/", 1)[0]


class _Merged:
    """Every site's rows merged in list order, patched site by site: the failing rows of all
    sites kept sorted by their key, the others in one list per state in site order, with each
    site's share of it, so that a changed site's slice is replaced where it lies."""

    def __init__(self, order: list[str], pieces: dict[str, _Piece]):
        self.order = order
        self.pieces = [pieces[sid] for sid in order]          # each site's piece, in site order
        self.position = {sid: k for k, sid in enumerate(order)}
        # the failing rows of each state: their sort keys and the rows, in one order
        self.failing: dict[str, tuple[list, list]] = {}
        for st in (NEW, ACKED):
            keyed = sorted((kr for sid in order for kr in pieces[sid].failing.get(st, ())), key=itemgetter(0))
            self.failing[st] = ([k for k, _ in keyed], [r for _, r in keyed])
        self.others = {st: [r for sid in order for r in pieces[sid].by_state.get(st, ())]
                       for st in STATES if st not in (NEW, ACKED)}
        self.share = {st: [len(pieces[sid].by_state.get(st, ())) for sid in order] for st in self.others}
        self.counts = {s: 0 for s in STATES}
        self.circuits = 0
        self.refs: dict[str, dict] = {}
        self.kept: dict[str, dict] = {}
        self.n_refs = self.n_kept = 0
        self.sites: dict[str, SiteResult] | None = None      # by site id, in site order
        self.in_force: frozenset = frozenset()
        for sid in order:
            self._add(pieces[sid])

    def _add(self, p: _Piece, sign: int = 1) -> None:
        for st, n in p.count.items():
            self.counts[st] += sign * n
        self.circuits += sign * p.circuits
        self.n_refs += sign * len(p.by_ref)
        self.n_kept += sign * len(p.kept)
        if sign > 0:
            sid = p.sr.site.id
            self.refs[sid], self.kept[sid] = p.by_ref, p.kept

    def patch(self, old: _Piece, new: _Piece) -> None:
        """Put `new` in the place of `old` (the same site)."""
        sid = new.sr.site.id
        k = self.position[sid]
        for st, (keys, rows) in self.failing.items():
            gone, come = old.failing.get(st, ()), new.failing.get(st, ())
            if not gone and not come:
                continue
            keys, rows = list(keys), list(rows)      # the last snapshot keeps its own lists
            for key, _row in gone:
                i = bisect_left(keys, key)
                del keys[i], rows[i]
            for key, row in come:
                i = bisect_left(keys, key)
                keys.insert(i, key)
                rows.insert(i, row)
            self.failing[st] = (keys, rows)
        for st, rows in self.others.items():
            share = self.share[st]
            came = new.by_state.get(st, [])
            if share[k] == 0 and not came:
                continue
            start = sum(share[:k])
            self.others[st] = rows[:start] + came + rows[start + share[k]:]
            share[k] = len(came)
        self.pieces[k] = new
        self._add(old, -1)
        self._add(new)

    def rows(self) -> tuple[Row, ...]:
        out: list[Row] = []
        for st in STATES:
            if st in self.failing:
                out.extend(self.failing[st][1])
            else:
                out.extend(self.others[st])
        return tuple(out)


class RowCache:
    """What is kept between snapshots, so that a change costs what it touches, not the estate:
    the history's answers (failing since, latest acknowledgements), folded forward revision by
    revision; each site's rows, rebuilt only when its results or its history change; and their
    merge, patched where a site's rows changed."""

    def __init__(self):
        self._pieces: dict[str, _Piece] = {}
        self._since: dict[tuple[str, str], dict] = {}
        self._acks: dict[str, dict] = {}
        self._seen = 0                                   # the newest revision folded in
        self._versions: dict[str, int] = {}              # site id -> how often its history moved
        self._merged: _Merged | None = None
        self._moved: set[str] = set()                    # sites whose history moved since the last snapshot
        self._raw_ids: list[str] | None = None           # the state's sites, in its order, at the last snapshot
        self._by_id_order: list[int] = []                # their places, in site id order

    def fold(self, history: History) -> None:
        head, _ = history.head()
        if head <= self._seen:
            return
        if self._seen:
            for ref in refs_touched(history, self._seen, head):
                site = ref.split("/", 1)[0]
                self._versions[site] = self._versions.get(site, 0) + 1
                self._moved.add(site)
        failing_since(history, self._since, self._seen, head)
        latest_acks(history, self._acks, self._seen, head)
        self._seen = head

    def keep_only(self, site_ids) -> None:
        keep = set(site_ids)
        for k in set(self._pieces) - keep:
            del self._pieces[k]


def _cause(ref: str, kind_: str, rev: dict) -> Cause:
    """What a revision changed, written from where the element stands: a circuit's own loads by
    their names ('shower power …'), anything else from its site ('WS1/4 added')."""
    if rev["first_of_file"]:
        kind = "first-record" if rev["source"] == "startup" else "file-added"
        text = "first record" if kind == "first-record" else f"{rev['file']} added"
    else:
        kind = "change"
        inside = [c for c in rev["changes"] if c["ref"] == ref or c["ref"].startswith(ref + "/")]
        chosen = inside or rev["changes"]
        within = ref if kind_ == CIRCUIT else ref.split("/")[0]
        parts = [change_text(c, within) for c in chosen[:MAX_CAUSE_CHANGES]]
        more = len(chosen) - MAX_CAUSE_CHANGES
        text = "; ".join(parts) + (f" (+{more} more)" if more > 0 else "")
        if not text:
            text = f"re-checked after a save of {rev['file']}" if rev["file"] else "re-checked"
    note = rev.get("note")
    return Cause(rev["id"], rev["at"], clean(rev["author"]), clean(text), kind, None if note is None else clean(note))


def _pieces_for(dirty: list[SiteResult], cache: RowCache, history: History) -> list[tuple[_Piece | None, _Piece]]:
    """Build the rows of the sites whose results or history changed: (the piece replaced, the new one)."""
    since, acks = cache._since, cache._acks
    work = []
    wanted: set[int] = set()
    for sr in dirty:
        piece = _Piece(sr, cache._versions.get(sr.site.id, 0))
        latest: dict[str, int] = {}
        base = _base_rows(sr)
        for ref, _kind, _b, _c, _n, _status, failing, _open in base:
            for check in failing:
                entry = since.get((ref, check))
                if entry is None:
                    continue
                piece.kept[(ref, check)] = entry
                rid = max(entry["revision"], entry.get("worse_revision", 0))
                if rid > latest.get(ref, 0):
                    latest[ref] = rid
        wanted.update(latest.values())
        work.append((piece, base, latest))
    revs = revisions_by_id(history, wanted)
    replaced = []
    for piece, base, latest in work:
        sr = piece.sr
        site_id, site_name = sr.site.id, clean(sr.site.name)
        for i, (ref, kind, board_id, circuit_id, name, status, failing, open_checks) in enumerate(base):
            ack = acks.get(ref)
            ack_note = (AckNote(ack["revision"], ack["at"], clean(ack["author"]), clean(ack["note"]), tuple(ack["checks"]))
                        if ack else None)
            cause = None
            if status == FAIL:
                rid = latest.get(ref)
                if rid is not None and rid in revs:
                    cause = _cause(ref, kind, revs[rid])
                # No recorded event for a failing check counts as newly broken: nobody has seen it.
                state_ = ACKED if ack_note is not None and rid is not None and rid < ack_note.revision else NEW
            else:
                state_ = status
            row = Row(ref, kind, site_id, site_name, board_id, circuit_id, name, status, state_,
                      failing, open_checks, cause, ack_note, i, f"{ref} {name} {site_name}".lower())
            if state_ in (NEW, ACKED):
                piece.failing.setdefault(state_, []).append(((-(cause.revision if cause else 0), site_id, i), row))
            else:
                piece.by_state.setdefault(state_, []).append(row)
            piece.by_ref[ref] = row
            piece.count[state_] = piece.count.get(state_, 0) + 1
            piece.circuits += kind == CIRCUIT
        replaced.append((cache._pieces.get(site_id), piece))
        cache._pieces[site_id] = piece
    return replaced


def build(state: EstateState, history: History, cache: RowCache | None = None,
          first_record: bool = False) -> Snapshot:
    """A snapshot of `state` with what the history says about each problem.

    Rows come newly broken first (newest cause first), then acknowledged, then by state, each
    state in site and wiring order. With a cache kept from the last snapshot only the sites
    whose results or history changed are rebuilt.
    """
    cache = cache or RowCache()
    cache.fold(history)
    raw = state.site_results()
    raw_ids = [sr.site.id for sr in raw]
    same_sites = raw_ids == cache._raw_ids
    if not same_sites:                                 # sites came, went or were renamed: sort again
        cache._by_id_order = sorted(range(len(raw)), key=raw_ids.__getitem__)
        cache._raw_ids = raw_ids
        cache.keep_only(raw_ids)
    results = [raw[i] for i in cache._by_id_order]
    pieces = cache._pieces
    merged = cache._merged
    moved, cache._moved = cache._moved, set()
    if merged is None or not same_sites:
        dirty = [sr for sr in results if (p := pieces.get(sr.site.id)) is None or p.sr is not sr
                 or p.version != cache._versions.get(sr.site.id, 0)]
        if dirty:
            _pieces_for(dirty, cache, history)
        merged = cache._merged = _Merged([sr.site.id for sr in results], pieces)
        replaced = []
    else:
        # the same sites in the same order: the merged list's pieces beside the results; a result
        # not the one its rows were built from, or a site whose history moved, is rebuilt and patched in
        dirty = [sr for sr, p in zip(results, merged.pieces) if p.sr is not sr or sr.site.id in moved]
        replaced = _pieces_for(dirty, cache, history) if dirty else []
        for old, new in replaced:
            merged.patch(old, new)
    rows = merged.rows()
    if merged.sites is None:
        merged.sites = {sr.site.id: sr for sr in results}
        merged.in_force = frozenset(f for sr in results for f in sr.site.files)
    elif replaced:
        merged.sites = dict(merged.sites)           # the last snapshot keeps its own
        moved = False
        for old, new in replaced:
            merged.sites[new.sr.site.id] = new.sr
            moved |= old.sr.site.files != new.sr.site.files
        if moved:
            merged.in_force = frozenset(f for sr in results for f in sr.site.files)
    by_ref = _BySite(dict(merged.refs), merged.n_refs, _site_of_ref)
    kept_since = _BySite(dict(merged.kept), merged.n_kept, _site_of_key)
    counts, n_circuits = dict(merged.counts), merged.circuits
    # By file; within a file in the loader's order (its own errors before what they cause).
    errors = tuple(e for rel in sorted(state.errors) for e in state.errors[rel])
    head, _ = history.head()
    warnings = tuple(sort_problems([warning for files in state.good.values() for f in files.values() for warning in f.warnings]))
    return Snapshot(rows, by_ref, merged.sites, errors, counts,
                    n_circuits, history.count(), head, kept_since, first_record, merged.in_force, warnings)


# -- the list's filters -------------------------------------------------------------------

SHOW_NEW, SHOW_FAILING, SHOW_ALL = "new", "failing", "all"


def visible(rows, which: str, needle: str = "", counts: dict[str, int] | None = None) -> list[Row]:
    """The rows a filter and a search leave, in list order. `rows` are a snapshot's, in its
    order: the failing ones (newly broken, then acknowledged) lead, so the failing filters read
    only the rows they keep and the one after; with the snapshot's `counts`, not even those."""
    needle = needle.strip().lower()
    if which == SHOW_NEW:
        out = list(rows[:counts[NEW]]) if counts is not None else list(takewhile(lambda r: r.state == NEW, rows))
    elif which == SHOW_FAILING:
        out = (list(rows[:counts[NEW] + counts[ACKED]]) if counts is not None
               else list(takewhile(lambda r: r.status == FAIL, rows)))
    else:
        out = list(rows)
    if needle:
        out = [r for r in out if needle in r.haystack]
    return out


def filter_counts(snapshot: Snapshot) -> dict[str, int]:
    c = snapshot.counts
    return {SHOW_NEW: c[NEW], SHOW_FAILING: c[NEW] + c[ACKED], SHOW_ALL: len(snapshot.rows)}

