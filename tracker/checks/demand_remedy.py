"""Remedies for a board's or the origin's maximum demand over its limit, each re-checked on the
whole site: load management on the loads that allow it, moving a circuit to a board with room,
a larger main switch, the next standard service fuse (or a three-phase supply beyond it)."""
from __future__ import annotations

import math
from dataclasses import replace

from tracker.checks import demand as demand_checks
from tracker.checks.design_current import load_current_a
from tracker.checks.result import FAIL
from tracker.checks.site import SiteResult, evaluate_site
from tracker.model import Load, Site

# Loads a load-management (load-curtailment) device can hold back: a charge point's demand may
# then be taken at its managed current (BS 7671:2018 722.311); a heat pump's controller can be
# limited the same way (common practice).
MANAGED_KINDS = ("ev-charger", "heat-pump")
LEAST_MANAGED_A = 6.0          # the least current a charge point charges at (IEC 61851-1 control pilot; common practice)
# Cut-out fuses of a single-phase public supply (common practice: 60, 80 and 100 A; beyond 100 A a
# three-phase supply), and main switch ratings (common practice).
SERVICE_FUSES_A = (60.0, 80.0, 100.0)
MAIN_SWITCHES_A = (63.0, 80.0, 100.0, 125.0)
MOVE_TRIES = 12                # moves of a circuit tried (each re-checks the whole site)


def _failing(sr: SiteResult) -> set[tuple[str, str]]:
    out = {(ref, c.id) for ref, r in sr.circuits.items() for c in r.checks if c.status == FAIL}
    out |= {(ref, b.check.id) for ref, b in sr.boards.items() if b.check.status == FAIL}
    if sr.supply_check is not None and sr.supply_check.status == FAIL:
        out.add((sr.site.id, "demand"))
    return out


def _below(site: Site, board_id: str) -> set[str]:
    """The board and every board fed from it, however far down."""
    out, todo = set(), [board_id]
    while todo:
        b = todo.pop()
        out.add(b)
        todo.extend(c.feeds for c in site.circuits if c.board == b and c.feeds)
    return out


def _puts_right(site: Site, before: set, target: tuple[str, str]) -> bool:
    after = _failing(evaluate_site(site, explain=False))
    return target not in after and after <= before


def _with_load(site: Site, circuit, load: Load, amps: float) -> Site:
    new = replace(load, current_a=amps, power_kw=None)
    c2 = replace(circuit, loads=tuple(new if ld is load else ld for ld in circuit.loads))
    return replace(site, circuits=tuple(c2 if c is circuit else c for c in site.circuits))


def _managed(sr: SiteResult, boards: set[str], over_a: float, before, target, notes: list[str]) -> list[str]:
    site, u0 = sr.site, sr.site.supply.u0_v
    named = [(c, ld) for c in site.circuits if c.board in boards and c.design_current_a is None
             for ld in c.loads if ld.kind in MANAGED_KINDS]
    out = []
    for c, ld in named:
        amps = load_current_a(ld, u0)[0]
        held = math.floor(amps - over_a)
        if held < LEAST_MANAGED_A:
            continue
        if _puts_right(_with_load(site, c, ld, held), before, target):
            out.append(f"load management holding {ld.name or c.name or ld.id} ({c.board}/{c.id}, {amps:.1f} A) to at most "
                       f"{held:g} A while the demand is high (722.311: its demand is then its managed current)")
    if named and not out:
        total = sum(load_current_a(ld, u0)[0] - LEAST_MANAGED_A for _c, ld in named)
        if total < over_a:
            names = ", ".join(f"{ld.name or c.name or ld.id}" for c, ld in named)
            notes.append(f"load management on {names} can take off at most {total:.1f} A of the {over_a:.1f} A, "
                         "not enough alone")
    return out


def _line_moves(sr: SiteResult, board_id: str, limit_a: float, before, target) -> list[str]:
    """A three-phase board: a single-phase circuit (or a flat's feed) moved from the most loaded
    line to the least loaded one (the moves the demand check finds), re-checked on the whole site."""
    br = sr.boards.get(f"{sr.site.id}/{board_id}")
    if br is None or br.demand.phases_a is None:
        return []
    site = sr.site
    for cid, src, dst, _new in demand_checks.move_remedies(br.demand, limit_a)[:MOVE_TRIES]:
        moved = replace(site, circuits=tuple(replace(c, phase=dst) if (c.board, c.id) == (board_id, cid) else c
                                             for c in site.circuits))
        if _puts_right(moved, before, target):
            name = next((c.name for c in site.circuits if (c.board, c.id) == (board_id, cid)), "")
            return [f"move circuit {board_id}/{cid}{f' ({name})' if name else ''} from {src} to {dst}"]
    return []


def _moves(sr: SiteResult, board_id: str, over_a: float, before, target) -> list[str]:
    site = sr.site
    mine = _below(site, board_id)
    others = [b for b in site.boards if b.id not in mine]
    # only a circuit carrying at least the excess can put it right alone; the smallest such first
    finals = sorted((c for c in site.circuits if c.board == board_id and not c.feeds and c.loads
                     and (sr.circuits[f"{site.id}/{c.board}/{c.id}"].ib_a or 0.0) >= over_a),
                    key=lambda c: sr.circuits[f"{site.id}/{c.board}/{c.id}"].ib_a or 0.0)
    tries = 0
    for c in finals:
        for b in others:
            if any(x.board == b.id and x.id == c.id for x in site.circuits):
                continue
            tries += 1
            if tries > MOVE_TRIES:      # each try re-checks the whole site
                return []
            moved = replace(site, circuits=tuple(replace(x, board=b.id) if x is c else x for x in site.circuits))
            if _puts_right(moved, before, target):
                return [f"move circuit {c.id} ({c.name or 'unnamed'}) to board {b.id}, which has room for it "
                        "(re-checked with its cable as it is: re-check the new route's length)"]
    return []


def _larger(site: Site, board_id: str | None, demand_a: float, before, target, notes: list[str]) -> list[str]:
    out = []
    sup = site.supply
    if board_id is not None:
        board = site.board(board_id)
        if board.main_switch_a is not None and board.main_switch_a < demand_a:
            rating = next((r for r in MAIN_SWITCHES_A if r >= demand_a), None)
            if rating is not None:
                b2 = replace(board, main_switch_a=rating)
                bigger = replace(site, boards=tuple(b2 if b is board else b for b in site.boards))
                if _puts_right(bigger, before, target):
                    out.append(f"a main switch of {rating:g} A (a board rated for it)"
                               + ("" if board.at_origin else ", with the sub-main feeding it put right for that demand"))
        if not board.at_origin:
            return out
    if sup.service_fuse_a is not None and sup.service_fuse_a < demand_a:
        fuse = next((r for r in SERVICE_FUSES_A if r >= demand_a), None)
        if fuse is None and sup.three_phase:
            notes.append(f"{demand_a:.1f} A in a line is beyond the largest standard service fuse "
                         f"({SERVICE_FUSES_A[-1]:g} A per line): less demand, the lines balanced, or a larger supply "
                         "(for the network operator to offer; not re-checked here)")
        elif fuse is None:
            notes.append(f"{demand_a:.1f} A is beyond the largest standard single-phase service fuse "
                         f"({SERVICE_FUSES_A[-1]:g} A): less demand, or a three-phase supply (for the network operator "
                         "to offer; not re-checked here)")
        else:
            bigger = replace(site, supply=replace(sup, service_fuse_a=fuse))
            if board_id is not None:
                board = site.board(board_id)
                if board.main_switch_a is not None and board.main_switch_a < demand_a:
                    rating = next((r for r in MAIN_SWITCHES_A if r >= demand_a), board.main_switch_a)
                    b2 = replace(board, main_switch_a=rating)
                    bigger = replace(bigger, boards=tuple(b2 if b is board else b for b in bigger.boards))
            if _puts_right(bigger, before, target):
                out.append(f"a supply upgrade: the network operator's service fuse {sup.service_fuse_a:g} → {fuse:g} A")
    return out


def for_board(sr: SiteResult, board_ref: str) -> dict | None:
    """{'text', 'options'} for a board whose demand fails; None otherwise."""
    br = sr.boards[board_ref]
    chk = br.check
    if chk.status != FAIL or chk.value is None or chk.limit is None:
        return None
    before = _failing(sr)
    target = (board_ref, "demand")
    over = chk.value - chk.limit
    notes: list[str] = []
    options = _managed(sr, _below(sr.site, br.board_id), over, before, target, notes)
    options += _line_moves(sr, br.board_id, chk.limit, before, target)
    options += _moves(sr, br.board_id, over, before, target)
    options += _larger(sr.site, br.board_id, chk.value, before, target, notes)
    return _remedy(over, options, notes)


def for_origin(sr: SiteResult) -> dict | None:
    chk = sr.supply_check
    if chk is None or chk.status != FAIL or chk.value is None or chk.limit is None:
        return None
    before = _failing(sr)
    target = (sr.site.id, "demand")
    over = chk.value - chk.limit
    notes: list[str] = []
    options = _managed(sr, {b.id for b in sr.site.boards}, over, before, target, notes)
    for b in sr.site.boards:
        if b.at_origin:
            options += _line_moves(sr, b.id, chk.limit, before, target)
    options += _larger(sr.site, None, chk.value, before, target, notes)
    return _remedy(over, options, notes)


def _remedy(over_a: float, options: list[str], notes: list[str]) -> dict:
    """Every option was re-checked on the whole site: the demand passes and nothing else newly fails."""
    if options:
        text = f"{over_a:.1f} A over; each of these passes (re-checked): " + "; or ".join(options)
    else:
        text = (f"{over_a:.1f} A over; no load management, move of a circuit or standard upgrade puts it right "
                "alone: reduce the connected load or redesign the distribution")
    if notes:
        text += " (" + "; ".join(notes) + ")"
    return {"text": text, "options": options, "notes": notes}
