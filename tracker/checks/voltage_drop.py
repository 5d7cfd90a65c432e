"""`voltage-drop`: cumulative from the origin, % of U0, against the limit for the use
(BS 7671:2018 525.202 and Appendix 4 Table 4Ab).

The tabulated mV/A/m are for a conductor at its maximum operating temperature. Appendix 4
section 6.1 lets the drop of a conductor running cooler be corrected by Ct; the bs7671 rule set
takes the corrected figure for the verdict where it applies (a radial circuit of conductors up to
16 mm², whose drop is all resistive, with Ib known, in air and not in thermal insulation), and
the working shows both.
"""
from __future__ import annotations

from tracker.checks import rules
from tracker.checks.context import Facts
from tracker.checks.registry import SIZE, CheckSpec, Outcome, always_on_load
from tracker.checks.result import CheckResult, fmt, not_assessed, verdict
from tracker.checks.working import IF_KNOWN, INTERNAL, figure, record
from tracker.engine import voltage_drop as vd

ID = "voltage-drop"


@record
class VoltageDropWorking:
    vd_circuit_v: float | None = figure("V", "volts dropped in this circuit at Ib (after Ct where it applies)",
                                        IF_KNOWN)
    vd_strict_v: float | None = figure("V", "the same from the tabulated mV/A/m, conductor at its maximum "
                                            "temperature", IF_KNOWN)
    ct: float | None = figure("", "Appendix 4 section 6.1 correction Ct for the conductor's real temperature",
                              IF_KNOWN)
    vd_upstream_v: float | None = figure("V", "volts dropped from the origin to the board", IF_KNOWN)
    vd_total_pct: float | None = figure("%", "total drop from the origin, in % of U0", IF_KNOWN)
    mv_per_a_m: str | None = figure("", "the cable's mV/A/m, with its data status", IF_KNOWN, kind=str)
    vd_slack_v: float | None = figure("V", "volts left before the limit (negative: over)", IF_KNOWN)
    end_v: float | None = figure("V", "volts dropped from the origin to the far end", INTERNAL)
    per_a_v: float | None = figure("V", "this circuit's own volts per extra ampere", INTERNAL)


def _cause_upstream(result) -> bool:
    # Nothing on this circuit can help once the board itself is at the limit.
    ctx, check = result.ctx, result.check(ID)
    return ctx.vd_v is not None and check.limit is not None and ctx.vd_v >= check.limit / 100.0 * ctx.supply.u0_v


CHECK = CheckSpec(
    id=ID, rank=30, stage=60, name="voltage drop", unit="%", compare="<=", gauge="drop / limit",
    record=VoltageDropWorking, helps=frozenset({SIZE}), load_dependent=always_on_load, cause_upstream=_cause_upstream,
)


def circuit_drop(f: Facts) -> tuple[float | None, float | None, str]:
    """(volts dropped in this circuit at Ib, volts per extra ampere, mV/A/m note)."""
    c = f.circuit
    if f.kind is None:
        return None, None, f"cable kind {c.cable.kind} not in the catalogue"
    mv = f.kind.voltage_drop(c.cable.csa_mm2)
    if mv is None:
        return None, None, f"no mV/A/m held for {c.cable.csa_mm2:g} mm² {f.kind.kind}"
    volts = vd.voltage_drop_v(mv.value, f.ib_vd_a, c.cable.length_m, c.is_ring)
    per_a = vd.voltage_drop_v(mv.value, 1.0, c.cable.length_m, c.is_ring)
    status = "" if mv.confirmed else f" [{mv.status}]"
    return volts, per_a, f"{fmt(mv.value)} mV/A/m{status}"


def run(f: Facts, done) -> Outcome:
    c, sup = f.circuit, f.ctx.supply
    lighting = f.lighting and not f.distribution
    limit_pct = vd.voltage_drop_limit_pct(lighting, sup.private)
    use = "lighting" if lighting else "other uses"
    src = "private supply" if sup.private else "public supply"
    volts, per_a, mv_note = circuit_drop(f)
    if volts is None:
        return Outcome(not_assessed(ID, "%", "<=", mv_note, limit=limit_pct))
    if f.ctx.vd_v is None:
        return Outcome(not_assessed(ID, "%", "<=", f.ctx.unknown_vd, limit=limit_pct), VoltageDropWorking(per_a_v=per_a))
    strict_v = volts
    ct_of = _ct_function(f)
    ct = ct_of(f.ib_a) if ct_of is not None else None
    if ct is not None:
        volts = strict_v * ct
    total_v = f.ctx.vd_v + volts
    pct = total_v / sup.u0_v * 100.0
    limit_v = limit_pct / 100.0 * sup.u0_v
    length = f"{c.cable.length_m:g} m" + (" / 4 (ring, load at the midpoint)" if c.is_ring else "")
    ib_note = "" if f.ib_a is not None else " (Ib unknown: In used)"
    upstream = f" + {f.ctx.vd_v:.2f} V upstream = {total_v:.2f} V" if f.ctx.vd_v else ""
    ok = pct <= limit_pct
    corrected = ""
    if ct is not None:
        strict_pct = (f.ctx.vd_v + strict_v) / sup.u0_v * 100.0
        corrected = (f" × Ct {ct:.3f} (conductor below its maximum temperature, Appendix 4 section 6.1) = "
                     f"{volts:.2f} V")
    detail = (f"{mv_note} × {f.ib_vd_a:.2f} A{ib_note} × {length} = {strict_v:.2f} V{corrected}{upstream} = "
              f"{pct:.2f} % of {sup.u0_v:g} V {'≤' if ok else '>'} {limit_pct:g} % ({use}, {src}; "
              "Appendix 4 Table 4Ab)"
              + (f"; at the tabulated maximum conductor temperature {strict_pct:.2f} %" if ct is not None else "")
              ) if f.explain else ""
    # Extra current on this circuit also flows through every sub-main above it.
    slope = per_a + f.ctx.v_per_a
    ib_limit = None
    if f.ib_a is not None and slope > 0:
        if ct_of is None:
            ib_limit = f.ib_a + (limit_v - total_v) / slope
        else:
            ib_limit = _current_at_limit(f, per_a, ct_of, limit_v)
    rec = VoltageDropWorking(vd_circuit_v=volts, vd_strict_v=strict_v if ct is not None else None, ct=ct,
                             vd_upstream_v=f.ctx.vd_v, vd_total_pct=pct, mv_per_a_m=mv_note,
                             vd_slack_v=limit_v - total_v, end_v=total_v, per_a_v=per_a)
    return Outcome(CheckResult(ID, verdict(ok), pct, limit_pct, "%", "<=", detail, ib_limit_a=ib_limit), rec)


def _ct_function(f: Facts):
    """Ct as a function of the circuit's current, where the rule set and the circuit allow the
    correction (BS 7671:2018 Appendix 4 section 6.1), else None."""
    c = f.circuit
    if (not rules.VOLTAGE_DROP_AT_CONDUCTOR_TEMPERATURE or f.ib_a is None or c.is_ring or f.kind is None
            or c.cable.csa_mm2 > rules.CT_MAX_CSA_MM2 or c.environment.insulation_mm > 0 or c.cable.method == "D"):
        return None
    from tracker.checks.capacity import rated_capacity
    iz, _, fac = rated_capacity(f)
    if iz is None or not fac.get("it_a"):
        return None
    tp, ca, cg, it = f.kind.conductor_c, fac["ca"], fac["cg"], fac["it_a"]
    return lambda ib_a: vd.conductor_temperature_factor(tp, ca, cg, ib_a, it)


def _current_at_limit(f: Facts, per_a: float, ct_of, limit_v: float) -> float:
    """The Ib at which the corrected drop reaches the limit: upstream drop (rising by the
    sub-mains' volts per ampere) + per_a × I × Ct(I) = limit, by bisection (the drop rises with I)."""
    ib = f.ib_a

    def total(i: float) -> float:
        return f.ctx.vd_v + f.ctx.v_per_a * (i - ib) + per_a * i * ct_of(i)

    span = 10.0 * (f.in_a + ib) + 100.0
    lo, hi = -span, span
    for _ in range(80):
        mid = (lo + hi) / 2.0
        if total(mid) > limit_v:
            hi = mid
        else:
            lo = mid
    return lo
