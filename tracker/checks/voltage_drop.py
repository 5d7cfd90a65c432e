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
from tracker.checks.result import CheckResult, fmt, not_assessed, verdict, words
from tracker.checks.working import IF_KNOWN, INTERNAL, figure, record
from tracker.engine import three_phase as tp
from tracker.engine import voltage_drop as vd
from tracker.model import PHASES

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
    # Three-phase circuits: volts to neutral from the origin to the far end, per line L1, L2, L3.
    end_phase_v: tuple | None = figure("V", "volts to neutral at the far end per line", INTERNAL)


def _cause_upstream(result) -> bool:
    # Nothing on this circuit can help once the board itself is at the limit (on its line).
    ctx, check = result.ctx, result.check(ID)
    upstream = ctx.line_vd_v(result.circuit.phase)
    return upstream is not None and check.limit is not None and upstream >= check.limit / 100.0 * ctx.supply.u0_v


def _needs(circuit) -> tuple[str, ...]:
    # Ct reads the rating factors the capacity check found.
    return ("capacity",)


CHECK = CheckSpec(
    id=ID, rank=30, stage=60, name="voltage drop", unit="%", compare="<=", gauge="drop / limit",
    record=VoltageDropWorking, helps=frozenset({SIZE}), load_dependent=always_on_load, cause_upstream=_cause_upstream,
    needs=_needs,
)


def circuit_drop(f: Facts) -> tuple[float | None, float | None, str]:
    """(volts dropped in this circuit at Ib, volts per extra ampere, mV/A/m note)."""
    c = f.circuit
    if f.kind is None:
        return None, None, f"cable kind {c.cable.kind} not in the catalogue"
    mv = f.kind.voltage_drop(c.cable.csa_mm2, f.phases)
    if mv is None:
        three = " (three-phase)" if f.phases == 3 else ""
        return None, None, f"no mV/A/m{three} held for {c.cable.csa_mm2:g} mm² {f.kind.kind}"
    if f.phases == 3:
        # line-to-line volts at Ib, and volts to neutral per extra (balanced) ampere
        volts = tp.voltage_drop_three_phase_v(mv.value, f.ib_vd_a, c.cable.length_m)
        per_a = tp.phase_drop_v(mv.value, 1.0, 0.0, c.cable.length_m)
        status = "" if mv.confirmed else f" [{mv.status}]"
        return volts, per_a, f"{fmt(mv.value)} mV/A/m three-phase{status}"
    volts = vd.voltage_drop_v(mv.value, f.ib_vd_a, c.cable.length_m, c.is_ring)
    per_a = vd.voltage_drop_v(mv.value, 1.0, c.cable.length_m, c.is_ring)
    status = "" if mv.confirmed else f" [{mv.status}]"
    return volts, per_a, f"{fmt(mv.value)} mV/A/m{status}"


def run(f: Facts, done) -> Outcome:
    if f.phases == 3:
        return _run_three_phase(f)
    c, sup = f.circuit, f.ctx.supply
    lighting = f.lighting and not f.distribution
    limit_pct = vd.voltage_drop_limit_pct(lighting, sup.private)
    use = "lighting" if lighting else "other uses"
    src = "private supply" if sup.private else "public supply"
    volts, per_a, mv_note = circuit_drop(f)
    if volts is None:
        return Outcome(not_assessed(ID, "%", "<=", mv_note, limit=limit_pct))
    upstream_v = f.ctx.line_vd_v(c.phase)
    if upstream_v is None:
        return Outcome(not_assessed(ID, "%", "<=", f.ctx.unknown_vd, limit=limit_pct), VoltageDropWorking(per_a_v=per_a))
    strict_v = volts
    ct_of = _ct_function(f, done.get("capacity"))
    ct = ct_of(f.ib_a) if ct_of is not None else None
    if ct is not None and ct >= 1.0:
        ct = None                     # at or above its maximum temperature: the tabulated figure
    if ct is not None:
        volts = strict_v * ct
    total_v = upstream_v + volts
    pct = total_v / sup.u0_v * 100.0
    limit_v = limit_pct / 100.0 * sup.u0_v
    ok = pct <= limit_pct
    text = words(_text, f, mv_note, strict_v, ct, volts, upstream_v, total_v, pct, ok, limit_pct, use, src)
    # Extra current on this circuit also flows through every sub-main above it.
    slope = per_a + f.ctx.v_per_a
    ib_limit = None
    if f.ib_a is not None and slope > 0:
        if ct_of is None:
            ib_limit = f.ib_a + (limit_v - total_v) / slope
        else:
            ib_limit = _current_at_limit(f, per_a, ct_of, limit_v)
    rec = VoltageDropWorking(vd_circuit_v=volts, vd_strict_v=strict_v if ct is not None else None, ct=ct,
                             vd_upstream_v=upstream_v, vd_total_pct=pct, mv_per_a_m=mv_note,
                             vd_slack_v=limit_v - total_v, end_v=total_v, per_a_v=per_a)
    return Outcome(CheckResult(ID, verdict(ok), pct, limit_pct, "%", "<=", "", ib_limit_a=ib_limit), rec, text)


def _text(f: Facts, mv_note: str, strict_v: float, ct: float | None, volts: float, upstream_v: float,
          total_v: float, pct: float, ok: bool, limit_pct: float, use: str, src: str) -> str:
    c, sup = f.circuit, f.ctx.supply
    length = f"{c.cable.length_m:g} m" + (" / 4 (ring, load at the midpoint)" if c.is_ring else "")
    ib_note = "" if f.ib_a is not None else " (Ib unknown: In used)"
    on_line = f" on {c.phase}" if f.ctx.vd_phase_v is not None and c.phase else ""
    upstream = f" + {upstream_v:.2f} V upstream{on_line} = {total_v:.2f} V" if upstream_v else ""
    corrected = ""
    if ct is not None:
        corrected = (f" × Ct {ct:.3f} (conductor below its maximum temperature, Appendix 4 section 6.1) = "
                     f"{volts:.2f} V")
    text = (f"{mv_note} × {f.ib_vd_a:.2f} A{ib_note} × {length} = {strict_v:.2f} V{corrected}{upstream} = "
            f"{pct:.2f} % of {sup.u0_v:g} V {'≤' if ok else '>'} {limit_pct:g} % ({use}, {src}; "
            "Appendix 4 Table 4Ab)")
    if ct is not None:
        strict_pct = (upstream_v + strict_v) / sup.u0_v * 100.0
        text += f"; at the tabulated maximum conductor temperature {strict_pct:.2f} %"
    return text


def _ct_function(f: Facts, capacity=None):
    """Ct as a function of the circuit's current, where the rule set and the circuit allow the
    correction (BS 7671:2018 Appendix 4 section 6.1), else None. Ct(I) = a + b I² (the formula
    rearranged), held at 1 from the current that brings the conductor to its maximum temperature:
    the correction is for a conductor below it."""
    c = f.circuit
    if (not rules.VOLTAGE_DROP_AT_CONDUCTOR_TEMPERATURE or f.ib_a is None or c.is_ring or f.kind is None
            or c.cable.csa_mm2 > rules.CT_MAX_CSA_MM2 or c.environment.insulation_mm > 0 or c.cable.method == "D"):
        return None
    rec = capacity.record if capacity is not None else None
    if rec is None or rec.iz_a is None or not rec.it_a:
        return None
    tp, ca, cg, it = f.kind.conductor_c, rec.ca, rec.cg, rec.it_a
    a = vd.conductor_temperature_factor(tp, ca, cg, 0.0, it)
    b = vd.conductor_temperature_factor(tp, ca, cg, 1.0, it) - a
    return _Ct(a, b)


class _Ct:
    __slots__ = ("a", "b")

    def __init__(self, a: float, b: float):
        self.a, self.b = a, b

    def __call__(self, current_a: float) -> float:
        return min(1.0, self.a + self.b * current_a * current_a)


def _current_at_limit(f: Facts, per_a: float, ct: _Ct, limit_v: float) -> float:
    """The Ib at which the corrected drop reaches the limit: upstream drop (rising by the
    sub-mains' volts per ampere) + per_a × I × Ct(I) = limit."""
    base = f.ctx.line_vd_v(f.circuit.phase) - f.ctx.v_per_a * f.ib_a
    up = f.ctx.v_per_a
    strict = (limit_v - base) / (per_a + up)      # with Ct = 1: the corrected drop is never larger
    if ct(strict) >= 1.0:
        return strict
    # Below the cap the drop is a cubic in I, rising: base + up I + per_a (a I + b I³) = limit.
    # Newton's method from the no-load straight line, which lies beyond the root.
    i = (limit_v - base) / (per_a * ct.a + up)
    for _ in range(50):
        g = base + up * i + per_a * i * (ct.a + ct.b * i * i) - limit_v
        step = g / (up + per_a * (ct.a + 3.0 * ct.b * i * i))
        i -= step
        if abs(step) < 1e-9:
            break
    return i


def _run_three_phase(f: Facts) -> Outcome:
    """A three-phase circuit: the three-phase mV/A/m (Appendix 4 section 6) gives the line-to-line
    drop at Ib; each line's drop to neutral is added to that line's drop above the board
    (`tracker.engine.three_phase.phase_drop_v`, with the neutral current of unbalanced lines), and
    the worst line, in % of U0, is held against the limit — for a balanced circuit the same figure
    as the line-to-line drop in % of U_L."""
    c, sup, ctx = f.circuit, f.ctx.supply, f.ctx
    lighting = f.lighting and not f.distribution
    limit_pct = vd.voltage_drop_limit_pct(lighting, sup.private)
    use = "lighting" if lighting else "other uses"
    src = "private supply" if sup.private else "public supply"
    volts, per_a, mv_note = circuit_drop(f)
    if volts is None:
        return Outcome(not_assessed(ID, "%", "<=", mv_note, limit=limit_pct))
    if ctx.vd_phase_v is None:
        why = ctx.unknown_vd or "the drop to the board on each line is unknown"
        return Outcome(not_assessed(ID, "%", "<=", why, limit=limit_pct), VoltageDropWorking(per_a_v=per_a))
    mv = f.kind.voltage_drop(c.cable.csa_mm2, 3).value
    currents = f.ib_phases_a if f.ib_phases_a is not None else (f.ib_vd_a,) * 3
    neutral = tp.neutral_current_a(*currents)
    ends = tuple(up + tp.phase_drop_v(mv, i, neutral, c.cable.length_m) for up, i in zip(ctx.vd_phase_v, currents))
    worst_k = max(range(3), key=lambda k: ends[k])
    total_v = ends[worst_k]
    u_line = sup.u_line_v or tp.line_voltage_v(sup.u0_v)
    pct = total_v / sup.u0_v * 100.0
    limit_v = limit_pct / 100.0 * sup.u0_v
    ok = pct <= limit_pct
    text = words(_three_phase_text, f, mv_note, volts, worst_k, neutral, total_v, pct, u_line, ok, limit_pct, use, src)
    slope = per_a + ctx.v_per_a
    ib_limit = None
    if f.ib_a is not None and slope > 0:
        ib_limit = f.ib_a + (limit_v - total_v) / slope
    rec = VoltageDropWorking(vd_circuit_v=volts, vd_upstream_v=ctx.vd_phase_v[worst_k], vd_total_pct=pct,
                             mv_per_a_m=mv_note, vd_slack_v=limit_v - total_v, end_v=total_v, per_a_v=per_a,
                             end_phase_v=ends)
    return Outcome(CheckResult(ID, verdict(ok), pct, limit_pct, "%", "<=", "", ib_limit_a=ib_limit), rec, text)


def _three_phase_text(f: Facts, mv_note: str, volts: float, worst_k: int, neutral: float, total_v: float,
                      pct: float, u_line: float, ok: bool, limit_pct: float, use: str, src: str) -> str:
    c, sup = f.circuit, f.ctx.supply
    ib_note = "" if f.ib_a is not None else " (Ib unknown: In used)"
    upstream = f.ctx.vd_phase_v[worst_k]
    n_note = f", neutral {neutral:.2f} A" if neutral > 0.005 else ""
    return (f"{mv_note} × {f.ib_vd_a:.2f} A{ib_note} × {c.cable.length_m:g} m = {volts:.2f} V line to line; "
            f"worst line {PHASES[worst_k]}: {upstream:.2f} V upstream + its share {total_v - upstream:.2f} V"
            f"{n_note} = {total_v:.2f} V to neutral = {pct:.2f} % of {sup.u0_v:g} V (as % of U_L "
            f"{u_line:g} V for balanced lines) {'≤' if ok else '>'} {limit_pct:g} % ({use}, {src}; "
            "Appendix 4 Table 4Ab)")
