"""`izwatch replace PATH LOAD_REF (--power-kw X | --current-a X) --by NAME [--note TEXT] [--dry-run]`."""
from __future__ import annotations

import math
import os
import tempfile
from pathlib import Path

from tracker import graph as G
from tracker.checks import remedy as remedies
from tracker.checks.result import FAIL
from tracker.checks.site import headroom_kw
from tracker.cli import EXIT_FAIL, EXIT_INPUT, EXIT_OK
from tracker.commands.common import CommandError, check_root, fail, folder_of_site, open_history
from tracker.edit import EditError, format_number, set_scalar
from tracker.tracking.authors import Authors
from tracker.tracking.startup import start, to_revision
from tracker.tracking.state import EstateState

MAX_KW, MAX_A = 2000.0, 4000.0   # the schema's ranges for power_kw and current_a


def _parse_ref(ref: str) -> tuple[str, str, str, str]:
    parts = ref.split("/")
    if len(parts) != 4 or not all(parts):
        raise CommandError(f"'{ref}' is not a load ref (SITE/BOARD/CIRCUIT/LOAD)")
    return tuple(parts)


def atomic_write(path: Path, data: bytes) -> None:
    """Write `data` to `path` by a temporary file in the same folder and a rename."""
    mode = path.stat().st_mode & 0o7777 if path.exists() else 0o644
    fd, tmp = tempfile.mkstemp(prefix=".izwatch-", suffix=".tmp", dir=str(path.parent))
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, mode)
        os.replace(tmp, path)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise


def _fmt_check(c) -> str:
    if c is None:
        return "—"
    digits = {"ohm": 3}.get(c.unit, 2)
    v = "—" if c.value is None else f"{c.value:.{digits}f}"
    return f"{c.status:<12} {v:>8} {c.unit}"


def _limit(c) -> str:
    if c is None or c.limit is None:
        return ""
    digits = {"ohm": 3}.get(c.unit, 2)
    return f"{'≤' if c.compare == '<=' else '≥'} {c.limit:.{digits}f}"


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


def run(args) -> int:
    try:
        root = check_root(args.path)
        site_id, board_id, circuit_id, load_id = _parse_ref(args.load_ref)
        value = args.power_kw if args.power_kw is not None else args.current_a
        key, other = ("power_kw", "current_a") if args.power_kw is not None else ("current_a", "power_kw")
        if not math.isfinite(value) or value <= 0 or value > (MAX_KW if key == "power_kw" else MAX_A):
            raise CommandError(f"--{key.replace('_', '-')} {value:g} is out of range (more than 0, at most "
                               f"{MAX_KW if key == 'power_kw' else MAX_A:g})")
        folder = folder_of_site(root, site_id)
        history = None if args.dry_run else open_history(args)
        authors = Authors(root, by=args.by)
        if history is None:
            state = EstateState(root)
            state.seed({rel: p.read_bytes() for rel, p in state.disk_files().items()
                        if state.folder_of(rel) == folder})
        else:
            # Anything changed while nothing watched is recorded first, so the replacement is
            # diffed against the file as it really was.
            state, _ = start(root, history, Authors(root), folders={folder})
        ss = state.site_by_id(site_id)
        if ss is None:
            errs = [str(e) for errs in state.errors.values() for e in errs]
            raise CommandError(f"site {site_id} does not load; fix it first:\n" + "\n".join(errs))
        circuit = next((c for c in ss.site.circuits if c.board == board_id and c.id == circuit_id), None)
        load = next((ld for ld in circuit.loads if ld.id == load_id), None) if circuit else None
        if load is None:
            raise CommandError(f"no load {args.load_ref} in the site files")
        old_value = getattr(load, key) if getattr(load, key) is not None else getattr(load, other)
        old_key = key if getattr(load, key) is not None else other
        path = root / load.src.file
        text = path.read_text(encoding="utf-8")
        try:
            new_text = set_scalar(text, load.src.path, key, value, drop=(other,))
        except EditError as exc:
            raise CommandError(f"{load.src.file}: {exc}") from None
    except CommandError as exc:
        return fail(exc)

    before = ss.result
    circuit_ref = f"{site_id}/{board_id}/{circuit_id}"
    outcome = state.apply_bytes(load.src.file, new_text.encode("utf-8"))
    if outcome is None or not outcome.valid or {c.ref for c in outcome.changes} != {args.load_ref}:
        detail = "; ".join(str(e) for e in (outcome.errors if outcome else [])) or \
            "the edit changed more than the one value"
        print(f"izwatch: the edit was not made: {detail}")
        return EXIT_INPUT
    after = state.site_by_id(site_id).result
    recorded = None
    if history is not None:
        rev = to_revision(outcome, "replace", authors(load.src.file), args.note)
        recorded = history.record_after(rev, lambda: atomic_write(path, new_text.encode("utf-8")))
        history.close()

    # -- what it did ----------------------------------------------------------------------
    old_show = f"{old_key} {format_number(old_value)}" if old_value is not None else "(none)"
    lines = [f"{args.load_ref}: {old_show} → {key} {format_number(value)}"
             + (f" ({load.name})" if load.name else "")]
    if recorded is not None:
        lines.append(f"  recorded as revision {recorded.id} by {recorded.author}"
                     + (f": {args.note}" if args.note else ""))
    else:
        lines.append("  dry run: nothing written")
    r_old, r_new = before.circuits[circuit_ref], after.circuits[circuit_ref]
    lines += _table(f"circuit {circuit_ref} \"{circuit.name}\"", r_old.checks, r_new.checks)
    failing = r_new.status == FAIL
    g = state.graph
    for up in G.upstream(g, circuit_ref):
        kind = G.kind_of(g, up)
        if kind == G.BOARD:
            b_old, b_new = before.boards.get(up), after.boards[up]
            lines += _table(f"board {up}", [b_old.check] if b_old else None, [b_new.check])
            failing |= b_new.status == FAIL
        elif kind == G.CIRCUIT:
            c_old, c_new = before.circuits.get(up), after.circuits[up]
            lines += _table(f"sub-main {up}", c_old.checks if c_old else None, c_new.checks)
            failing |= c_new.status == FAIL
        elif kind == G.SUPPLY_NODE and after.supply_check is not None:
            lines += _table(f"origin {up}", [before.supply_check] if before.supply_check else None,
                            [after.supply_check])
            failing |= after.supply_check.status == FAIL
    h_old, h_new = headroom_kw(before, r_old), headroom_kw(after, r_new)
    show = lambda h: "—" if h is None else f"{h:+.2f} kW"  # noqa: E731
    lines.append(f"headroom: {show(h_old)} → {show(h_new)}")
    if r_new.status == FAIL:
        fix = remedies.find(r_new)
        if fix:
            lines.append(f"remedy: {fix['text']}")
    lines.append("Caution: verify against the current regulations and the maker's data; work on "
                 "installations is for qualified people.")
    print("\n".join(lines))
    return EXIT_FAIL if failing else EXIT_OK
