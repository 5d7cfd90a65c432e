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

from dataclasses import dataclass, field

from tracker.checks.result import FAIL, PASS
from tracker.checks.site import SiteResult
from tracker.history import History
from tracker.history.query import failing_since, latest_acks, revisions_by_id
from tracker.loading.errors import InputError
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

    def matches(self, needle: str) -> bool:
        return needle in self.haystack


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
        out.append((bref, BOARD, b.board_id, "", board.name if board else "", b.status,
                    (b.check.id,) if b.status == FAIL else (), (b.check.id,) if b.status != PASS else ()))
    for ref, r in sr.circuits.items():
        out.append((ref, CIRCUIT, r.circuit.board, r.circuit.id, r.circuit.name, r.status,
                    tuple(c.id for c in r.checks if c.status == FAIL),
                    tuple(c.id for c in r.checks if c.status != PASS)))
    return out


class RowCache:
    """Rows kept between snapshots: a site's rows are rebuilt only when its results change, and
    a row only when what the history says about it (its latest event, its acknowledgement) does."""

    def __init__(self):
        self._by_site: dict[str, tuple[int, list[tuple]]] = {}
        self._rows: dict[str, tuple[int, dict[str, tuple[tuple, Row]]]] = {}

    def base(self, sr: SiteResult) -> list[tuple]:
        key = sr.site.id
        hit = self._by_site.get(key)
        if hit is not None and hit[0] == id(sr):
            return hit[1]
        rows = _base_rows(sr)
        self._by_site[key] = (id(sr), rows)
        return rows

    def rows_of(self, sr: SiteResult) -> dict[str, tuple[tuple, Row]]:
        """ref -> (history key, Row) built for these results (filled in by `build`)."""
        key = sr.site.id
        hit = self._rows.get(key)
        if hit is None or hit[0] != id(sr):
            hit = (id(sr), {})
            self._rows[key] = hit
        return hit[1]

    def keep_only(self, site_ids) -> None:
        keep = set(site_ids)
        for store in (self._by_site, self._rows):
            for k in set(store) - keep:
                del store[k]


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
    return Cause(rev["id"], rev["at"], rev["author"], text, kind, rev.get("note"))


def build(state: EstateState, history: History, cache: RowCache | None = None,
          first_record: bool = False) -> Snapshot:
    """A snapshot of `state` with what the history says about each problem."""
    cache = cache or RowCache()
    results = sorted(state.site_results(), key=lambda sr: sr.site.id)
    cache.keep_only(sr.site.id for sr in results)
    since = failing_since(history)
    acks = latest_acks(history)
    rows_base = []
    for sr in results:
        for i, b in enumerate(cache.base(sr)):
            rows_base.append((sr, b, i))

    # Which revision made each failing element's problem what it is: its latest newly-failing
    # or worse event among the checks failing now.
    latest: dict[str, int] = {}
    kept_since: dict[tuple[str, str], dict] = {}
    for sr, (ref, _kind, _b, _c, _n, _status, failing, _open), _i in rows_base:
        for check in failing:
            entry = since.get((ref, check))
            if entry is None:
                continue
            kept_since[(ref, check)] = entry
            rid = max(entry["revision"], entry.get("worse_revision", 0))
            if rid > latest.get(ref, 0):
                latest[ref] = rid
    revs = revisions_by_id(history, set(latest.values()))

    rows = []
    for sr, (ref, kind, board_id, circuit_id, name, status, failing, open_checks), i in rows_base:
        ack = acks.get(ref)
        rid = latest.get(ref) if status == FAIL else None
        key = (ack["revision"] if ack else 0, rid)
        built = cache.rows_of(sr)
        hit = built.get(ref)
        if hit is not None and hit[0] == key:
            rows.append(hit[1])
            continue
        ack_note = (AckNote(ack["revision"], ack["at"], ack["author"], ack["note"] or "", tuple(ack["checks"]))
                    if ack else None)
        cause = None
        if status == FAIL:
            if rid is not None and rid in revs:
                cause = _cause(ref, kind, revs[rid])
            # No recorded event for a failing check counts as newly broken: nobody has seen it.
            state_ = ACKED if ack_note is not None and rid is not None and rid < ack_note.revision else NEW
        else:
            state_ = status
        site_name = sr.site.name
        row = Row(ref, kind, sr.site.id, site_name, board_id, circuit_id, name, status, state_,
                  failing, open_checks, cause, ack_note, i, f"{ref} {name} {site_name}".lower())
        built[ref] = (key, row)
        rows.append(row)

    rank = {s: k for k, s in enumerate(STATES)}
    site_rank = {sr.site.id: k for k, sr in enumerate(results)}
    rows.sort(key=lambda r: (rank[r.state], -(r.cause.revision if r.cause else 0) if r.state in (NEW, ACKED) else 0,
                             site_rank[r.site_id], r.order))
    counts = {s: 0 for s in STATES}
    n_circuits = 0
    for r in rows:
        counts[r.state] += 1
        n_circuits += r.kind == CIRCUIT
    # By file; within a file in the loader's order (its own errors before what they cause).
    errors = tuple(e for rel in sorted(state.errors) for e in state.errors[rel])
    in_force = frozenset(f for sr in results for f in sr.site.files)
    head, _ = history.head()
    return Snapshot(tuple(rows), {r.ref: r for r in rows}, {sr.site.id: sr for sr in results}, errors, counts,
                    n_circuits, history.count(), head, kept_since, first_record, in_force)


# -- the list's filters -------------------------------------------------------------------

SHOW_NEW, SHOW_FAILING, SHOW_ALL = "new", "failing", "all"
FILTERS = (SHOW_NEW, SHOW_FAILING, SHOW_ALL)


def visible(rows, which: str, needle: str = "") -> list[Row]:
    """The rows a filter and a search leave, in list order."""
    needle = needle.strip().lower()
    if which == SHOW_NEW:
        out = [r for r in rows if r.state == NEW]
    elif which == SHOW_FAILING:
        out = [r for r in rows if r.status == FAIL]
    else:
        out = list(rows)
    if needle:
        out = [r for r in out if needle in r.haystack]
    return out


def filter_counts(snapshot: Snapshot) -> dict[str, int]:
    c = snapshot.counts
    return {SHOW_NEW: c[NEW], SHOW_FAILING: c[NEW] + c[ACKED], SHOW_ALL: len(snapshot.rows)}

