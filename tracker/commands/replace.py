"""`izwatch replace PATH LOAD_REF (--power-kw X | --current-a X) --by NAME [--note TEXT] [--dry-run]`."""
from __future__ import annotations

import math
import os
import sqlite3
import tempfile
from dataclasses import dataclass
from pathlib import Path

from tracker import graph
from tracker.checks import remedy as remedies
from tracker.checks.result import FAIL
from tracker.checks import demand_remedy
from tracker.checks.site import headroom_kw, headroom_words
from tracker.cli import EXIT_FAIL, EXIT_INPUT, EXIT_OK
from tracker.commands.common import (CommandError, check_root, disk_full, fail, folder_of_site, open_history,
                                     plain_name)
from tracker.edit import EditError, format_number, set_scalar
from tracker.loading.discover import read_regular
from tracker.history import HistoryError
from tracker.output import figures
from tracker.output.terminal_text import clean
from tracker.tracking.authors import Authors
from tracker.tracking.outcome import to_revision
from tracker.tracking.startup import start
from tracker.tracking.state import EstateState

MAX_KW, MAX_A = 2000.0, 4000.0   # the schema's ranges for power_kw and current_a


MAX_TRIES = 5   # another edit of the same file between reading it and recording: start again, this often
BOM = b"\xef\xbb\xbf"


class FileChanged(Exception):
    """The site file changed between reading it and taking the history's write lock."""


def _parse_ref(ref: str) -> tuple[str, str, str, str]:
    parts = ref.split("/")
    if len(parts) != 4 or not all(parts):
        raise CommandError(f"'{clean(ref)}' is not a load ref (SITE/BOARD/CIRCUIT/LOAD)")
    return tuple(parts)


def _write_temp(path: Path, data: bytes, mode: int) -> str:
    """`data` in a new temporary file beside `path` (flushed to disk); its name."""
    fd, tmp = tempfile.mkstemp(prefix=".izwatch-", suffix=".tmp", dir=str(path.parent))
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, mode)
    except BaseException:
        os.unlink(tmp)
        raise
    return tmp


class FileSwap:
    """Replace a file's content only if it is still what was read, and be able to put it back.

    `swap` (run under the history's write lock) re-reads the file: if it is not the content the
    replacement was computed from, FileChanged. The new content is written to a temporary file
    first (a full disk fails there, with the file untouched); the old file is kept by a second
    link until `done`, so `undo` is a rename, which needs no free space."""

    def __init__(self, path: Path, expected: bytes, new: bytes):
        self.path, self.expected, self.new = path, expected, new
        self.keep: str | None = None

    def swap(self) -> None:
        try:
            now = read_regular(self.path)
        except OSError as exc:
            raise FileChanged(f"it cannot be read now ({exc.strerror})") from None
        if now != self.expected:
            raise FileChanged("it was changed meanwhile")
        mode = self.path.stat().st_mode & 0o7777
        tmp = _write_temp(self.path, self.new, mode)
        try:
            keep = tmp[:-len(".tmp")] + ".old"
            os.link(self.path, keep)
            self.keep = keep
            os.replace(tmp, self.path)
        except BaseException:
            if os.path.exists(tmp):
                os.unlink(tmp)
            self.done()
            raise

    def undo(self) -> None:
        if self.keep is not None:
            os.replace(self.keep, self.path)
            self.keep = None

    def done(self) -> None:
        if self.keep is not None:
            try:
                os.unlink(self.keep)
            except OSError:
                pass
            self.keep = None


@dataclass
class _Plan:
    """The replacement worked out from the site file as read."""

    state: object
    site_state: object
    circuit: object
    load: object
    path: Path
    original: bytes
    new: bytes
    old_key: str
    old_value: float | None


def _plan(root: Path, folder: str, history, ref: tuple, key: str, other: str, value: float) -> _Plan:
    site_id, board_id, circuit_id, load_id = ref
    if history is None:
        state = EstateState(root)
        contents = {}
        for rel, p in state.disk_files().items():
            if state.folder_of(rel) == folder:
                try:
                    contents[rel] = read_regular(p)
                except OSError as exc:
                    raise CommandError(f"{rel}: cannot be read ({exc.strerror})") from None
        state.seed(contents)
    else:
        # Anything changed while nothing watched is recorded first, so the replacement is
        # diffed against the file as it really was.
        state, _ = start(root, history, Authors(root), folders={folder})
    site_state = state.site_by_id(site_id)
    if site_state is None:
        errs = [str(e) for errs in state.errors.values() for e in errs]
        raise CommandError(f"site {site_id} does not load; fix it first:\n" + "\n".join(errs))
    circuit = next((c for c in site_state.site.circuits if c.board == board_id and c.id == circuit_id), None)
    load = next((ld for ld in circuit.loads if ld.id == load_id), None) if circuit else None
    if load is None:
        raise CommandError(f"no load {'/'.join(ref)} in the site files")
    old_value = getattr(load, key) if getattr(load, key) is not None else getattr(load, other)
    old_key = key if getattr(load, key) is not None else other
    path = root / load.src.file
    try:
        original = read_regular(path)      # a FIFO under the name never blocks
    except OSError as exc:
        raise CommandError(f"{load.src.file}: cannot be read ({exc.strerror}); its last good state is "
                           "what the history holds, and nothing was changed") from None
    # Every byte but the value is kept: a byte-order mark (which libyaml does not count in its
    # positions) is set aside and put back; line ends are not translated (CRLF stays CRLF).
    bom = BOM if original.startswith(BOM) else b""
    try:
        text = original[len(bom):].decode("utf-8")
    except UnicodeDecodeError:
        raise CommandError(f"{load.src.file}: not valid UTF-8") from None
    try:
        new_text = set_scalar(text, load.src.path, key, value, drop=(other,))
    except EditError as exc:
        raise CommandError(f"{load.src.file}: {exc}") from None
    return _Plan(state, site_state, circuit, load, path, original, bom + new_text.encode("utf-8"), old_key, old_value)


def _fmt_check(c) -> str:
    if c is None:
        return figures.NONE
    return f"{c.status:<12} {figures.quantity(c.value, c.unit, show_unit=False):>8} {figures.unit_shown(c.unit)}"


def _limit(c) -> str:
    if c is None or c.limit is None:
        return ""
    return f"{'≤' if c.compare == '<=' else '≥'} {figures.quantity(c.limit, c.unit, show_unit=False)}"


def _table(title: str, before, after) -> list[str]:
    lines = [title]
    prior = {c.id: c for c in before} if before else {}
    for c in after:
        p = prior.get(c.id)
        flag = ""
        if c.status == FAIL and (p is None or p.status != FAIL):
            flag = "  ← NEWLY FAILING"
        elif p is not None and p.status == FAIL and c.status != FAIL:
            flag = "  ← cleared"
        elif p is not None and p.status == FAIL and c.status == FAIL and (c.margin() or 0) < (p.margin() or 0):
            flag = "  ← worse"
        lines.append(f"    {c.id:<18} {_fmt_check(p)}  →  {_fmt_check(c)}  {_limit(c):<12}{flag}")
    return lines


@dataclass
class _Request:
    """What the command line asks for, checked."""

    root: Path
    ref: tuple[str, str, str, str]    # site, board, circuit, load
    key: str                          # power_kw or current_a: the value given
    other: str                        # the other one, dropped from the load if present
    value: float
    folder: str                       # the site's folder
    history: object                   # None on a dry run
    by: str

    @property
    def circuit_ref(self) -> str:
        return "/".join(self.ref[:3])


@dataclass
class _Done:
    """The replacement made (or worked out, on a dry run)."""

    plan: _Plan
    before: object                    # the site's results before and after
    after: object
    recorded: object                  # the history's Recorded; None on a dry run


def _request(args) -> _Request:
    root = check_root(args.path)
    ref = _parse_ref(args.load_ref)
    by = plain_name("--by", args.by)
    value = args.power_kw if args.power_kw is not None else args.current_a
    key, other = ("power_kw", "current_a") if args.power_kw is not None else ("current_a", "power_kw")
    if not math.isfinite(value) or value <= 0 or value > (MAX_KW if key == "power_kw" else MAX_A):
        raise CommandError(f"--{key.replace('_', '-')} {value:g} is out of range (more than 0, at most "
                           f"{MAX_KW if key == 'power_kw' else MAX_A:g})")
    folder = folder_of_site(root, ref[0])
    history = None if args.dry_run else open_history(args)
    return _Request(root, ref, key, other, value, folder, history, by)


class _Stop(Exception):
    """The replacement cannot go on: the exit code, and what to print (on stdout for a bad edit,
    as the command's one error line otherwise)."""

    def __init__(self, code: int, message: str = "", error: CommandError | None = None):
        super().__init__(message)
        self.code, self.message, self.error = code, message, error


def _replace(request: _Request, load_ref: str, note: str | None) -> _Done:
    """Work the replacement out from the file as it is, re-check, and record it while writing
    the file; again from the start when another edit of the file lands meanwhile."""
    authors = Authors(request.root, by=request.by)
    for _attempt in range(MAX_TRIES):
        try:
            plan = _plan(request.root, request.folder, request.history, request.ref, request.key, request.other,
                         request.value)
        except CommandError as exc:
            raise _Stop(EXIT_INPUT, error=exc) from None
        except OSError as exc:
            if disk_full(exc):
                raise _Stop(EXIT_INPUT, error=CommandError(f"disk full: {exc.strerror}; nothing was changed")) from None
            raise
        before = plan.site_state.result
        outcome = plan.state.apply_bytes(plan.load.src.file, plan.new)
        if outcome is None or not outcome.valid or {c.ref for c in outcome.changes} != {load_ref}:
            detail = "; ".join(str(e) for e in (outcome.errors if outcome else [])) or \
                "the edit changed more than the one value"
            raise _Stop(EXIT_INPUT, f"izwatch: the edit was not made: {clean(detail)}")
        after = plan.state.site_by_id(request.ref[0]).result
        if request.history is None:
            return _Done(plan, before, after, None)
        revision = to_revision(outcome, "replace", authors(plan.load.src.file), note)
        try:
            return _Done(plan, before, after, _record(request.history, revision, plan))
        except FileChanged:
            continue     # another edit landed meanwhile: work it out again from the file as it is now
    raise _Stop(EXIT_INPUT, error=CommandError(
        f"{plan.load.src.file} kept changing while the replacement was being recorded ({MAX_TRIES} tries): "
        "nothing was written; run it again"))


def _record(history, revision, plan: _Plan):
    """Record the revision and write the file under the history's write lock; if either fails,
    say exactly what is on disk and in the history."""
    file = plan.load.src.file
    swap = FileSwap(plan.path, plan.original, plan.new)
    try:
        return history.record_after(revision, swap.swap, undo=swap.undo)
    except (OSError, sqlite3.Error) as exc:
        if not disk_full(exc):
            raise
        if swap.keep is not None:   # could not be put back: say exactly that
            raise _Stop(EXIT_INPUT, error=CommandError(
                f"disk full while recording: {file} has the new value but the history could not "
                "record it; free some space and run `izwatch watch` to record it")) from None
        raise _Stop(EXIT_INPUT, error=CommandError(
            f"disk full: the replacement was not made and nothing was recorded "
            f"({file} is unchanged); free some space and run it again")) from None
    except HistoryError as exc:     # the history's server refused or went away
        if swap.keep is not None:
            raise _Stop(EXIT_INPUT, error=CommandError(
                f"{exc}: {file} has the new value but the history could not "
                "record it; run `izwatch watch` to record it")) from None
        raise _Stop(EXIT_INPUT, error=CommandError(
            f"{exc}: the replacement was not made and nothing was recorded ({file} is unchanged)")) from None
    finally:
        swap.done()


def _summary(request: _Request, done: _Done, load_ref: str, note: str | None) -> tuple[list[str], bool]:
    """The lines that say what the replacement did, and whether anything there fails now."""
    plan, before, after, recorded = done.plan, done.before, done.after, done.recorded
    circuit_ref = request.circuit_ref
    old_show = f"{plan.old_key} {format_number(plan.old_value)}" if plan.old_value is not None else "(none)"
    lines = [f"{load_ref}: {old_show} → {request.key} {format_number(request.value)}"
             + (f" ({clean(plan.load.name)})" if plan.load.name else "")]
    if recorded is not None:
        lines.append(f"  recorded as revision {recorded.id} by {clean(recorded.author)}"
                     + (f": {clean(note)}" if note else ""))
    else:
        lines.append("  dry run: nothing written")
    old_result, new_result = before.circuits[circuit_ref], after.circuits[circuit_ref]
    lines += _table(f"circuit {circuit_ref} \"{clean(plan.circuit.name)}\"", old_result.checks, new_result.checks)
    failing = new_result.status == FAIL
    upstream_lines, upstream_failing = _upstream(plan.state.graph, circuit_ref, before, after)
    lines += upstream_lines
    failing |= upstream_failing
    headroom_before, headroom_after = headroom_kw(before, old_result), headroom_kw(after, new_result)
    lines.append(f"headroom: {_kw(headroom_before)} → {_kw(headroom_after)}")
    lines.append(f"  {headroom_words(after, new_result)}")
    if new_result.status == FAIL:
        fix = remedies.find(new_result)
        if fix:
            lines.append(f"remedy: {clean(fix['text'])}")
    board_ref = f"{new_result.site_id}/{new_result.board_id}"
    if after.boards.get(board_ref) is not None and after.boards[board_ref].status == FAIL:
        fix = demand_remedy.for_board(after, board_ref)
        if fix:
            lines.append(f"board remedy: {clean(fix['text'])}")
    lines.append("Caution: verify against the current regulations and the maker's data; work on "
                 "installations is for qualified people.")
    return lines, failing


def _upstream(estate_graph, circuit_ref: str, before, after) -> tuple[list[str], bool]:
    """Before → after of every board, sub-main and origin upstream of the circuit."""
    lines, failing = [], False
    for up in graph.upstream(estate_graph, circuit_ref):
        kind = graph.kind_of(estate_graph, up)
        if kind == graph.BOARD:
            board_before, board_after = before.boards.get(up), after.boards[up]
            lines += _table(f"board {up}", [board_before.check] if board_before else None, [board_after.check])
            failing |= board_after.status == FAIL
        elif kind == graph.CIRCUIT:
            submain_before, submain_after = before.circuits.get(up), after.circuits[up]
            lines += _table(f"sub-main {up}", submain_before.checks if submain_before else None,
                            submain_after.checks)
            failing |= submain_after.status == FAIL
        elif kind == graph.SUPPLY_NODE and after.supply_check is not None:
            lines += _table(f"origin {up}", [before.supply_check] if before.supply_check else None,
                            [after.supply_check])
            failing |= after.supply_check.status == FAIL
    return lines, failing


def _kw(headroom: float | None) -> str:
    return "—" if headroom is None else f"{headroom:+.2f} kW"


def run(args) -> int:
    try:
        request = _request(args)
    except CommandError as exc:
        return fail(exc)
    try:
        done = _replace(request, args.load_ref, args.note)
    except _Stop as stop:
        if stop.error is not None:
            return fail(stop.error)
        print(stop.message)
        return stop.code
    finally:
        if request.history is not None:
            request.history.close()
    lines, failing = _summary(request, done, args.load_ref, args.note)
    print("\n".join(lines))
    return EXIT_FAIL if failing else EXIT_OK
