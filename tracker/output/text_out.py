"""The human report of `izwatch check`: a compact table per board; each failing check's working
on one line under its circuit. Statuses are words and symbols, never colour alone."""
from __future__ import annotations

from tracker.checks import demand_remedy
from tracker.checks import remedy as remedies
from tracker.checks.readings import unmeasured
from tracker.inspection.suggest import LABEL, suggestions
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, WARN
from tracker.checks.site import SiteResult, board_spare_kw, headroom_kw, spare_words
from tracker.output import figures
from tracker.output.json_out import CAUTION  # noqa: F401 - the check command prints it from here
from tracker.output.terminal_text import clean

MARK = {PASS: "ok  ", FAIL: "FAIL", WARN: "warn", NOT_ASSESSED: "n/a "}
SYMBOL = {FAIL: "✗", WARN: "!", NOT_ASSESSED: "?"}




def render_site(sr: SiteResult, only_problems: bool = False) -> list[str]:
    site = sr.site
    sup = site.supply
    lines = [f"== {site.id}  {clean(site.name)}".rstrip(),
             f"   supply {sup.system}" + (f", three-phase {sup.line_v:.0f} V" if sup.three_phase else "")
             + f", U0 {sup.u0_v:g} V, Ze {figures.as_written(sup.ze_ohm) if sup.ze_ohm is not None else figures.NONE} Ω"
             + (f", PFC {sup.pfc_ka:g} kA" + (" three-phase" if sup.three_phase else "") if sup.pfc_ka else "")
             + (f", supplier's fuse {sup.service_fuse_a:g} A" if sup.service_fuse_a else "")]
    by_board: dict[str, list] = {}
    for r in sr.circuits.values():
        by_board.setdefault(r.board_id, []).append(r)
    for bref, b in sr.boards.items():
        if only_problems and b.status == PASS and all(r.status == PASS for r in by_board.get(b.board_id, [])):
            continue
        board = site.board(b.board_id)
        fed = "supply" if board.at_origin else board.fed_by
        if b.demand.phases_a is not None:
            demand = "three-phase; demand " + "/".join(f"{i:.1f}" for i in b.demand.phases_a) + " A (L1/L2/L3)"
        else:
            demand = (f"on {b.ctx.line}; " if b.ctx.line else "") + f"demand {b.demand.demand_a:.1f} A"
        spare, by = board_spare_kw(sr, bref)
        lines.append(f"-- {bref}  {clean(board.name)}  (fed by {fed}; {demand}; "
                     f"{spare_words(spare, 'board')}{f' — limit: {by}' if by else ''}) [{MARK[b.status].strip()}]")
        if b.status != PASS:
            lines.append(f"     {SYMBOL[b.status]} demand: {clean(b.check.detail)}")
            fix = demand_remedy.for_board(sr, bref)
            if fix:
                lines.append(f"     → remedy: {clean(fix['text'])}")
        for r in by_board.get(b.board_id, []):
            if only_problems and r.status in (PASS,):
                continue
            hk = headroom_kw(sr, r)
            name = clean(r.circuit.name)
            if r.circuit.three_phase:
                name = f"[3φ] {name}"
            elif r.circuit.phase and b.demand.phases_a is not None:
                name = f"[{r.circuit.phase}] {name}"
            lines.append(f"   {MARK[r.status]} {r.circuit.id:<5} {name[:34]:<34} "
                         f"Ib {figures.quantity(r.ib_a, places=1):>6}  In {r.in_a:>5g}  Iz {figures.quantity(r.iz_a, places=1):>6}  "
                         f"headroom {figures.quantity(hk, 'kW', sign=True, show_unit=False)} kW")
            for chk in r.checks:
                if chk.status in (FAIL, WARN, NOT_ASSESSED) and not unmeasured(chk):
                    lines.append(f"        {SYMBOL[chk.status]} {chk.id}: {clean(chk.detail)}")
            if r.status == FAIL:
                rem = remedies.find(r)
                if rem:
                    lines.append(f"        → remedy: {clean(rem['text'])}")
                for sug in suggestions(r.checks):
                    lines.append(f"        → {LABEL}: {sug['code']} for {sug['check']} ({sug['why']})")
    if sr.supply_check is not None and sr.supply_check.status != PASS:
        lines.append(f"   {SYMBOL[sr.supply_check.status]} origin demand: {clean(sr.supply_check.detail)}")
        fix = demand_remedy.for_origin(sr)
        if fix:
            lines.append(f"   → remedy: {clean(fix['text'])}")
    note = sr.notification
    if note is not None and note.route != "none" and (not only_problems or note.route == "apply-before"):
        lines.append(f"   network operator: {clean(note.detail())}")
    if only_problems and len(lines) == 2:
        return []          # nothing of this site to list
    return lines
