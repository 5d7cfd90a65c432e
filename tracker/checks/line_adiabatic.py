"""`line-adiabatic`: the live conductors withstand a short circuit's let-through energy,
k²S² ≥ I²t (BS 7671:2018 434.5.2).

Where the device protects the conductors against overload (Iz reaches what the device requires)
and can break the prospective fault current (the breaking-capacity check passes), BS 7671 435.1
deems it to protect them against short-circuit too, and the check passes on that rule (the
computed figure is kept in the working). A cable sized on Ib below the device's rating
(`overload_exempt`, 433.3.1(ii)) has no such protection: 434.5.2 is applied at both ends — the
minimum short-circuit current at the far end and the prospective fault current at the board,
where an energy-limiting device lets through the most.
"""
from __future__ import annotations

from tracker import catalogue
from tracker.checks import protection
from tracker.checks.context import Facts
from tracker.checks.registry import CURVE, RATING, SIZE, CheckSpec, Outcome
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, CheckResult, not_assessed, words
from tracker.checks.working import IF_KNOWN, figure, record
from tracker.engine import adiabatic

ID = "line-adiabatic"
@record
class LineAdiabaticWorking:
    short_circuit_min_a: float | None = figure("A", "minimum short-circuit current at the far end, U0 / Z(L-N)")
    line_min_mm2: float | None = figure("mm2", "live conductor size the deciding energy needs, √(I²t)/k (434.5.2)",
                                        IF_KNOWN)
    k_line: float | None = figure("", "k of the live conductors (Table 43.1)", IF_KNOWN)
    line_let_through_a2s: float | None = figure("A2s", "the deciding let-through energy I²t", IF_KNOWN)
    short_circuit_board_a: float | None = figure("A", "prospective fault current at the board (cable sized on Ib)",
                                                 IF_KNOWN)


def _needs(circuit) -> tuple[str, ...]:
    # 435.1 deems a device that protects against overload and can break the fault current to
    # protect against short-circuit: that reads capacity and breaking-capacity. A cable sized on
    # Ib has its capacity verdict read this check instead, so it reads breaking-capacity only.
    return ("breaking-capacity",) if circuit.overload_exempt else ("capacity", "breaking-capacity")


CHECK = CheckSpec(
    id=ID, rank=60, stage=50, name="live conductors withstand the fault (adiabatic)", unit="mm2", compare=">=",
    gauge="csa min/has", record=LineAdiabaticWorking, helps=frozenset({SIZE, RATING, CURVE}), needs=_needs,
)

_ORDER = {FAIL: 0, NOT_ASSESSED: 1, PASS: 2}


def _overload_protected(f: Facts, done) -> bool:
    """The device protects the conductors against overload: capacity passes on the device's
    rating; for a cable marked as sized on Ib, Iz reaches In all the same (433.1.1)."""
    if not f.circuit.overload_exempt:
        capacity = done.get("capacity")
        return capacity is not None and capacity.result.status == PASS
    from tracker.checks import capacity as capacity_check
    iz, _, _ = capacity_check.rated_capacity(f)
    return iz is not None and iz >= capacity_check.device_requirement_a(f)


def run(f: Facts, done) -> Outcome:
    breaking = done.get("breaking-capacity")
    deemed = (breaking is not None and breaking.result.status == PASS and _overload_protected(f, done))
    # 434.5.2 at the board too for a cable sized on Ib: nothing else protects it there. (A circuit
    # not deemed for another reason — a device that cannot break the PFC, a cable too small for
    # In — fails on that reason's own check.)
    computed = _computed(f, board_end=f.circuit.overload_exempt and not deemed)
    if not deemed or computed.result.status == PASS:
        return computed
    return Outcome(CheckResult(ID, PASS, f.circuit.cable.csa_mm2, None, "mm2", ">=", ""), computed.record,
                   words(_deemed_text, f.label, computed))


def _deemed_text(label: str, computed: Outcome) -> str:
    return (f"deemed protected against short-circuit: the {label} protects the conductors against overload "
            f"and can break the prospective fault current (435.1); by 434.5.2 alone: {computed.worded().detail}")


def _k_line(f: Facts) -> tuple[float, str]:
    kind = f.kind
    kf = catalogue.k_factor("line", kind.conductor_c)
    if kf is None:
        k = adiabatic.k_factor(kind.conductor_c, kind.fault_final_c)
        return k, f"k {k:.0f} ({kind.conductor_c:g} → {kind.fault_final_c:g} °C, IEC 60364-5-54 Annex A)"
    note = "" if kf.k.confirmed else f" [{kf.k.status}]"
    return kf.k.value, f"k {kf.k.value:g}{note} ({kf.initial_c:g} → {kf.final_c:g} °C, Table {kf.table})"


def _computed(f: Facts, board_end: bool) -> Outcome:
    """434.5.2 by itself: the adiabatic equation at the far end (and at the board for a cable
    sized on Ib)."""
    c = f.circuit
    csa = c.cable.csa_mm2
    if f.kind is None:
        return Outcome(not_assessed(ID, "mm2", ">=", f"cable kind {c.cable.kind} not in the catalogue"))
    if f.zln_far_ohm is None:
        return Outcome(not_assessed(ID, "mm2", ">=", f.zln_why, value=csa))
    u0 = f.ctx.supply.u0_v
    k, k_how = _k_line(f)
    # An RCD does not see a line-neutral fault: only the overcurrent device counts here.
    ends = [("minimum short-circuit current at the far end U0/Z(L-N)", f.zln_far_ohm)]
    pfc_a = f.ctx.pfc_ka * 1000.0
    if board_end and pfc_a > u0 / f.zln_far_ohm:
        ends.append(("prospective fault current at the board", u0 / pfc_a))
    trials = []
    for where, z in ends:
        energy = protection.fault_energy(f, adiabatic.fault_current_a(u0, z), z)
        trials.append((where, z, protection.withstand(energy, k, csa)))
    where, z, withstand = min(trials, key=lambda t: (_ORDER[t[2].status], -(t[2].min_mm2 or 0.0)))
    e = withstand.energy
    deciding = e.lower_a2s if withstand.status == FAIL else e.upper_a2s
    rec = LineAdiabaticWorking(short_circuit_min_a=trials[0][2].energy.current_a, line_min_mm2=withstand.min_mm2, k_line=k,
                               line_let_through_a2s=deciding,
                               short_circuit_board_a=trials[1][2].energy.current_a if len(trials) > 1 else None)
    if e.upper_a2s is None and e.lower_a2s is None:
        return Outcome(not_assessed(ID, "mm2", ">=", f"{where} {e.current_a:.0f} A: {e.how}", value=csa), rec)
    working = (where, z == f.zln_far_ohm, u0, z, e, k_how)
    if withstand.status in (PASS, FAIL):
        return Outcome(CheckResult(ID, withstand.status, csa, withstand.min_mm2, "mm2", ">=", ""), rec,
                       words(_text, working, withstand, csa, deciding, k))
    need = f"S ≥ {withstand.min_mm2:.2f} mm² > {csa:g} mm²" if withstand.min_mm2 is not None else "no figure"
    return Outcome(not_assessed(ID, "mm2", ">=", f"{_working_text(*working)}: {need}; "
                                + protection.undecided_reason(withstand, "the conductors", f.label,
                                                             f.circuit.device.kind in protection.BREAKERS),
                                value=csa, limit=withstand.min_mm2), rec)


def _working_text(where: str, far_end: bool, u0: float, z: float, e, k_how: str) -> str:
    if far_end:
        return f"{where} = {u0:g}/{z:.3f} = {e.current_a:.0f} A; {e.how}; {k_how}"
    return f"{where} {e.current_a / 1000:.2f} kA (cable sized on Ib: checked at its origin too); {e.how}; {k_how}"


def _text(working: tuple, withstand, csa: float, deciding: float, k: float) -> str:
    if withstand.status == PASS:
        return f"{_working_text(*working)}: S ≥ {withstand.min_mm2:.2f} mm² ≤ {csa:g} mm² — 434.5.2"
    return (f"{_working_text(*working)}: even the published {deciding:,.0f} A²s needs S ≥ {withstand.min_mm2:.2f} mm² > "
            f"{csa:g} mm² (k²S² = {(k * csa) ** 2:,.0f} A²s) — 434.5.2")
