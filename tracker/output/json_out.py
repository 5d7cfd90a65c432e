"""The `izwatch check --json` document (SPEC §5; extensions documented in
schema/check-output.schema.json)."""
from __future__ import annotations

from tracker.checks import demand_remedy
from tracker.checks import remedy as remedies
from tracker.inspection.suggest import suggestions
from tracker.checks.result import FAIL
from tracker.checks.site import SiteResult, board_spare_kw, headroom_kw, origin_spare_kw
from tracker.output.figures import rounded
from tracker.engine import three_phase
from tracker.model import PHASES

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
    if r.ctx.supply.three_phase:
        entry.update(phase_fields(r))
    if with_remedy and r.status == FAIL:
        entry["remedy"] = remedies.find(r)
        found = suggestions(r.checks)
        if found:
            entry["suggested_codes"] = found
    return entry


def _lines(values) -> dict:
    return {ph: rounded(v, "A") for ph, v in zip(PHASES, values)}


def phase_fields(r) -> dict:
    """Extension, circuits of a three-phase supply: `phases`, the line of a single-phase circuit
    (its own, or its board's), and a three-phase circuit's current in each line."""
    c = r.circuit
    out = {"phases": 3 if c.three_phase else 1}
    line = c.phase or r.ctx.line
    if line is not None:
        out["phase"] = line
    if r.ib_phases_a is not None:
        out["ib_phases_a"] = _lines(r.ib_phases_a)
    return out


def board_entry(b, sr: SiteResult | None = None) -> dict:
    entry = {"ref": b.ref, "demand_a": rounded(b.demand.demand_a, "A"), "status": b.status,
             "checks": [b.check.as_json()]}
    d = b.demand
    if d.phases_a is not None:
        entry.update({"phases": 3, "demand_phases_a": _lines(d.phases_a), "neutral_a": rounded(d.neutral_a, "A"),
                      "imbalance_pct": rounded(d.imbalance_pct, "%", 1)})
    elif b.ctx.line is not None:
        entry.update({"phases": 1, "phase": b.ctx.line})
    if sr is not None:
        spare, by = board_spare_kw(sr, b.ref)
        entry["spare_kw"], entry["spare_limit"] = rounded(spare, "kW"), by or None
        entry["table"] = b.demand.table
        if b.status == FAIL:
            entry["remedy"] = demand_remedy.for_board(sr, b.ref)
    return entry


def supply_entry(sr: SiteResult) -> dict:
    chk = sr.supply_check
    entry = {"ref": sr.site.id, "demand_a": rounded(chk.value, "A"), "status": chk.status, "checks": [chk.as_json()],
             "spare_kw": rounded(origin_spare_kw(sr), "kW")}
    if chk.status == FAIL:
        entry["remedy"] = demand_remedy.for_origin(sr)
    if sr.supply_phases_a is not None:
        lines = sr.supply_phases_a
        entry.update({"phases": 3, "demand_phases_a": _lines(lines),
                      "neutral_a": rounded(three_phase.neutral_current_a(*lines), "A"),
                      "imbalance_pct": rounded(three_phase.imbalance_pct(lines), "%", 1)})
    if sr.notification is not None:
        entry["notification"] = sr.notification.as_json()
    return entry
