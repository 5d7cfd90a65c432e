"""`ev-charging`: a circuit supplying an EV charge point meets BS 7671 Section 722 (the data and
their clauses: tracker/data/ev_charging.yaml): a dedicated circuit (722.314.01); an RCD of
IΔn ≤ 30 mA, type B or type A/F with 6 mA DC fault detection, breaking every live conductor
(722.531.3.101); outdoors on a TN-C-S (PME) supply, a permitted earthing measure (722.411.4.1);
full load, no diversity (722.311). What is not recorded is `not-assessed`, naming the key."""
from __future__ import annotations

from tracker import catalogue
from tracker.checks import rules
from tracker.checks.context import Facts
from tracker.checks.parts import Parts
from tracker.checks.registry import CheckSpec, Outcome
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, WARN, CheckResult
from tracker.checks.working import figure, record

ID = "ev-charging"
KIND = "ev-charger"


def applies(circuit) -> bool:
    return rules.has_kind(circuit, KIND)


@record
class EvChargingWorking:
    ev_rcd_ma: float | None = figure("mA", "IΔn of the RCD protecting the charge point (722.531.3.101); null: none")
    ev_rcd_type: str | None = figure("", "its type as recorded (AC, A, F, B); null: not recorded", kind=str)
    ev_earthing_measure: str | None = figure("", "the 722.411.4.1 measure recorded; null: none recorded", kind=str)


CHECK = CheckSpec(
    id=ID, rank=150, stage=80, name="EV charge point (BS 7671 722)", unit="mA", compare="<=",
    record=EvChargingWorking, applies=applies,
    helps=frozenset(),        # requirements (RCD type, earthing measure): its failing lines say what to fit
)


def _dedicated(f: Facts, parts: Parts, data: dict) -> None:
    rule = data["dedicated_circuit"]
    clause = rule["clause"] + ("" if rule["status"] == "seen" else f" [{rule['status']}]")
    chargers = [ld for ld in f.circuit.loads if ld.kind == KIND]
    others = [ld for ld in f.circuit.loads if ld.kind != KIND]
    if others:
        parts.add(FAIL, f"{clause}: the charge point shares its circuit with "
                        f"{', '.join(ld.id for ld in others)} — it needs a dedicated final circuit")
    elif len(chargers) > 1:
        parts.add(FAIL, f"{clause}: {len(chargers)} charge points on one circuit — each needs its own final circuit")
    else:
        parts.add(PASS, f"{clause}: dedicated circuit")


def _rcd(f: Facts, parts: Parts, data: dict):
    rule = data["rcd"]
    clause = rule["clause"]
    rcd = next((r for r in f.rcds if r.idn_ma <= rules.ADDITIONAL_PROTECTION_MA and not r.delayed), None)
    if rcd is None:
        parts.add(FAIL, f"{clause}: no RCD of {rules.ADDITIONAL_PROTECTION_MA:g} mA or less without intended delay "
                        "protects the charge point")
        return None
    name = f"{rcd.idn_ma:g} mA RCD ({rcd.at})"
    kind = rcd.data.type
    if kind is None:
        parts.add(NOT_ASSESSED, f"{clause}: type of the {name} not recorded (record rcd_type: AC, A, F or B)")
    elif kind in rule["alone"]:
        parts.add(PASS, f"{clause}: type {kind} {name}")
    elif kind in rule["with_dc_detection"]:
        dc = f.circuit.rcd.dc_fault_detection
        if dc is None:
            dc = rcd.data.dc_fault_detection
        if dc is True:
            parts.add(PASS, f"{clause}: type {kind} {name} with 6 mA DC fault detection")
        elif dc is False:
            parts.add(FAIL, f"{clause}: type {kind} {name} without 6 mA DC fault detection: a smooth DC "
                            "fault current can blind it — fit a type B RCD or a 6 mA DC detecting device")
        else:
            parts.add(NOT_ASSESSED, f"{clause}: type {kind} {name} — whether the charge point (or the circuit) "
                                    "has 6 mA DC fault detection is not recorded (record dc_fault_detection)")
    else:
        parts.add(FAIL, f"{clause}: type {kind} {name} — a charge point needs type B, or type A or F with "
                        "6 mA DC fault detection")
    if rcd.data.all_poles is False:
        parts.add(FAIL, f"{clause}: the {name} does not break every live conductor (line and neutral)")
    elif rcd.data.all_poles is None:
        parts.add(NOT_ASSESSED, f"{clause}: whether the {name} breaks every live conductor is not recorded "
                                "(record rcd_all_poles)")
    return rcd


def _pme(f: Facts, parts: Parts, data: dict) -> None:
    rule = data["pme_outdoor"]
    clause = rule["clause"]
    measure = f.circuit.earthing_measure
    if f.ctx.supply.system != "TN-C-S":
        parts.add(PASS, f"{clause}: {f.ctx.supply.system} supply, no PME terminal to avoid")
        return
    places = {ld.location for ld in f.circuit.loads if ld.kind == KIND}
    if measure is None and places <= {None}:
        parts.add(NOT_ASSESSED, f"{clause}: TN-C-S (PME) supply and the charge point's location is not recorded: "
                                "record location (outdoor, or e.g. garage) and, outdoors, earthing_measure")
        return
    if "outdoor" not in places and measure is None:
        parts.add(PASS, f"{clause}: charge point not outdoors ({', '.join(sorted(p for p in places if p))}) — "
                        "outdoors, or where it may charge a vehicle standing outdoors, a measure would be needed")
        return
    measures = rule["measures"]
    if measure is None:
        parts.add(NOT_ASSESSED, f"{clause}: outdoor charge point on a TN-C-S (PME) supply — no earthing measure "
                                f"recorded (record earthing_measure: {', '.join(measures)})")
        return
    m = measures[measure]
    if measure == "none":
        parts.add(FAIL, f"{clause}: outdoor charge point on a TN-C-S (PME) supply with no permitted measure: an "
                        "open PEN would raise the vehicle to a dangerous voltage — fit an open-PEN protective "
                        "device or earth the charge point by its own electrode (TT)")
    elif "caution" in m:
        parts.add(WARN, f"{m['clause']}: {m['text']} — {m['caution']}")
    else:
        parts.add(PASS, f"{m['clause']}: {m['text']}")


def _full_load(f: Facts, parts: Parts, data: dict) -> None:
    rule = data["full_load"]
    chargers = [ld for ld in f.circuit.loads if ld.kind == KIND]
    controls = [ld for ld in chargers if ld.load_control_a is not None]
    if f.ib_a is None:
        parts.add(NOT_ASSESSED, f"{rule['clause']}: the charge point's rating is not recorded "
                                "(power_kw, current_a or rated_current_a)")
        return
    text = f"{rule['clause']}: circuit taken at full load, Ib {f.ib_a:.1f} A, no diversity"
    if controls:
        text += " — the board's demand counts the load control's " + ", ".join(
            f"{ld.load_control_a:g} A" for ld in controls)
    parts.add(PASS, text)


def run(f: Facts, done) -> Outcome:
    data = catalogue.ev_charging()
    parts = Parts()
    _dedicated(f, parts, data)
    rcd = _rcd(f, parts, data)
    _pme(f, parts, data)
    _full_load(f, parts, data)
    value = rcd.idn_ma if rcd is not None else f.rcd_ma
    result = CheckResult(ID, parts.status, value, rules.ADDITIONAL_PROTECTION_MA, "mA", "<=",
                         f"{parts.detail()} — {data['edition']}")
    return Outcome(result, EvChargingWorking(ev_rcd_ma=value, ev_rcd_type=rcd.data.type if rcd else None,
                                             ev_earthing_measure=f.circuit.earthing_measure))
