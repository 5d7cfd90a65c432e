"""Checks of a site's phases that a schema of one file cannot make.

A three-phase board needs a three-phase supply and a three-phase feed; a three-phase circuit
needs a three-phase board and a cable kind with three-phase columns; a single-phase circuit on a
three-phase board names the line it takes, and one on a single-phase board names none.
"""
from __future__ import annotations

from tracker import catalogue
from tracker.model import SUPPLY, THREE_PHASE_SQRT3, Board, Circuit, Supply

# How far a declared line voltage may differ from √3 · U0 before it is taken for a mistake: the
# declared 400 V / 230 V pair differs by 0.4 %; ±5 % catches a U0 typed as U_L or the reverse.
LINE_VOLTAGE_TOLERANCE = 0.05


def _err(obj, sub: tuple, message: str):
    return (obj.src.file, obj.src.path + sub, message)


def check_phases(supply: Supply | None, boards: list[Board], circuits: list[Circuit], broken=frozenset()):
    """Yield (file, path, message) for every phase problem of a site."""
    if supply is not None:
        yield from _check_supply(supply)
    three_phase_supply = supply is not None and supply.three_phase
    by_id = {b.id: b for b in boards}
    by_ref = {f"{c.board}/{c.id}": c for c in circuits}
    for b in boards:
        if not b.three_phase:
            if b.phase is not None and not (b.at_origin and three_phase_supply):
                yield _err(b, ("phase",), "a board names its line only where it is single-phase and fed straight "
                                          "from a three-phase supply (a sub-main names the line of the board it feeds)")
            elif b.phase is None and b.at_origin and three_phase_supply:
                yield _err(b, (), f"single-phase board {b.id} fed straight from the three-phase supply names the "
                                  "line it takes: give phase: L1, L2 or L3 (or phases: 3 for a three-phase board)")
            continue
        if b.phase is not None:
            yield _err(b, ("phase",), f"board {b.id} is three-phase: remove 'phase'")
        if supply is not None and not three_phase_supply and b.at_origin:
            yield _err(b, ("phases",), f"board {b.id} is three-phase but the supply is single-phase "
                                       "(give supply.phases: 3, or make the board single-phase)")
        feeder = by_ref.get(b.fed_by) if b.fed_by != SUPPLY else None
        if feeder is not None and not feeder.three_phase:
            yield _err(b, ("phases",), f"board {b.id} is three-phase but its sub-main {b.fed_by} is single-phase "
                                       f"(give {b.fed_by} phases: 3, or make the board single-phase)")
    for c in circuits:
        board = by_id.get(c.board)
        yield from _check_loads(c)
        if c.triplen_harmonics_pct is not None and not c.three_phase:
            yield _err(c, ("triplen_harmonics_pct",), "third-harmonic content (Table 4Aa) is for three-phase "
                                                      "circuits with a neutral; this circuit is single-phase")
        if board is None:
            continue
        if c.three_phase:
            yield from _check_three_phase_circuit(c, board, by_id)
        elif board.three_phase:
            if c.phase is None:
                yield _err(c, (), f"a single-phase circuit on three-phase board {board.id} names the line it "
                                  "takes: give phase: L1, L2 or L3")
        elif c.phase is not None:
            yield _err(c, ("phase",), f"board {board.id} is single-phase: remove 'phase' (or give the board "
                                      "phases: 3)")


def _check_three_phase_circuit(c: Circuit, board: Board, by_id: dict):
    """The problems of a three-phase circuit: its board, line, topology, cable kind and method, and
    the board it feeds."""
    kinds = catalogue.cable_kinds()
    if not board.three_phase:
        yield _err(c, ("phases",), f"a three-phase circuit on single-phase board {board.id} "
                                   f"(give board {board.id} phases: 3, or make the circuit single-phase)")
    if c.phase is not None:
        yield _err(c, ("phase",), "a three-phase circuit takes all three lines: remove 'phase'")
    if c.is_ring:
        yield _err(c, ("topology",), "a three-phase circuit cannot be a ring final circuit")
    kind = kinds.get(c.cable.kind)
    if kind is not None and not kind.three_phase:
        usable = ", ".join(sorted(k for k, v in kinds.items() if v.three_phase))
        yield _err(c, ("cable", "kind"), f"{kind.kind} has no three-phase ratings in the catalogue "
                                         f"(three-phase cable kinds: {usable})")
    elif kind is not None and c.cable.method in kind.methods and c.cable.method not in kind.methods_for(3):
        yield _err(c, ("cable", "method"), f"no three-phase ratings of {kind.kind} by method "
                                           f"{c.cable.method} ({', '.join(kind.methods_for(3))})")
    target = by_id.get(c.feeds) if c.feeds else None
    if target is not None and not target.three_phase:
        yield _err(c, ("feeds",), f"a three-phase sub-main feeds single-phase board {target.id} "
                                  f"(give {target.id} phases: 3, or make this sub-main single-phase on "
                                  "one line with 'phase')")


def _check_supply(supply: Supply):
    if not supply.three_phase:
        for key in ("u_line_v", "pfc_line_neutral_ka"):
            if getattr(supply, key) is not None:
                yield _err(supply, (key,), f"{key} is for a three-phase supply: give phases: 3 or remove it")
        return
    if supply.u_line_v is not None:
        expected = THREE_PHASE_SQRT3 * supply.u0_v
        if abs(supply.u_line_v - expected) > LINE_VOLTAGE_TOLERANCE * expected:
            yield _err(supply, ("u_line_v",), f"{supply.u_line_v:g} V does not match the voltage to earth: "
                                              f"√3 × u0_v {supply.u0_v:g} V = {expected:.0f} V")


def _check_loads(c: Circuit):
    for ld in c.loads:
        if ld.phase_currents_a is None:
            continue
        if not c.three_phase:
            yield _err(ld, ("phase_currents_a",), "currents per line are for a load on a three-phase circuit; "
                                                  "this circuit is single-phase (give current_a)")
        elif ld.power_kw is not None or ld.current_a is not None:
            yield _err(ld, ("phase_currents_a",), "give power_kw, current_a or phase_currents_a, not more than one")
