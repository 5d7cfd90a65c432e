"""The `izwatch check --json` document (SPEC §5; extensions documented in
schema/check-output.schema.json)."""
from __future__ import annotations

from tracker.checks import remedy as remedies
from tracker.inspection.suggest import suggestions
from tracker.checks.result import FAIL
from tracker.checks.site import SiteResult, headroom_kw
from tracker.output.figures import rounded

SCHEMA = "izwatch.check/1"
CAUTION = ("izwatch supports, and does not replace, a competent person: verify every result against "
           "the current wiring regulations, local codes and manufacturers' data. Work on electrical "
           "installations is for qualified people.")



def circuit_entry(sr: SiteResult, r, with_remedy: bool = True) -> dict:
    c = r.circuit
    entry = {
        "ref": r.ref,
        "name": c.name,
        "status": r.status,
        "ib_a": rounded(r.ib_a, "A"),
        "in_a": r.in_a,
        "iz_a": rounded(r.iz_a, "A"),
        "basis": r.basis,
        "headroom_kw": rounded(headroom_kw(sr, r), "kW"),
        "checks": [x.as_json() for x in r.checks],
        "site": r.site_id,
        "board": c.board,
        "file": c.src.file if c.src else None,
        "working": r.working.as_json(),
    }
    if with_remedy and r.status == FAIL:
        entry["remedy"] = remedies.find(r)
        found = suggestions(r.checks)
        if found:
            entry["suggested_codes"] = found
    return entry


def board_entry(b) -> dict:
    return {"ref": b.ref, "demand_a": rounded(b.demand.demand_a, "A"), "status": b.status,
            "checks": [b.check.as_json()]}


def supply_entry(sr: SiteResult) -> dict:
    chk = sr.supply_check
    return {"ref": sr.site.id, "demand_a": rounded(chk.value, "A"), "status": chk.status, "checks": [chk.as_json()]}


def check_document(results, errors=(), warnings=()) -> dict:
    """`results`: SiteResults in order; `errors`/`warnings`: InputError / LoadWarning."""
    circuits, boards, supplies = [], [], []
    for sr in results:
        circuits.extend(circuit_entry(sr, r) for r in sr.circuits.values())
        boards.extend(board_entry(b) for b in sr.boards.values())
        supplies.append(supply_entry(sr))
    return {
        "schema": SCHEMA,
        "circuits": circuits,
        "boards": boards,
        "errors": [e.as_json() for e in errors],
        "supplies": supplies,
        "warnings": [w.as_json() for w in warnings],
        "caution": CAUTION,
    }
