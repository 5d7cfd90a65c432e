"""`continuity`: the model reconciled with the measurement. The R1+R2 the modelled cable should
measure (IEC 60228 resistances at the test temperature) against the measured value, with the route
length the measurement implies; for a ring final circuit the end-to-end tests (r1 ≈ rn within
0.05 Ω, R1+R2 ≈ (r1 + r2)/4 within 0.05 Ω: the ring test of common practice, IET Guidance Note 3);
and records that cannot be measurements (the same readings on many circuits, a Zs far from
Ze + R1+R2)."""
from __future__ import annotations

from tracker.checks.context import Facts
from tracker.checks.registry import CheckSpec, Outcome
from tracker.checks.readings import Readings
from tracker.checks.result import FAIL, PASS, WARN, CheckResult, fmt, not_assessed, worst
from tracker.checks.working import IF_KNOWN, figure, record
from tracker.engine import measured

ID = "continuity"
# A measurement reconciles with the model within the larger of these (izwatch's own tolerance, not
# a published figure: route lengths are estimates, and instruments and lead nulling give a few
# hundredths of an ohm).
ABS_TOLERANCE_OHM = 0.05
REL_TOLERANCE = 0.20
# Zs against Ze + (R1+R2) measured at the same inspection (the cross-check of common practice),
# within the larger of these (own tolerance: a loop test's own scatter).
LOOP_TOLERANCE_OHM = 0.10
LOOP_REL_TOLERANCE = 0.20



@record
class ContinuityWorking:
    r1_r2_measured_ohm: float | None = figure("ohm", "R1+R2 measured")
    r1_r2_expected_ohm: float | None = figure("ohm", "R1+R2 of the modelled cable at the test temperature (IEC 60228)",
                                              IF_KNOWN)
    implied_length_m: float | None = figure("m", "the route length the reading implies (a ring: end to end)", IF_KNOWN)
    continuity_measured_on: str | None = figure("", "the day of the inspection (YYYY-MM-DD)", IF_KNOWN, str)


CHECK = CheckSpec(
    id=ID, rank=140, stage=110, name="continuity against the model", unit="ohm", compare="<=",
    gauge=None, record=ContinuityWorking,
    fix=("trace the route: look for a hidden joint, an unrecorded spur or a broken ring conductor; put the "
         "wiring or the record right and test again (common practice)"),
)

_FIELDS = {'r1_r2_measured_ohm': 'r1_r2_measured_ohm', 'r1_r2_expected_ohm': 'r1_r2_expected_ohm', 'implied_length_m': 'implied_length_m', 'measured_on': 'continuity_measured_on'}


def run(f: Facts, done) -> Outcome:
    """The check on the circuit's latest readings (`f.readings`); not assessed where none."""
    result, figures = assess(f, f.readings)
    if not figures:
        return Outcome(result)
    return Outcome(result, ContinuityWorking(**{_FIELDS[k]: v for k, v in figures.items() if k in _FIELDS}))

def _tolerance(expected: float) -> float:
    return max(ABS_TOLERANCE_OHM, REL_TOLERANCE * expected)


def assess(f: Facts, rd: Readings | None) -> tuple[CheckResult, dict]:
    m = rd.measurement if rd is not None else None
    ring = m.ring if m is not None else None
    ring_given = ring is not None and any(v is not None for v in (ring.r1_ohm, ring.rn_ohm, ring.r2_ohm))
    if m is None or (m.r1_r2_ohm is None and not ring_given):
        return not_assessed(ID, "ohm", "<=", "nothing measured (no r1_r2_ohm or ring readings in an "
                                             "inspection's results)"), {}
    working: dict = {"measured_on": rd.date.isoformat()}
    findings: list[tuple[str, str]] = []
    value = limit = None
    temp = rd.test_temp_c
    c = f.circuit
    per_m = (f.r_line_mohm_per_m, f.r_cpc_mohm_per_m)
    model_known = None not in per_m
    cable = f"{c.cable.length_m:g} m of {c.cable.csa_mm2:g}/{f.cpc_mm2:g} mm²" if f.cpc_mm2 else ""
    if m.r1_r2_ohm is not None:
        value = m.r1_r2_ohm
        working["r1_r2_measured_ohm"] = value
        if model_known:
            expected = measured.expected_r1_r2_ohm(*per_m, c.cable.length_m, temp, c.is_ring)
            implied = measured.implied_length_m(m.r1_r2_ohm, *per_m, temp, c.is_ring)
            limit = expected + _tolerance(expected)
            working.update(r1_r2_expected_ohm=expected, implied_length_m=implied)
            findings.append(_against_model(m.r1_r2_ohm, expected, implied, c.cable.length_m, cable, temp, c.is_ring))
        else:
            findings.append((PASS, f"R1+R2 {fmt(m.r1_r2_ohm, 3)} Ω recorded; no conductor resistance held to "
                                   "compare it with the model"))
    if c.is_ring and ring_given:
        findings.extend(_ring(f, m, ring, per_m if model_known else None, temp))
    elif ring_given:
        findings.append((WARN, "ring readings recorded for a circuit the site file models as radial "
                               "(topology: ring?)"))
    if rd.copies:
        others = ", ".join(rd.copies[:4]) + (" …" if len(rd.copies) > 4 else "")
        findings.append((WARN, f"the same R1+R2 and Zs are recorded on {len(rd.copies)} other circuit"
                               f"{'s' if len(rd.copies) > 1 else ''} of other cables ({others}) at that "
                               "inspection: a copied record, not a measurement?"))
    findings.extend(_loop_cross_check(f, rd))
    status = worst(s for s, _ in findings) if findings else PASS
    head = f"measured {rd.date.isoformat()}: "
    return CheckResult(ID, status, value, limit, "ohm", "<=", head + "; ".join(t for _, t in findings)), working


def _against_model(r1_r2: float, expected: float, implied: float, length_m: float, cable: str, temp: float,
                   ring: bool) -> tuple[str, str]:
    what = "the ring's R1+R2 ((r1 + r2)/4)" if ring else "R1+R2"
    base = (f"{what} {fmt(r1_r2, 3)} Ω against {fmt(expected, 3)} Ω expected for {cable} "
            f"(IEC 60228 at {temp:g} °C{', ÷ 4' if ring else ''}): the reading implies {implied:.0f} m "
            f"{'of ring' if ring else 'of route'} against {length_m:g} m modelled")
    tol = _tolerance(expected)
    if r1_r2 - expected > tol:
        return FAIL, (base + " — a hidden joint, a spur or a wrong record: the loop impedance and voltage drop "
                             "worked from the model may be understated")
    if expected - r1_r2 > tol:
        return WARN, base + " — the model is on the safe side; correct length_m if the reading is right"
    return PASS, base + " (within the tolerance)"


def _ring(f: Facts, m, ring, per_m, temp: float) -> list[tuple[str, str]]:
    out = []
    r1, rn, r2 = ring.r1_ohm, ring.rn_ohm, ring.r2_ohm
    tol = measured.RING_TOLERANCE_OHM
    if r1 is not None and rn is not None:
        if measured.ring_ends_agree(r1, rn):
            out.append((PASS, f"ring ends r1 {fmt(r1, 3)} Ω and rn {fmt(rn, 3)} Ω agree within {tol:g} Ω"))
        else:
            out.append((FAIL, f"ring ends r1 {fmt(r1, 3)} Ω and rn {fmt(rn, 3)} Ω differ by {abs(r1 - rn):.3f} Ω "
                              f"(> {tol:g} Ω): a loose or broken conductor, or an interconnection"))
    if r1 is not None and r2 is not None and m.r1_r2_ohm is not None:
        point = measured.ring_r1_r2_ohm(r1, r2)
        if abs(m.r1_r2_ohm - point) <= tol + 1e-9:
            out.append((PASS, f"R1+R2 {fmt(m.r1_r2_ohm, 3)} Ω ≈ (r1 + r2)/4 = {point:.3f} Ω"))
        else:
            out.append((FAIL, f"R1+R2 {fmt(m.r1_r2_ohm, 3)} Ω differs from (r1 + r2)/4 = {point:.3f} Ω by more "
                              f"than {tol:g} Ω: a spur, a break or an unconnected leg"))
    if r1 is not None and per_m is not None:
        expected_r1 = measured.expected_r1_r2_ohm(per_m[0], 0.0, f.circuit.cable.length_m, temp)
        implied = r1 / expected_r1 * f.circuit.cable.length_m if expected_r1 else 0.0
        if abs(r1 - expected_r1) > _tolerance(expected_r1):
            out.append((WARN, f"the line end to end, {fmt(r1, 3)} Ω, implies a ring of {implied:.0f} m against "
                              f"{f.circuit.cable.length_m:g} m modelled"))
    return out


def _loop_cross_check(f: Facts, rd: Readings) -> list[tuple[str, str]]:
    m = rd.measurement
    ze = rd.ze_ohm if rd.ze_ohm is not None else f.ctx.supply.ze_ohm
    if m.zs_ohm is None or m.r1_r2_ohm is None or ze is None or f.ctx.supply.system == "TT":
        return []
    if f.ctx.fed_via is not None:
        return []   # a board behind a sub-main: Ze at the origin is not the loop at its busbars
    expected = ze + m.r1_r2_ohm
    if abs(m.zs_ohm - expected) > max(LOOP_TOLERANCE_OHM, LOOP_REL_TOLERANCE * expected):
        return [(WARN, f"Zs {fmt(m.zs_ohm, 3)} Ω differs from Ze {ze:g} + R1+R2 {fmt(m.r1_r2_ohm, 3)} = "
                       f"{expected:.3f} Ω: one of the readings may be wrong")]
    return []
