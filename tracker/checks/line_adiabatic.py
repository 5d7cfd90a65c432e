"""`line-adiabatic`: the live conductors withstand the minimum short-circuit current at the far
end of the circuit for the device's disconnection time, S ≥ sqrt(I² t) / k (BS 7671:2018
434.5.2).

Where the same device protects the conductors against overload (the capacity check passes on the
device's rating) and can break the prospective fault current (the breaking-capacity check passes),
BS 7671 435.1 deems it to protect them against short-circuit too, and the check passes on that
rule (the computed bound is kept in the working). A cable sized on Ib (`overload_exempt`) has no
such protection: 434.5.2 is applied to it, always.
"""
from __future__ import annotations

from tracker.checks import protection
from tracker.checks.context import Facts
from tracker.checks.result import PASS, CheckResult, not_assessed, verdict
from tracker.engine import adiabatic

ID = "line-adiabatic"


def run(f: Facts, w: dict, capacity: CheckResult | None = None, breaking: CheckResult | None = None) -> CheckResult:
    result = _computed(f, w)
    deemed = (not f.circuit.overload_exempt and capacity is not None and breaking is not None
              and capacity.status == PASS and breaking.status == PASS)
    if not deemed or result.status == PASS:
        return result
    detail = (f"deemed protected against short-circuit: the {f.label} protects the conductors against overload "
              f"(capacity passes) and can break the prospective fault current (435.1); by 434.5.2 with the "
              f"time's upper bound: {result.detail}") if f.explain else ""
    return CheckResult(ID, PASS, f.circuit.cable.csa_mm2, None, "mm2", ">=", detail)


def _computed(f: Facts, w: dict) -> CheckResult:
    c = f.circuit
    if f.kind is None:
        return not_assessed(ID, "mm2", ">=", f"cable kind {c.cable.kind} not in the catalogue")
    if f.zln_far_ohm is None:
        return not_assessed(ID, "mm2", ">=", f.zln_why, value=c.cable.csa_mm2)
    u0 = f.ctx.supply.u0_v
    current = adiabatic.fault_current_a(u0, f.zln_far_ohm)
    # An RCD does not see a line-neutral fault: only the overcurrent device counts here.
    t, t_how, sure = protection.overcurrent_time_s(f, f.zln_far_ohm)
    w["short_circuit_min_a"] = current
    if t is None:
        return not_assessed(ID, "mm2", ">=", f"minimum short-circuit current {current:.0f} A: {t_how}",
                            value=c.cable.csa_mm2)
    kind = f.kind
    k = adiabatic.k_factor(kind.conductor_c, kind.fault_final_c)
    energy, e_how = protection.fault_energy_a2s(f, current, t, True)
    t_how, sure = (e_how, True) if e_how else (t_how, sure)
    s_min = adiabatic.min_csa_from_energy_mm2(energy, k)
    w.update(line_min_mm2=s_min, k_line=k)
    ok = c.cable.csa_mm2 >= s_min
    detail = (f"minimum short-circuit current at the far end U0/Z(L-N) = {u0:g}/{f.zln_far_ohm:.3f} = "
              f"{current:.0f} A, {t_how}, k {k:.0f} ({kind.conductor_c:g} → {kind.fault_final_c:g} °C, "
              f"Table 43.1): S ≥ {s_min:.2f} mm² {'≤' if ok else '>'} {c.cable.csa_mm2:g} mm² — 434.5.2"
              ) if f.explain else ""
    if not ok and not sure:
        return protection.bound_only(ID, detail, "the conductors", c.cable.csa_mm2, s_min)
    return CheckResult(ID, verdict(ok), c.cable.csa_mm2, s_min, "mm2", ">=", detail)
