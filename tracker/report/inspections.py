"""The report's record of the installation as found: each inspection with its outcome, every
circuit's measurements beside the figures izwatch calculates from the model, the observations with
their deadlines and status, and every deadline of the site — plain data for every format."""
from __future__ import annotations

import datetime

from tracker import catalogue
from tracker.checks.readings import latest_readings
from tracker.checks.site import SiteResult
from tracker.engine import measured
from tracker.inspection import due as dues
from tracker.inspection.outcome import is_open, outcome
from tracker.inspection.rules import ruleset_for
from tracker.inspection.suggest import LABEL, suggestions

STATEMENT = ("This report is not an electrical installation certificate, a minor works certificate or a "
             "condition report, and does not replace one. It records what the site files say was measured "
             "and observed, beside what izwatch calculates, and the deadlines that follow.")
MEASURED_CHECKS = ("measured-zs", "insulation-resistance", "rcd-operation", "continuity")


def _r(x, digits=3):
    return None if x is None else round(x, digits)


def _expected_r1_r2(r, test_c: float) -> float | None:
    c = r.circuit
    cable = c.cable
    line = catalogue.conductor_resistance(cable.csa_mm2)
    cpc_mm2 = cable.cpc_mm2
    if cpc_mm2 is None:
        kind = catalogue.cable_kind(cable.kind)
        cpc_mm2 = kind.default_cpc_mm2(cable.csa_mm2) if kind else None
    cpc = catalogue.conductor_resistance(cpc_mm2) if cpc_mm2 is not None else None
    if line is None or cpc is None:
        return None
    return measured.expected_r1_r2_ohm(line.value, cpc.value, cable.length_m, test_c, c.is_ring)


def _measurement_row(site_id: str, sr: SiteResult, m, test_c: float) -> dict:
    ref = f"{site_id}/{m.ref}"
    r = sr.circuits.get(ref)
    loop = r.check("fault-loop") if r is not None else None
    calculated_zs = loop.value if loop is not None and loop.unit == "ohm" else None
    ring = m.ring
    return {
        "ref": ref, "name": r.circuit.name if r is not None else "",
        "zs_ohm": m.zs_ohm, "zs_calculated_ohm": _r(calculated_zs),
        "r1_r2_ohm": m.r1_r2_ohm, "r1_r2_expected_ohm": _r(_expected_r1_r2(r, test_c)) if r is not None else None,
        "ir_mohm": m.ir_mohm, "ir_test_v": m.ir_test_v, "rcd_ms": m.rcd_ms,
        "ring": None if ring is None else {"r1_ohm": ring.r1_ohm, "rn_ohm": ring.rn_ohm, "r2_ohm": ring.r2_ohm},
        "checks": [c.as_json() for c in (r.checks if r is not None else ()) if c.id in MEASURED_CHECKS],
    }


def section(sr: SiteResult, on: datetime.date) -> dict:
    """The `inspections` part of the report document for the day `on`."""
    site = sr.site
    items = dues.site_items(site, on, sr.notification)
    remedial = {i.about: i for i in items if i.duty == "remedial"}
    records = []
    for x in reversed(site.inspections):             # newest first
        observations = []
        for n, o in enumerate(x.observations, 1):
            item = remedial.get((x.key, n))
            observations.append({
                "n": n, "code": o.code, "text": o.text, "ref": f"{site.id}/{o.ref}" if o.ref else None,
                "open": is_open(o, on), "done_on": o.done_on.isoformat() if o.done_on else None,
                "confirmed_on": o.confirmed_on.isoformat() if o.confirmed_on else None,
                "due": item.due.isoformat() if item else None,
                "status": item.status if item else None,
                "source": item.source if item else None,
            })
        records.append({
            "key": x.key, "date": x.date.isoformat(), "by": x.by, "kind": x.kind,
            "next_due": x.next_due.isoformat() if x.next_due else None,
            "ze_ohm": x.ze_ohm, "ze_model_ohm": site.supply.ze_ohm, "pfc_ka": x.pfc_ka,
            "test_temp_c": x.test_temp_c, "outcome": outcome(x, on),
            "copy_to_tenant_on": x.copy_to_tenant_on.isoformat() if x.copy_to_tenant_on else None,
            "measurements": [_measurement_row(site.id, sr, m, x.test_temp_c) for m in x.results],
            "observations": observations,
        })
    latest = latest_readings(site)
    suggested = []
    for ref in latest:
        r = sr.circuits.get(f"{site.id}/{ref}")
        if r is not None:
            suggested.extend({"ref": r.ref, **s} for s in suggestions(r.checks))
    rules = ruleset_for(site.jurisdiction, site.tenure)
    return {
        "statement": STATEMENT,
        "on": on.isoformat(),
        "jurisdiction": site.jurisdiction, "tenure": site.tenure,
        "rules": rules.title if rules is not None else None,
        "records": records,
        "deadlines": [i.as_json() for i in items],
        "suggestions": suggested, "suggestion_label": LABEL,
    }
