"""Section 7 of the HTML report: the installation as found — the deadlines, then each inspection
with its outcome, its measurements beside the calculated figures and its observations. Laid out
as izwatch's own record of readings and dates (plain tables), not as any certificate's form."""
from __future__ import annotations

from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, WARN
from tracker.report.markup import Safe, cat, el
from tracker.report.symbols import badge

DUE_BADGE = {"overdue": (FAIL, "overdue"), "due-soon": (WARN, "due soon"), "ok": (PASS, "in time"),
             "done": (PASS, "done")}
OUTCOME_BADGE = {"satisfactory": (PASS, "satisfactory"), "unsatisfactory": (FAIL, "unsatisfactory")}
CODE_WORDS = {"C1": "danger present", "C2": "potentially dangerous", "C3": "improvement recommended",
              "FI": "further investigation"}


def _n(x, digits: int = 2, unit: str = "") -> str:
    if x is None:
        return "—"
    text = f"{x:.{digits}f}".rstrip("0").rstrip(".") if digits else f"{x:.0f}"
    return f"{text} {unit}".strip()


def _due_badge(status: str | None) -> Safe | str:
    if status is None:
        return "no date set by the rules"
    return badge(*DUE_BADGE[status])


def _deadlines(sec: dict) -> Safe:
    if not sec["deadlines"]:
        return el("p", "No deadline on record for this site (no rules for its tenure, and no date from an inspector).",
                  class_="note")
    rows = [el("tr", el("td", d["due"], class_="nowrap"), el("td", _due_badge(d["status"])), el("td", d["what"]),
               el("td", d["source"], class_="small")) for d in sec["deadlines"]]
    return el("table", el("thead", el("tr", el("th", "Last day"), el("th", "State"), el("th", "What"),
                                      el("th", "From"))), el("tbody", rows), class_="data")


def _pair(measured, calculated, digits: int, unit: str) -> Safe:
    return cat(_n(measured, digits, unit), el("span", f"model {_n(calculated, digits, unit)}", class_="lim"))


def _measurements(rec: dict) -> Safe | None:
    if not rec["measurements"]:
        return None
    rows = []
    for m in rec["measurements"]:
        worst = [c for c in m["checks"] if c["status"] in (FAIL, WARN, NOT_ASSESSED) and c["value"] is not None]
        verdicts = cat(*[cat(badge(c["status"], c["id"]), " ") for c in m["checks"] if c["value"] is not None]) \
            if m["checks"] else "—"
        ring = m["ring"]
        ring_text = (f"r1 {_n(ring['r1_ohm'], 3)} · rn {_n(ring['rn_ohm'], 3)} · r2 {_n(ring['r2_ohm'], 3)} Ω"
                     if ring else "")
        rows.append(el("tr",
                       el("td", el("code", m["ref"].split("/", 1)[1]), " ", m["name"]),
                       el("td", _pair(m["zs_ohm"], m["zs_calculated_ohm"], 3, "Ω"), class_="n"),
                       el("td", _pair(m["r1_r2_ohm"], m["r1_r2_expected_ohm"], 3, "Ω"),
                          el("span", ring_text, class_="lim") if ring_text else "", class_="n"),
                       el("td", _n(m["ir_mohm"], 1, "MΩ"), el("span", f"at {_n(m['ir_test_v'], 0, 'V')}", class_="lim")
                          if m["ir_test_v"] is not None else "", class_="n"),
                       el("td", _n(m["rcd_ms"], 1, "ms"), class_="n"),
                       el("td", verdicts, class_="small" if not worst else None)))
    return el("table",
              el("thead", el("tr", el("th", "Circuit"), el("th", "Zs measured", class_="n"),
                             el("th", "R1+R2 measured", class_="n"), el("th", "Insulation", class_="n"),
                             el("th", "RCD at IΔn", class_="n"), el("th", "Checks on the readings"))),
              el("tbody", rows), class_="data")


def _observations(rec: dict) -> Safe | None:
    if not rec["observations"]:
        return None
    items = []
    for o in rec["observations"]:
        where = cat(" (", el("code", o["ref"]), ")") if o["ref"] else ""
        state = ("done " + o["done_on"]) if o["done_on"] else "open"
        when = cat(" — ", _due_badge(o["status"]), f" last day {o['due']}") if o["due"] else ""
        items.append(el("li", el("b", o["code"]), f" {CODE_WORDS[o['code']]}: ", o["text"], where,
                        f" · {state}", when))
    return el("ul", items, class_="plain")


def _record(rec: dict) -> Safe:
    outcome = badge(*OUTCOME_BADGE[rec["outcome"]])
    ze = (f"Ze {_n(rec['ze_ohm'], 3, 'Ω')} measured (model {_n(rec['ze_model_ohm'], 3, 'Ω')})"
          if rec["ze_ohm"] is not None else "")
    line = [f"{rec['kind']} inspection by {rec['by']}", ze,
            f"PFC {_n(rec['pfc_ka'], 2, 'kA')}" if rec["pfc_ka"] is not None else "",
            f"inspector's next date {rec['next_due']}" if rec["next_due"] else ""]
    return cat(el("h3", rec["date"], " ", outcome),
               el("p", " · ".join(x for x in line if x), class_="note"),
               _measurements(rec) or "", _observations(rec) or "")


def section(doc: dict) -> Safe:
    sec = doc.get("inspections")
    head = el("h2", "7. Inspections, measurements and deadlines", id="inspections")
    statement = el("p", el("b", "Not a certificate. "), sec["statement"] if sec else "", class_="note")
    if sec is None:
        return cat(head, statement)
    tenure = sec["tenure"] or "not given"
    rules = sec["rules"] or "none held for this tenure: only an inspector's own date is followed"
    parts = [head, statement,
             el("p", f"Jurisdiction {sec['jurisdiction']}, tenure {tenure}; rules: {rules}. Judged on {sec['on']}.",
                class_="note"),
             el("h3", "Deadlines"), _deadlines(sec)]
    if sec["suggestions"]:
        parts += [el("h3", "Suggested codes"),
                  el("p", f"For failing checks on the readings: a {sec['suggestion_label']} (common practice), "
                          "never a classification izwatch makes.", class_="note"),
                  el("ul", [el("li", el("code", s["ref"]), f" {s['check']}: ", el("b", s["code"]), f" — {s['why']}")
                            for s in sec["suggestions"]], class_="plain")]
    if sec["records"]:
        parts.append(el("p", "Each reading is shown above the figure izwatch calculates from the site file's model "
                             "(Zs from Ze and the cable; R1+R2 from IEC 60228 resistances at the test temperature).",
                        class_="note"))
        parts += [_record(r) for r in sec["records"]]
    else:
        parts.append(el("p", "No inspection is recorded in the site files.", class_="note"))
    return cat(*parts)
