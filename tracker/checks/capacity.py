"""`capacity`: the cable can carry the current its protection lets through.

Iz = It × Ca × Cg (and, over a length surrounded by insulation, It(C) × Ca × Cg × Ci) must be
at least In (433.1.1(ii)); 20 A for a qualifying ring final circuit (433.1.204); Ib where the
designer relied on a load that cannot overload (433.3.1(ii)), provided fault protection holds
(both adiabatic checks pass); In / 0.725 behind a semi-enclosed fuse (433.1.202).
"""
from __future__ import annotations

from functools import lru_cache

from tracker import catalogue
from tracker.checks import rules
from tracker.checks.context import Facts
from tracker.checks.registry import RATING, SIZE, CheckSpec, Outcome
from tracker.checks.result import FAIL, NOT_ASSESSED, CheckResult, fmt, not_assessed, verdict, words
from tracker.checks.working import IF_KNOWN, figure, record
from tracker.engine import factors as rating_factors
from tracker.engine import three_phase

ID = "capacity"
DEVICE, RING, DESIGN = "device-rating", "ring", "design-current"   # the basis (SPEC §5)


@record
class CapacityWorking:
    it_a: float | None = figure("A", "tabulated current-carrying capacity It for the method", IF_KNOWN)
    ca: float | None = figure("", "ambient temperature factor Ca (Table 4B1, or 4B2 in the ground)", IF_KNOWN)
    cg: float | None = figure("", "grouping factor Cg (Table 4C1)", IF_KNOWN)
    ci: float | None = figure("", "thermal insulation factor Ci (Table 52.2, or 0.5 by 523.9)", IF_KNOWN)
    ch: float | None = figure("", "three-phase: triple-harmonic rating factor (Appendix 4 Table 4Aa)", IF_KNOWN)
    neutral_a: float | None = figure("A", "three-phase, third harmonic over 33 %: neutral current 3 × h × Ib "
                                          "(Appendix 4 section 5.5)", IF_KNOWN)
    iz_a: float | None = figure("A", "current-carrying capacity as installed, Iz; null where not assessed")
    basis: str | None = figure("", "what Iz is held against: device-rating, ring or design-current", kind=str)


def _on_load(basis: str) -> bool:
    # Only a cable sized on Ib (433.3.1(ii)) is held against the load itself.
    return basis == DESIGN


def _needs(circuit) -> tuple[str, ...]:
    # Sizing on Ib rests on both adiabatic checks passing (433.3.1(ii)); otherwise the cpc's only.
    return ("cpc-adiabatic", "line-adiabatic") if circuit.overload_exempt else ("cpc-adiabatic",)


CHECK = CheckSpec(
    id=ID, rank=20, stage=50, name="cable capacity, Iz", unit="A", compare=">=", gauge="needed / Iz",
    record=CapacityWorking, helps=frozenset({SIZE, RATING}), load_dependent=_on_load, needs=_needs,
)


@lru_cache(maxsize=None)
def _tables():
    """The rating-factor tables as plain dicts, read once."""
    ftab = catalogue.factors()
    ambient = {int(c): {float(t): v[0] for t, v in rows.items()} for c, rows in ftab["ambient"]["table"].items()}
    grouping = {name: {int(n): v[0] for n, v in ftab["grouping"][name].items()}
                for name in ("bunched", "single-layer-wall")}
    open_ended = frozenset(ftab["grouping"].get("open_ended", ()))
    insulation = {float(k): v[0] for k, v in ftab["insulation"]["table"].items()}
    return ambient, grouping, open_ended, insulation, ftab["insulation"]["max_csa_mm2"]


def _status_note(value: catalogue.Value) -> str:
    return "" if value.confirmed else f" [{value.status}]"


def rated_capacity(f: Facts) -> tuple[float | None, str, dict]:
    """(Iz, how, factors) for the circuit's cable where it is installed."""
    c, env = f.circuit, f.circuit.environment
    kind = f.kind
    phases = f.phases
    it = kind.rating(c.cable.csa_mm2, c.cable.method, phases)
    columns = " (three-phase, three loaded conductors)" if phases == 3 else ""
    if it is None:
        return None, (f"no rating held for {c.cable.csa_mm2:g} mm² {kind.kind} by method {c.cable.method}"
                      f"{columns}"), {}
    ambient, grouping, open_ended, insulation, insulation_max_csa = _tables()
    method_d = c.cable.method == "D"
    if method_d:
        ref = kind.ground_reference_c
        theta = env.ambient_c if env.ambient_c is not None else ref
        ca = rating_factors.ambient_factor_formula(theta, kind.conductor_c, ref)
        ca_how = f"Ca {ca:.2f} (ground {theta:g} °C against the {ref:g} °C of the table, Table 4B2 basis)"
    else:
        theta = env.ambient_c if env.ambient_c is not None else 30.0
        ca = rating_factors.ambient_factor_bs7671(theta, kind.conductor_c, ambient[int(kind.conductor_c)])
        ca_how = f"Ca {ca:.2f} ({theta:g} °C, Table 4B1)"
    if ca <= 0:
        return 0.0, f"ambient {theta:g} °C is at or above the conductor limit {kind.conductor_c:g} °C", {"ca": 0.0}
    if env.grouped_with > 1 and method_d:
        return None, "grouping of buried cables (Tables 4B4/4B5) is not in the catalogue", {}
    rows = grouping[env.arrangement]
    cg = rating_factors.grouping_factor(env.grouped_with, rows, env.arrangement in open_ended)
    if cg is None:
        return None, (f"{env.grouped_with} circuits {env.arrangement} is beyond Table 4C1 "
                      f"(up to {max(rows)})"), {}
    factors = {"it_a": it.value, "ca": round(ca, 3), "cg": cg}
    iz = it.value * ca * cg
    how = (f"It {fmt(it.value)} A{_status_note(it)} (Table for {kind.kind}, method {c.cable.method}{columns}) "
           f"× {ca_how}")
    how += f" × Cg {cg:.2f} ({env.grouped_with} {env.arrangement})" if env.grouped_with > 1 else ""
    if env.insulation_mm > 0:
        it_c = kind.rating(c.cable.csa_mm2, "C", phases)
        if it_c is None:
            return None, f"no method C rating held for {c.cable.csa_mm2:g} mm² {kind.kind} (needed for insulation)", {}
        if c.cable.csa_mm2 > insulation_max_csa:
            ci, ci_how = 0.5, "Ci 0.50 (523.9: over 10 mm² surrounded by insulation)"
        else:
            ci = rating_factors.insulation_factor(env.insulation_mm, insulation)
            ci_how = f"Ci {ci:.2f} ({env.insulation_mm:g} mm surrounded, Table 52.2)"
        iz_ins = it_c.value * ca * cg * ci
        factors["ci"] = ci
        if iz_ins < iz:
            iz = iz_ins
            how = (f"where surrounded by insulation: It(C) {fmt(it_c.value)} A × Ca {ca:.2f}"
                   + (f" × Cg {cg:.2f}" if env.grouped_with > 1 else "") + f" × {ci_how}")
    return iz, how, factors


def run(f: Facts, done) -> Outcome:
    c = f.circuit
    if f.kind is None:
        return Outcome(not_assessed(ID, "A", ">=", f"cable kind {c.cable.kind} not in the catalogue"))
    iz, how, fac = rated_capacity(f)
    harmonics = _harmonics(f) if iz is not None else None
    if harmonics is not None:
        ch, neutral_a, note = harmonics
        iz, how = iz * ch, f"{how} × Ch {ch:g} ({note})"
        fac = {**fac, "ch": ch, **({"neutral_a": neutral_a} if neutral_a is not None else {})}
    line = done.get("line-adiabatic")
    result, basis, text = _verdict(f, iz, how, (done["cpc-adiabatic"].result, line.result if line else None),
                                   harmonics[1] if harmonics else None)
    return Outcome(result, CapacityWorking(**fac, iz_a=iz, basis=basis), text)


def device_requirement_a(f: Facts) -> float:
    """What Iz must reach for the device to protect the cable against overload: In, or In / 0.725
    behind a semi-enclosed fuse (433.1.1(ii), 433.1.202)."""
    if f.circuit.device.kind == "fuse-semi-enclosed":
        return f.in_a / catalogue.factors()["semi_enclosed_fuse"]["factor"][0]
    return f.in_a


def _harmonics(f: Facts) -> tuple[float, float | None, str] | None:
    """(Ch, neutral current or None, note) of BS 7671 Appendix 4 Table 4Aa for a three-phase
    circuit whose third-harmonic content is given; None otherwise. Above 33 % the cable is sized
    on the neutral current 3 × h × Ib (In where Ib is unknown)."""
    c = f.circuit
    if not c.three_phase or c.triplen_harmonics_pct is None:
        return None
    rows = catalogue.triplen_harmonic_rows()
    h = c.triplen_harmonics_pct
    ch, on = three_phase.harmonic_rating(h, tuple((up, v.value, side) for up, v, side in rows))
    if on == "line":
        return ch, None, f"{h:g} % third harmonic, sized on the line current, Table 4Aa"
    line_a = f.ib_a if f.ib_a is not None else f.in_a
    neutral = three_phase.triplen_neutral_current_a(line_a, h)
    return ch, neutral, (f"{h:g} % third harmonic, sized on the neutral current 3 × {h:g} % × {line_a:.2f} A = "
                         f"{neutral:.2f} A, Table 4Aa")


def _verdict(f: Facts, iz: float | None, how: str, adiabatic, neutral_a: float | None = None):
    """(result, basis, its deferred text or None). `neutral_a`: a neutral current the cable must
    carry as well (harmonics)."""
    c = f.circuit
    basis, required, why = DEVICE, f.in_a, f"In {f.in_a:g} A ({f.label}) — 433.1.1(ii)"
    if c.device.kind == "fuse-semi-enclosed":
        factor = catalogue.factors()["semi_enclosed_fuse"]["factor"][0]
        required = device_requirement_a(f)
        why = f"In / {factor:g} = {f.in_a:g} / {factor:g} = {required:.2f} A (semi-enclosed fuse, 433.1.202)"
    ring_ok, ring_why = rules.qualifies_as_ring(c)
    exempt_note = ""
    if ring_ok:
        basis, required = RING, rules.RING_MIN_IZ_A
        why = (f"{rules.RING_MIN_IZ_A:g} A (ring final circuit on a {rules.ring_ratings_text()} A device, "
               "433.1.204)")
    elif c.is_ring:
        exempt_note = f"; not a qualifying ring ({ring_why}), so Iz must reach the device rating"
    if c.overload_exempt and not ring_ok:
        problem = rules.exemption_problem(c)
        cpc, line = adiabatic
        if problem:
            exempt_note = f"; overload_exempt set but cannot be relied on: {problem} (433.3.1(ii))"
        elif f.ib_a is None:
            exempt_note = "; overload_exempt set but Ib is unknown"
        elif iz is not None and iz >= required:
            exempt_note = "; overload_exempt set but not needed: Iz reaches what the device requires"
        elif iz is not None and iz < f.ib_a:
            # Overloaded in normal service: no fault data can change that (433.1.1(i)).
            return (CheckResult(ID, FAIL, iz, f.ib_a, "A", ">=", "", ib_limit_a=iz), DESIGN,
                    words(_overloaded_text, how, iz, f.ib_a))
        elif FAIL in (cpc.status, line.status):
            failing = " and ".join(r.id for r in adiabatic if r.status == FAIL)
            exempt_note = (f"; sizing on Ib (433.3.1(ii)) needs fault protection shown, but {failing} fails, "
                           "so the cable must carry In")
        elif iz is not None and iz < f.in_a and NOT_ASSESSED in (cpc.status, line.status):
            return (not_assessed(ID, "A", ">=", f"cable sized on Ib {f.ib_a:.2f} A under 433.3.1(ii) "
                                 f"(Iz {iz:.2f} A < In {f.in_a:g} A), which needs both adiabatic checks to pass; "
                                 "they could not be assessed", value=iz, limit=f.ib_a), DESIGN, None)
        else:
            basis, required = DESIGN, f.ib_a
            why = (f"Ib {f.ib_a:.2f} A — cable sized on the design current, not on In {f.in_a:g} A "
                   "(433.3.1(ii): load cannot overload; fault protection shown by both adiabatic checks)")
    if neutral_a is not None and neutral_a > required:
        required = neutral_a
        why = f"the neutral current {neutral_a:.2f} A (Appendix 4 section 5.5: it exceeds {why})"
    if iz is None:
        return not_assessed(ID, "A", ">=", how, limit=required), basis, None
    ok = iz >= required
    status = verdict(ok)
    ib_limit = iz if basis == DESIGN else None
    return (CheckResult(ID, status, iz, required, "A", ">=", "", ib_limit_a=ib_limit), basis,
            words(_text, how, iz, ok, why, exempt_note))


def _text(how: str, iz: float, ok: bool, why: str, exempt_note: str) -> str:
    return f"Iz = {how} = {iz:.2f} A {'≥' if ok else '<'} {why}{exempt_note}"


def _overloaded_text(how: str, iz: float, ib_a: float) -> str:
    return (f"Iz = {how} = {iz:.2f} A < Ib {ib_a:.2f} A: the cable, sized on Ib (433.3.1(ii)), "
            "cannot carry even the design current and is overloaded in normal service — 433.1.1")

