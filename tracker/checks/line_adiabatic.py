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
from tracker.checks.registry import CURVE, RATING, SIZE, CheckSpec, Outcome
from tracker.checks.result import PASS, CheckResult, not_assessed, verdict
from tracker.checks.working import IF_KNOWN, figure, record
from tracker.engine import adiabatic

ID = "line-adiabatic"


@record
class LineAdiabaticWorking:
    short_circuit_min_a: float | None = figure("A", "minimum short-circuit current at the far end, U0 / Z(L-N)")
    line_min_mm2: float | None = figure("mm2", "minimum live conductor size, √(I²t)/k (434.5.2)", IF_KNOWN)
    k_line: float | None = figure("", "k of the live conductors (Table 43.1)", IF_KNOWN)


def _needs(circuit) -> tuple[str, ...]:
    # 435.1 deems a device that protects against overload and can break the fault current to
    # protect against short-circuit: that reads capacity and breaking-capacity. A cable sized on
    # Ib has no such protection, and its capacity verdict reads this check instead.
    return () if circuit.overload_exempt else ("capacity", "breaking-capacity")


CHECK = CheckSpec(
    id=ID, rank=60, stage=50, name="live conductors withstand the fault (adiabatic)", unit="mm2", compare=">=",
    gauge="csa min/has", record=LineAdiabaticWorking, helps=frozenset({SIZE, RATING, CURVE}), needs=_needs,
)


def run(f: Facts, done) -> Outcome:
    result, rec = _computed(f)
    capacity, breaking = done.get("capacity"), done.get("breaking-capacity")
    deemed = (not f.circuit.overload_exempt and capacity is not None and breaking is not None
              and capacity.result.status == PASS and breaking.result.status == PASS)
    if not deemed or result.status == PASS:
        return Outcome(result, rec)
    detail = (f"deemed protected against short-circuit: the {f.label} protects the conductors against overload "
              f"(capacity passes) and can break the prospective fault current (435.1); by 434.5.2 with the "
              f"time's upper bound: {result.detail}") if f.explain else ""
    return Outcome(CheckResult(ID, PASS, f.circuit.cable.csa_mm2, None, "mm2", ">=", detail), rec)


def _computed(f: Facts) -> tuple[CheckResult, LineAdiabaticWorking | None]:
    c = f.circuit
    if f.kind is None:
        return not_assessed(ID, "mm2", ">=", f"cable kind {c.cable.kind} not in the catalogue"), None
    if f.zln_far_ohm is None:
        return not_assessed(ID, "mm2", ">=", f.zln_why, value=c.cable.csa_mm2), None
    u0 = f.ctx.supply.u0_v
    current = adiabatic.fault_current_a(u0, f.zln_far_ohm)
    # An RCD does not see a line-neutral fault: only the overcurrent device counts here.
    t, t_how, sure = protection.overcurrent_time_s(f, f.zln_far_ohm)
    if t is None:
        return not_assessed(ID, "mm2", ">=", f"minimum short-circuit current {current:.0f} A: {t_how}",
                            value=c.cable.csa_mm2), LineAdiabaticWorking(short_circuit_min_a=current)
    kind = f.kind
    k = adiabatic.k_factor(kind.conductor_c, kind.fault_final_c)
    energy, e_how = protection.fault_energy_a2s(f, current, t, True)
    t_how, sure = (e_how, True) if e_how else (t_how, sure)
    s_min = adiabatic.min_csa_from_energy_mm2(energy, k)
    rec = LineAdiabaticWorking(short_circuit_min_a=current, line_min_mm2=s_min, k_line=k)
    ok = c.cable.csa_mm2 >= s_min
    detail = (f"minimum short-circuit current at the far end U0/Z(L-N) = {u0:g}/{f.zln_far_ohm:.3f} = "
              f"{current:.0f} A, {t_how}, k {k:.0f} ({kind.conductor_c:g} → {kind.fault_final_c:g} °C, "
              f"Table 43.1): S ≥ {s_min:.2f} mm² {'≤' if ok else '>'} {c.cable.csa_mm2:g} mm² — 434.5.2"
              ) if f.explain else ""
    if not ok and not sure:
        return protection.bound_only(ID, detail, "the conductors", c.cable.csa_mm2, s_min), rec
    return CheckResult(ID, verdict(ok), c.cable.csa_mm2, s_min, "mm2", ">=", detail), rec
