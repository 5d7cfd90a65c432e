"""`cpc-adiabatic`: the protective conductor withstands the earth fault's let-through energy,
k²S² ≥ I²t (BS 7671:2018 543.1.3).

The energy is the device's published let-through where one is held (an MCB/RCBO's
energy-limiting class, or the maker's figure), else I² × a time bound; a bound that the cpc
does not withstand leaves the check not assessed (tracker.checks.protection). Where the energy
grows with the current (a let-through figure), the fault at the board end of the circuit, where
the current is highest, is checked as well as the far end. k by where the cpc runs: Table 54.3
in the cable or bunched with the live singles, 54.2 on its own, 54.4 the armour.
"""
from __future__ import annotations

from tracker import catalogue
from tracker.checks import protection
from tracker.checks.context import ARMOUR, BUNCHED, SEPARATE, Facts
from tracker.checks.registry import CURVE, RATING, RCD, SIZE, CheckSpec, Outcome
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, CheckResult, not_assessed, words
from tracker.checks.working import IF_KNOWN, figure, record
from tracker.engine import adiabatic

ID = "cpc-adiabatic"


@record
class CpcAdiabaticWorking:
    earth_fault_a: float | None = figure("A", "earth fault current at the far end, U0 / Zs")
    cpc_min_mm2: float | None = figure("mm2", "cpc size the deciding energy needs, √(I²t)/k (543.1.3)", IF_KNOWN)
    k_cpc: float | None = figure("", "k of the cpc (Table 54.2, 54.3 or 54.4)", IF_KNOWN)
    t_disconnect_s: float | None = figure("s", "disconnection time bound, where the energy is I² × t", IF_KNOWN)
    cpc_let_through_a2s: float | None = figure("A2s", "the deciding let-through energy I²t", IF_KNOWN)
    earth_fault_board_end_a: float | None = figure("A", "earth fault current at the board end, U0 / Z at the board",
                                                   IF_KNOWN)


CHECK = CheckSpec(
    id=ID, rank=50, stage=30, name="cpc withstands the fault (adiabatic)", unit="mm2", compare=">=",
    gauge="cpc min/has", record=CpcAdiabaticWorking, helps=frozenset({SIZE, RATING, CURVE, RCD}),
)

_ORDER = {FAIL: 0, NOT_ASSESSED: 1, PASS: 2}


def k_cpc(f: Facts) -> tuple[float, str]:
    """k of the cpc by its route (BS 7671:2018 Tables 54.2, 54.3, 54.4)."""
    kind, route = f.kind, f.cpc_route
    if route == ARMOUR:
        kf, what = catalogue.k_factor("armour", kind.conductor_c), "steel armour"
    elif route == SEPARATE:
        # An insulated cpc on its own; a separate cpc beside an armoured cable is taken as 70 °C
        # thermoplastic (the lower k of Table 54.2).
        kf = catalogue.k_factor("cpc", 70 if kind.conductor_c > 70 else kind.conductor_c, "separate")
        what = "separate cpc, not bunched with cables"
    else:
        kf = catalogue.k_factor("cpc", kind.conductor_c, "in-cable")
        what = "cpc bunched with the live conductors" if route == BUNCHED else "cpc in the cable"
    if kf is None:
        k = adiabatic.k_factor(kind.conductor_c, kind.fault_final_c)
        return k, f"k {k:.0f} ({what}, {kind.conductor_c:g} → {kind.fault_final_c:g} °C, IEC 60364-5-54 Annex A)"
    note = "" if kf.k.confirmed else f" [{kf.k.status}]"
    return kf.k.value, (f"k {kf.k.value:g}{note} ({what}, {kf.initial_c:g} → {kf.final_c:g} °C, "
                        f"Table {kf.table})")


def _board_end_applies(f: Facts) -> bool:
    # The let-through figures (class table, maker's) grow with the current; a time bound alone
    # is read at the far end, where the current is least and the time longest (common practice).
    dev = f.circuit.device
    return dev.let_through_a2s is not None or dev.kind in protection.BREAKERS


def run(f: Facts, done) -> Outcome:
    if f.kind is None:
        return Outcome(not_assessed(ID, "mm2", ">=", f"cable kind {f.circuit.cable.kind} not in the catalogue"))
    if f.cpc_mm2 is None:
        return Outcome(not_assessed(ID, "mm2", ">=", f.cpc_how))
    if f.zs_ohm is None:
        return Outcome(not_assessed(ID, "mm2", ">=", f.zs_why, value=f.cpc_mm2))
    u0 = f.ctx.supply.u0_v
    k, k_how = k_cpc(f)
    ends = [("far end", f.zs_ohm)]
    z_board = f.ctx.z_ext_ohm
    if _board_end_applies(f) and z_board is not None and 0 < z_board < f.zs_ohm:
        ends.append(("board end", z_board))
    trials = []
    for where, z in ends:
        energy = protection.fault_energy(f, adiabatic.fault_current_a(u0, z), z, rcd=True)
        trials.append((where, z, protection.withstand(energy, k, f.cpc_mm2)))
    # The deciding end: the worst verdict; among passes, the one needing the larger cpc.
    where, z, withstand = min(trials, key=lambda t: (_ORDER[t[2].status], -(t[2].min_mm2 or 0.0)))
    far_current = trials[0][2].energy.current_a
    e = withstand.energy
    deciding = e.lower_a2s if withstand.status == FAIL else e.upper_a2s
    rec = CpcAdiabaticWorking(earth_fault_a=far_current, cpc_min_mm2=withstand.min_mm2, k_cpc=k, t_disconnect_s=e.t_s,
                              cpc_let_through_a2s=deciding,
                              earth_fault_board_end_a=trials[1][2].energy.current_a if len(trials) > 1 else None)
    extra = f"; {f.cpc_how}" if f.cpc_how else ""
    if e.upper_a2s is None and e.lower_a2s is None:
        return Outcome(not_assessed(ID, "mm2", ">=", f"earth fault current {e.current_a:.0f} A at the {where}: "
                                                      f"{e.how}", value=f.cpc_mm2), rec)
    where_txt = f"at the {where}" if len(trials) > 1 else "at the far end"
    if withstand.status in (PASS, FAIL):
        return Outcome(CheckResult(ID, withstand.status, f.cpc_mm2, withstand.min_mm2, "mm2", ">=", ""), rec,
                       words(_text, f.cpc_mm2, where_txt, u0, z, e, k_how, withstand, deciding, k, extra))
    need = f"S ≥ {withstand.min_mm2:.2f} mm² > cpc {f.cpc_mm2:g} mm²" if withstand.min_mm2 is not None else "no figure"
    return Outcome(not_assessed(ID, "mm2", ">=", f"{_working_text(where_txt, u0, z, e, k_how)}: {need}; "
                                + protection.undecided_reason(withstand, "the cpc", f.label,
                                                              f.circuit.device.kind in protection.BREAKERS)
                                + extra,
                                value=f.cpc_mm2, limit=withstand.min_mm2), rec)


def _working_text(where_txt: str, u0: float, z: float, e, k_how: str) -> str:
    return f"earth fault {where_txt}: I = U0/Z = {u0:g}/{z:.3f} = {e.current_a:.0f} A; {e.how}; {k_how}"


def _text(cpc_mm2: float, where_txt: str, u0: float, z: float, e, k_how: str, withstand, deciding: float, k: float,
          extra: str) -> str:
    working = _working_text(where_txt, u0, z, e, k_how)
    if withstand.status == PASS:
        return f"{working}: S ≥ √(I²t)/k = {withstand.min_mm2:.2f} mm² ≤ cpc {cpc_mm2:g} mm² — 543.1.3{extra}"
    return (f"{working}: even the published {deciding:,.0f} A²s needs S ≥ {withstand.min_mm2:.2f} mm² > cpc "
            f"{cpc_mm2:g} mm² (k²S² = {(k * cpc_mm2) ** 2:,.0f} A²s) — 543.1.3{extra}")
