"""`fault-loop`: automatic disconnection in time (BS 7671:2018 411.4 for TN, 411.5 for TT)."""
from __future__ import annotations

from tracker.checks import protection, rules
from tracker.checks.context import Facts
from tracker.checks.registry import CURVE, RATING, RCD, SIZE, CheckSpec, Outcome
from tracker.checks.result import FAIL, PASS, WARN, CheckResult, not_assessed, verdict, words
from tracker.checks.working import figure, record
from tracker.engine import disconnection

ID = "fault-loop"


@record
class FaultLoopWorking:
    zs_ohm: float | None = figure("ohm", "earth fault loop impedance at the far end, Zs = Ze (+ sub-mains) + R1+R2")
    r1_r2_ohm: float | None = figure("ohm", "the circuit's own R1+R2 at operating temperature")
    t_required_s: float | None = figure("s", "disconnection time required (Table 41.1, 411.3.2)")
    max_zs_ohm: float | None = figure("ohm", "maximum Zs for the overcurrent device; null where none is held")


CHECK = CheckSpec(
    id=ID, rank=40, stage=20, name="earth fault loop, Zs", unit="ohm", compare="<=", gauge="Zs / max Zs",
    record=FaultLoopWorking, helps=frozenset({SIZE, RATING, CURVE, RCD}),
)


def _zs_how(f: Facts) -> str:
    ctx = f.ctx
    ze = ctx.supply.ze_ohm
    upstream = ctx.z_ext_ohm - ze if ctx.z_ext_ohm is not None and ze is not None else 0.0
    length = f"{f.circuit.cable.length_m:g} m" + (" / 4 (ring)" if f.circuit.is_ring else "")
    ups = f" + {upstream:.3f} Ω sub-main(s)" if upstream > 1e-9 else ""
    return (f"Zs = Ze {ze:g}{ups} + (R1+R2) ({f.r_line_mohm_per_m:g} + {f.r_cpc_mohm_per_m:g}) mΩ/m × {length} × "
            f"{f.multiplier:.2f} = {f.zs_ohm:.3f} Ω")


def run(f: Facts, done) -> Outcome:
    if f.zs_ohm is None:
        return Outcome(not_assessed(ID, "ohm", "<=", f.zs_why))
    limit, limit_how, _ = protection.max_zs_ohm(f)
    rec = FaultLoopWorking(zs_ohm=f.zs_ohm, r1_r2_ohm=f.loop_ohm, t_required_s=f.t_req_s, max_zs_ohm=limit)
    # The verdict without the working of Zs; its text, the same verdict with it, when shown.
    result = _verdict(f, "", limit, limit_how)
    return Outcome(result.with_detail(""), rec, words(_text, f, limit, limit_how))


def _text(f: Facts, limit: float | None, limit_how: str) -> str:
    return _verdict(f, _zs_how(f), limit, limit_how).detail


def _verdict(f: Facts, how: str, limit: float | None, limit_how: str) -> CheckResult:
    t_txt = f"disconnection in {f.t_req_s:g} s ({'distribution circuit' if f.distribution else 'final circuit'})"
    if f.system == "TT":
        return _tt(f, how, limit, limit_how, t_txt)
    if limit is not None and f.zs_ohm <= limit:
        return CheckResult(ID, PASS, f.zs_ohm, limit, "ohm", "<=",
                           f"{how} ≤ {limit_how}; {t_txt} — 411.4.4")
    if f.rcd_ma is not None:
        rcd_limit = disconnection.max_zs_rcd_ohm(f.rcd_ma)
        ok = f.zs_ohm <= rcd_limit
        device = (f"the {f.label} alone would need Zs ≤ {limit:.2f} Ω" if limit is not None
                  else f"no max Zs held for the {f.label}")
        detail = (f"{how}; {device}, so fault protection relies on the {f.rcd_ma:g} mA RCD: "
                  f"Zs ≤ {disconnection.TOUCH_VOLTAGE_V:g} V / IΔn = {rcd_limit:.0f} Ω (Table 41.5)")
        late = _rcd_too_slow(f, f.zs_ohm)
        if ok and late:
            return CheckResult(ID, FAIL, f.zs_ohm, rcd_limit, "ohm", "<=", f"{detail}; {late}")
        return CheckResult(ID, WARN if ok else FAIL, f.zs_ohm, rcd_limit, "ohm", "<=", detail)
    if limit is None:
        return not_assessed(ID, "ohm", "<=", f"{how}; {limit_how}", value=f.zs_ohm)
    return CheckResult(ID, FAIL, f.zs_ohm, limit, "ohm", "<=",
                       f"{how} > {limit_how}: the {f.label} will not disconnect in {f.t_req_s:g} s — 411.4.4")


def _tt(f: Facts, how: str, limit, limit_how: str, t_txt: str) -> CheckResult:
    sup = f.ctx.supply
    if f.rcd_ma is not None:
        if f.electrode_ohm is not None:
            own = " of the circuit's own electrode" if f.system != sup.system else ""
            ra, ra_how = f.electrode_ohm, f"RA {f.electrode_ohm:g} Ω (electrode_ohm{own})"
        elif f.system != sup.system:
            return not_assessed(ID, "V", "<=", "earthed by its own electrode (tt-electrode) but its "
                                               "resistance is not recorded (circuit electrode_ohm)")
        else:
            ra, ra_how = f.zs_ohm, f"RA ≤ Zs {f.zs_ohm:.2f} Ω (no electrode_ohm given: Zs used as an upper bound)"
        volts = disconnection.touch_voltage_v(ra, f.rcd_ma)
        ok = volts <= disconnection.TOUCH_VOLTAGE_V
        detail = (f"TT: {ra_how} × IΔn {f.rcd_ma:g} mA = {volts:.2f} V {'≤' if ok else '>'} {disconnection.TOUCH_VOLTAGE_V:g} V — 411.5.3")
        status = verdict(ok)
        loop = ra + (f.loop_ohm or 0.0) if f.electrode_ohm is not None else ra   # else ra is Zs itself
        late = _rcd_too_slow(f, loop) if ok else ""
        if late:
            status, detail = FAIL, f"{detail}; {late}"
        elif ok and ra > rules.TT_STABLE_RA_OHM:
            status = WARN
            detail += f"; RA over {rules.TT_STABLE_RA_OHM:g} Ω may not be stable (Table 41.5 note 2)"
        return CheckResult(ID, status, volts, disconnection.TOUCH_VOLTAGE_V, "V", "<=", detail)
    if limit is not None:
        ok = f.zs_ohm <= limit
        detail = (f"TT system with no RCD: fault protection by the {f.label} alone (411.5.4): "
                  f"{how} {'≤' if ok else '>'} {limit_how}")
        return CheckResult(ID, verdict(ok), f.zs_ohm, limit, "ohm", "<=", detail)
    five_s, five_how, _ = protection.max_zs_ohm(f, 5.0)
    if five_s is not None and f.zs_ohm > five_s:
        return CheckResult(ID, FAIL, f.zs_ohm, five_s, "ohm", "<=",
                           f"TT system with no RCD: {how} exceeds even the 5 s limit ({five_how}); "
                           f"the {f.label} cannot give {t_txt} — fit an RCD (411.5.3)")
    return not_assessed(ID, "ohm", "<=", f"TT system with no RCD: {how}; {limit_how}", value=f.zs_ohm)



def _rcd_too_slow(f: Facts, loop_ohm: float) -> str:
    """Why the RCD relied on cannot disconnect within the required time at the fault current
    U0 / loop (a time-delayed RCD on a final circuit, or a current below 2 IΔn); '' where it can."""
    from tracker.checks import protection

    current = f.ctx.supply.u0_v / loop_ohm
    t, how, _ = protection.rcd_time_s(f, current)
    if t is None:
        return f"the earth fault current {current:.3f} A is below the RCD's IΔn: it need not trip (411.3.2)"
    if t > f.t_req_s:
        return f"{how} > the {f.t_req_s:g} s required (Table 41.1)"
    return ""
