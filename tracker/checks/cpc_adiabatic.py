"""`cpc-adiabatic`: the protective conductor withstands the earth fault for the disconnection
time, S ≥ sqrt(I² t) / k (BS 7671:2018 543.1.3)."""
from __future__ import annotations

from tracker.checks import protection
from tracker.checks.context import Facts
from tracker.checks.registry import CURVE, RATING, RCD, SIZE, CheckSpec, Outcome
from tracker.checks.result import CheckResult, not_assessed, verdict
from tracker.checks.working import IF_KNOWN, figure, record
from tracker.engine import adiabatic

ID = "cpc-adiabatic"


@record
class CpcAdiabaticWorking:
    earth_fault_a: float | None = figure("A", "earth fault current at the far end, U0 / Zs")
    cpc_min_mm2: float | None = figure("mm2", "minimum cpc size, √(I²t)/k (543.1.3)", IF_KNOWN)
    k_cpc: float | None = figure("", "k of the cpc (Table 54.2 or 54.3)", IF_KNOWN)
    t_disconnect_s: float | None = figure("s", "disconnection time taken for the fault", IF_KNOWN)


CHECK = CheckSpec(
    id=ID, rank=50, stage=30, name="cpc withstands the fault (adiabatic)", unit="mm2", compare=">=",
    gauge="cpc min/has", record=CpcAdiabaticWorking, helps=frozenset({SIZE, RATING, CURVE, RCD}),
)


def k_cpc(f: Facts) -> tuple[float, str]:
    kind = f.kind
    if kind.cpc == "separate":
        # Insulated protective conductor not incorporated in a cable: initial 30 °C (Table 54.2).
        k = adiabatic.k_factor(30.0, kind.fault_final_c)
        return k, f"k {k:.0f} (separate cpc, 30 → {kind.fault_final_c:g} °C, Table 54.2)"
    k = adiabatic.k_factor(kind.conductor_c, kind.fault_final_c)
    return k, f"k {k:.0f} (cpc in the cable, {kind.conductor_c:g} → {kind.fault_final_c:g} °C, Table 54.3)"


def run(f: Facts, done) -> Outcome:
    if f.kind is None:
        return Outcome(not_assessed(ID, "mm2", ">=", f"cable kind {f.circuit.cable.kind} not in the catalogue"))
    if f.cpc_mm2 is None:
        return Outcome(not_assessed(ID, "mm2", ">=", f.cpc_how))
    if f.zs_ohm is None:
        return Outcome(not_assessed(ID, "mm2", ">=", f.zs_why, value=f.cpc_mm2))
    u0 = f.ctx.supply.u0_v
    current = adiabatic.fault_current_a(u0, f.zs_ohm)
    t_dev, dev_how, dev_sure = protection.overcurrent_time_s(f, f.zs_ohm)
    t_rcd, rcd_how, rcd_sure = protection.rcd_time_s(f, current)
    options = []
    for t, how, sure, by_device in ((t_dev, dev_how, dev_sure, True), (t_rcd, rcd_how, rcd_sure, False)):
        if t is not None:
            energy, e_how = protection.fault_energy_a2s(f, current, t, by_device)
            options.append((energy, t, e_how or how, sure or bool(e_how)))
    if not options:
        return Outcome(not_assessed(ID, "mm2", ">=", f"earth fault current {current:.0f} A: {dev_how}",
                                    value=f.cpc_mm2), CpcAdiabaticWorking(earth_fault_a=current))
    energy, t, t_how, sure = min(options)
    k, k_how = k_cpc(f)
    s_min = adiabatic.min_csa_from_energy_mm2(energy, k)
    rec = CpcAdiabaticWorking(earth_fault_a=current, cpc_min_mm2=s_min, k_cpc=k, t_disconnect_s=t)
    ok = f.cpc_mm2 >= s_min
    extra = f"; {f.cpc_how}" if f.cpc_how else ""
    working = (f"I = U0/Zs = {u0:g}/{f.zs_ohm:.3f} = {current:.0f} A, {t_how}, {k_how}: "
               f"S ≥ √(I²t)/k = {s_min:.2f} mm² {'≤' if ok else '>'} cpc {f.cpc_mm2:g} mm² — 543.1.3{extra}"
               ) if f.explain else ""
    if not ok and not sure:
        return Outcome(protection.bound_only(ID, working, "the cpc", f.cpc_mm2, s_min), rec)
    return Outcome(CheckResult(ID, verdict(ok), f.cpc_mm2, s_min, "mm2", ">=", working), rec)
