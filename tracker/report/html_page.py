"""The report as one self-contained HTML document (inline CSS and SVG, no script, no remote
asset) that reads on screen and prints on A4. It renders the report document and nothing else;
every piece of text goes through `markup`, which escapes it."""
from __future__ import annotations

from tracker.checks import registry
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, WARN
from tracker.checks.readings import unmeasured
from tracker.checks.rules import RING_MIN_IZ_A
from tracker.engine.disconnection import TOUCH_VOLTAGE_V
from tracker.output.times import local_stamp
from tracker.report import diagram, inspections_html
from tracker.report.markup import Safe, cat, el
from tracker.report.style import stylesheet
from tracker.report.symbols import MEANING, ORDER, SHAPE, WORD, badge, mark
from tracker.output import figures

# No script may run and nothing may be fetched, whatever ends up in the page.
CSP = "default-src 'none'; style-src 'unsafe-inline'; img-src data:; base-uri 'none'; form-action 'none'"

SOURCE_TEXT = {"watch": "seen by the watcher", "replace": "replacement", "ack": "acknow\u00adledgement",
               "startup": "found at start", "date": "the date passed (no file changed)"}
TRANSITION_MARK = {"newly-failing": FAIL, "worse": FAIL, "cleared": PASS, "input-error": WARN}
# What Iz is held against, where it is not simply the device (for a rewirable fuse that is In/0.725).
BASIS_TEXT = {"ring": "ring", "design-current": "on Ib"}


# -- formatting ----------------------------------------------------------------------------

def when(at: str | None) -> str:
    """'2026-12-02T00:33:31.454Z' (the history keeps UTC) → '2026-12-02 01:33 +01:00', the local
    time with its offset; a date alone stays a date."""
    if not at:
        return "—"
    if "T" not in at:
        return at
    return local_stamp(at)


def num(x, unit: str | None = None, digits: int | None = None, sign: bool = False) -> str:
    """An engine figure (the one formatter, with a true minus sign)."""
    return figures.quantity(x, unit, digits, sign=sign, minus="−")


def plain(x, unit: str = "") -> str:
    """A catalogue or site-file quantity as written (40 A, 2.5 mm²)."""
    if x is None:
        return figures.NONE
    return f"{figures.trimmed(x, 3)} {figures.unit_shown(unit)}".strip()


def against(chk: dict) -> str:
    """'35.00 A, needs at least 36.96 A'; without a figure only the limit ('needs at most 30 mA')."""
    unit = chk["unit"]
    need = {"<=": "at most", ">=": "at least"}[chk["compare"]]
    if chk["limit"] is None:
        return num(chk["value"], unit) if chk["value"] is not None else "no figure"
    if chk["value"] is None:
        return f"needs {need} {num(chk['limit'], unit)}"
    return f"{num(chk['value'], unit)}, needs {need} {num(chk['limit'], unit)}"


def check_name(check_id: str) -> Safe:
    return cat(registry.name(check_id), " ", el("code", check_id, class_="small"))


def status_count(counts: dict) -> str:
    parts = []
    for s in ORDER:
        n = counts.get(s, 0)
        if n:
            parts.append(f"{n} {WORD[s]}")
    return ", ".join(parts) if parts else "none"


# -- sections --------------------------------------------------------------------------------

def _head(doc: dict) -> Safe:
    site, ver, hist = doc["site"], doc["verification"], doc["history"]
    files = [el("code", f["file"]) for f in site["files"]]
    history_line = {
        "intact": f"recorded, intact: {ver['revisions']} revisions in the file, {hist['revisions_of_site']} about this site",
        "broken": f"recorded, but it does NOT verify: {ver['problem']}",
        "unreadable": f"could not be read: {hist['reason']}",
        "none": "none recorded yet",
    }[ver["state"]]
    if ver["state"] in ("intact", "broken") and hist.get("reason"):
        history_line += f" ({hist['reason']})"     # an earlier izwatch's history, read as it is
    meta = [
        ("Site", cat(el("code", site["id"]), f" · rule set {site['rules']} · premises {site['premises']}")),
        ("Site files", cat(*[cat(f, ", ") for f in files[:-1]], files[-1] if files else "—")),
        ("Report made", f"{when(doc['generated_at'])} with izwatch {doc['tool']['version']}"),
        ("History", history_line),
    ]
    return el("header",
              el("p", "Electrical installation report — circuits, open problems and change history", class_="kicker"),
              el("h1", site["name"] or site["id"]),
              el("dl", [cat(el("dt", k), el("dd", v)) for k, v in meta], class_="meta"))


def _summary(doc: dict) -> Safe:
    s = doc["summary"]
    status = s["status"]
    c = s["circuits"]
    headline = {
        FAIL: "Action needed: at least one check fails",
        NOT_ASSESSED: "Not everything could be assessed: data is missing",
        WARN: "Every check holds; there are advisories",
        PASS: "Every check of every circuit and board holds",
    }[status]
    items = [
        el("li", f"{c['total']} circuit{'s' if c['total'] != 1 else ''}: {status_count(c)}; "
                 f"{s['boards']} board{'s' if s['boards'] != 1 else ''}: "
                 f"{status_count({st: sum(1 for b in doc['boards'] if b['status'] == st) for st in ORDER})}; "
                 f"demand at the origin {WORD[doc['origin']['status']]}."),
        el("li", f"{s['problems']} open problem{'s' if s['problems'] != 1 else ''}"
                 + (f", {s['unacknowledged']} not acknowledged." if s["problems"] else ".")),
    ]
    ver = doc["verification"]
    items.append(el("li", "History: ", {
        "intact": badge(PASS, "intact"), "broken": badge(FAIL, "does not verify"),
        "unreadable": badge(FAIL, "unreadable"), "none": badge(NOT_ASSESSED, "none recorded yet")}[ver["state"]],
        " (section 6)."))
    if s["files_pending"]:
        items.append(el("li", badge(WARN, "site files not in the history as they are now"),
                        ": their latest changes are not recorded yet (section 6)."))
    return el("section", el("p", badge(status, headline), class_="headline"), el("ul", items),
              class_=f"summary s-{status}")


def _legend() -> Safe:
    return el("ul", [el("li", badge(s), f" — {MEANING[s]} ({SHAPE[s]})") for s in (PASS, FAIL, WARN, NOT_ASSESSED)],
              class_="legend")


def _supply(doc: dict) -> Safe:
    s, o = doc["supply"], doc["origin"]
    rows = [
        ("Earthing system", s["system"]),
        ("Nominal voltage to earth, U0", plain(s["u0_v"], "V")),
        ("External loop impedance, Ze", plain(s["ze_ohm"], "ohm") if s["ze_ohm"] is not None
         else "not given: earth fault loop checks are not assessed"),
        ("Prospective fault current at the origin", plain(s["pfc_ka"], "kA") if s["pfc_ka"] is not None
         else f"not given: the checks assume {plain(s['pfc_used_ka'], 'kA')}"),
        ("Supplier's fuse", plain(s["service_fuse_a"], "A") if s["service_fuse_a"] is not None else "not given"),
    ]
    if s["system"] == "TT" or s["electrode_ohm"] is not None:
        rows.append(("Earth electrode resistance, RA", plain(s["electrode_ohm"], "ohm") if s["electrode_ohm"] is not None
                     else "not given: Ze is used"))
    rows.append(("Source", "private supply (voltage-drop limits 6 % / 8 %)" if s["private"] else "public supply"))
    rows.append(("Maximum demand at the origin", cat(badge(o["status"]), " ", against(o["check"]))))
    note = o.get("network_operator")
    if note and note["route"] != "none":
        lines = [note["detail"]] + [
            f"{d['what']}: connected {d['connected_on']}, " + (f"operator told {d['notified_on']}" if d["notified_on"]
                                                              else f"operator to be told by {d['deadline']}")
            for d in note["devices"] if d["connected_on"]]
        rows.append(("Network operator", cat(*[el("div", line) for line in lines])))
    table = el("table", el("tbody", [el("tr", el("th", k), el("td", v)) for k, v in rows]), class_="data kv")
    boards = el("table",
                el("thead", el("tr", el("th", "Board"), el("th", "Fed from"), el("th", "Main switch", class_="n"),
                               el("th", "RCD", class_="n"), el("th", "PFC at board", class_="n"),
                               el("th", "Demand after diversity", class_="n"), el("th", "Verdict"))),
                el("tbody", [_board_row(b) for b in doc["boards"]]), class_="data")
    return cat(el("h2", "1. Site and supply", id="supply"), table,
               el("h3", "Boards"), boards,
               el("p", "Demand after diversity uses the household allowances of common practice; the working of "
                       "each board's figure is in the appendix.", class_="note"))


def _board_row(b: dict) -> Safe:
    fed = "the origin" if b["fed_by"] == "supply" else cat("sub-main ", el("code", b["fed_via"] or b["fed_by"]))
    return el("tr",
              el("td", el("b", b["id"]), " ", b["name"]),
              el("td", fed),
              el("td", plain(b["main_switch_a"], "A"), class_="n"),
              el("td", plain(b["rcd_ma"], "mA") if b["rcd_ma"] is not None else "—", class_="n"),
              el("td", num(b["pfc_ka"], "kA"), class_="n"),
              el("td", num(b["demand_a"], "A"), el("span", f"limit {num(b['check']['limit'], 'A')}", class_="lim"),
                 el("span", _spare(b["spare_kw"]), class_="lim"), class_="n"),
              el("td", badge(b["status"])))


def _spare(kw) -> str:
    """The board's spare demand in words (apart from each circuit's own headroom)."""
    if kw is None:
        return "spare not known"
    return f"can take {kw:.1f} kW more" if kw >= 0 else f"{-kw:.1f} kW over"


def _diagram(doc: dict) -> Safe:
    drawing = diagram.render(doc)
    one_piece = drawing.count("<svg") == 1
    return cat(el("h2", "2. One-line diagram", id="diagram"),
               el("div",
                  el("p", "From the origin of the supply through each board to every circuit, and on through each "
                          "sub-main to the board it feeds. Each box is marked with its state; each circuit shows its "
                          "protective device, cable, Ib and Iz.", class_="note"),
                  _legend(),
                  el("div", drawing, class_="figure"), class_="keep" if one_piece else None))


def _figure(c: dict, value, check_id: str, limit_text: str | None, digits: int = 2) -> Safe:
    """A key figure in the unit of its column, its limit under it, and its check's mark unless it passes."""
    chk = next(k for k in c["checks"] if k["id"] == check_id)
    if value is None:
        return el("td", mark(chk["status"]), " ", el("span", WORD[NOT_ASSESSED], class_="lim"), class_="n")
    flag = cat(mark(chk["status"]), " ") if chk["status"] != PASS else ""
    return el("td", flag, num(value, digits=digits), el("span", limit_text, class_="lim") if limit_text else None,
              class_="n")


def _circuit_row(c: dict) -> Safe:
    cab, dev = c["cable"], c["device"]
    what = [el("b", c["name"])]
    if c["topology"] == "ring":
        what.append(el("div", "ring final circuit", class_="small"))
    if c["feeds"]:
        what.append(el("div", "sub-main to board ", el("code", c["feeds"]), class_="small"))
    loads = ", ".join(ld["name"] or ld["kind"] for ld in c["loads"])
    if loads:
        what.append(el("div", loads, class_="small"))
    device = [dev["label"]]
    extra = [f"{plain(c['rcd_ma'], 'mA')} RCD" if c.get("rcd_ma") else "no RCD"]
    if dev["breaking_ka"] is not None:
        extra.append(plain(dev["breaking_ka"], "kA"))
    device.append(el("div", ", ".join(extra), class_="small"))
    cpc = f"{figures.trimmed(cab['cpc_mm2'], 2)}" if cab["cpc_mm2"] is not None else "?"
    cable = [el("span", f"{figures.trimmed(cab['csa_mm2'], 2)}/{cpc} mm²", class_="nowrap"),
             el("div", cab["kind"], class_="small nowrap"),
             el("div", f"method {cab['method']}, {plain(cab['length_m'], 'm')}", class_="small")]
    cap = next(k for k in c["checks"] if k["id"] == "capacity")
    fl = next(k for k in c["checks"] if k["id"] == "fault-loop")
    if fl["unit"] == "ohm" and fl["limit"] is not None:
        zs_limit = f"≤ {num(fl['limit'], digits=3)}"
    elif fl["unit"] != "ohm" and fl["value"] is not None:
        zs_limit = f"RA·IΔn {num(fl['value'], fl['unit'])} ≤ {num(fl['limit'], fl['unit'])}"
    else:
        zs_limit = None
    verdict = [badge(c["status"])]
    verdict += [el("div", mark(k["status"], 9), " ", k["id"], class_="small")
                for k in c["checks"] if k["status"] != PASS and not unmeasured(k)]
    return el("tr",
              el("td", c["id"]),
              el("td", what),
              el("td", device),
              el("td", cable),
              _figure(c, c["ib_a"], "design-current", None),
              el("td", plain(c["in_a"]), class_="n"),
              _figure(c, c["iz_a"], "capacity",
                      f"≥ {num(cap['limit'])} {BASIS_TEXT.get(c['basis'], '')}".rstrip() if cap["limit"] is not None
                      else None),
              _figure(c, c["vd_pct"], "voltage-drop",
                      f"≤ {num(c['vd_limit_pct'])}" if c["vd_limit_pct"] is not None else None),
              _figure(c, c["zs_ohm"], "fault-loop", zs_limit, digits=3),
              el("td", num(c["headroom_kw"], sign=True) if c["headroom_kw"] is not None else "—", class_="n"),
              el("td", verdict), data_ref=c["ref"], data_status=c["status"])


def _circuits(doc: dict) -> Safe:
    widths = (5, 17, 12, 12, 7, 5, 9, 7, 8, 7, 11)
    cols = el("colgroup", [el("col", style=f"width:{width}%") for width in widths])
    head = el("thead", el("tr", el("th", "Way"), el("th", "Circuit"), el("th", "Protective device"),
                          el("th", "Cable line/cpc"), el("th", "Ib A", class_="n"), el("th", "In A", class_="n"),
                          el("th", "Iz A", class_="n"), el("th", "VD %", class_="n"),
                          el("th", "Zs Ω", class_="n"), el("th", "Head\u00adroom kW", class_="n"), el("th", "Verdict")))
    body = []
    for b in doc["boards"]:
        rows = [c for c in doc["circuits"] if c["board"] == b["id"]]
        body.append(el("tr", el("th", el("b", b["id"]), " ", b["name"], " · ",
                                f"{len(rows)} circuit{'s' if len(rows) != 1 else ''}", colspan=11), class_="group"))
        body.extend(_circuit_row(c) for c in rows)
    return cat(el("h2", "3. Circuits", id="circuits"),
               el("table", cols, head, el("tbody", body), class_="data circuits"),
               el("p", "Ib: design current. In: rated current of the protective device. Iz: current-carrying "
                       f"capacity of the cable as installed, with what it must carry under it (In; {RING_MIN_IZ_A:g} A for a "
                       "qualifying ring; Ib where the cable is sized on the design current; In/0.725 behind a "
                       "rewirable fuse). VD: voltage drop from the "
                       "origin to the far end, in % of U0, with its limit. Zs: earth fault loop impedance at the far "
                       f"end, with the device's maximum (or, where an RCD gives fault protection, RA·IΔn ≤ {TOUCH_VOLTAGE_V:g} V). "
                       "Headroom: the extra load the circuit itself could take before a check of it fails "
                       "(negative: how far over); the board's spare demand, before its demand, the sub-main feeding "
                       "it or the origin fails, is in the boards' table. A mark beside a figure gives that "
                       "check's state when it does not pass; every check's working is in the appendix.",
                  class_="note"))


def _ack_text(ack: dict) -> Safe:
    return cat(f"revision #{ack['revision']}, {when(ack['at'])}, by ", el("b", ack["author"]),
               ": “", ack["note"] or "", "” ", el("span", f"(covering {', '.join(ack['checks'])})", class_="small"))


def _changes_text(changes: list[dict], site_id: str) -> Safe:
    return cat(*[cat(el("span", _change_line(ch, site_id), class_="change"), el("br")) for ch in _compact(changes)])


def _cause_text(cause: dict, site_id: str) -> Safe:
    if cause["first_record"]:
        lead = cat(f"already so when the history began: revision #{cause['revision']}, {when(cause['at'])} — "
                   f"first record of ", el("code", cause["file"] or "?"))
        return cat(lead, f"; worse since revision #{cause['worse_revision']}" if cause["worse_revision"] else "")
    what = cat(f"revision #{cause['revision']}, {when(cause['at'])}, by ", el("b", cause["author"]),
               (cat(": “", cause["note"], "”") if cause["note"] else ""))
    changed = _changes_text(cause["changes"], site_id) if cause["changes"] else None
    worse = f" Worse since revision #{cause['worse_revision']}." if cause["worse_revision"] else ""
    return cat(what, worse, el("div", changed) if changed else None)


def _problem(p: dict) -> Safe:
    checks = el("ul", [el("li", mark(k["status"]), " ", el("b", check_name(k["id"])), " — ", WORD[k["status"]], ": ",
                          against(k), el("span", k["detail"], class_="detail"))
                       for k in p["open_checks"]], class_="checks-list")
    causes, notes = {}, {}
    for k in p["open_checks"]:
        if k["cause"]:
            causes.setdefault(k["cause"]["revision"], (k["cause"], []))[1].append(k["id"])
        else:
            notes.setdefault(k["cause_note"], []).append(k["id"])
    cause_items = [el("li", el("code", ", ".join(ids)), ": ", _cause_text(cause, p["ref"].split("/")[0])) for cause, ids in causes.values()]
    cause_items += [el("li", el("code", ", ".join(ids)), ": ", note) for note, ids in notes.items()]
    ack = p["acknowledgement"]
    if ack is None:
        ack_text = cat(el("span", "not acknowledged", class_="yes"))
    elif p["acknowledged"]:
        ack_text = cat(badge(PASS, "acknowledged"), " in ", _ack_text(ack))
    else:
        uncovered = [k["id"] for k in p["open_checks"] if not k["acknowledged"]]
        ack_text = cat(el("span", "not acknowledged", class_="yes"), f" for {', '.join(uncovered)}: the latest "
                       "acknowledgement came before the problem began or does not name it — ", _ack_text(ack))
    if p["remedy"]:
        remedy = p["remedy"]["text"]
    elif p["kind"] == "circuit":
        remedy = "no change is proposed: nothing fails (see the checks above)"
    else:
        remedy = "no change is proposed: the demand does not fail (see the check above)"
    kind = {"circuit": "Circuit", "board": "Board", "origin": "Origin"}[p["kind"]]
    return el("article",
              el("h3", badge(p["status"]), " ", kind, " ", el("code", p["ref"]), " — ", p["name"]),
              checks,
              el("dl", el("dt", "Cause"), el("dd", el("ul", cause_items)),
                 el("dt", "Acknowledged"), el("dd", ack_text),
                 el("dt", "Remedy"), el("dd", remedy)),
              class_=f"problem p-{p['status']}", data_ref=p["ref"])


def _problems(doc: dict) -> Safe:
    items = doc["problems"]
    if not items:
        body = el("p", badge(PASS, "None."), " Every check of every circuit and board holds.")
    else:
        body = cat(el("p", "Every circuit, board or origin with a check that does not pass, worst first: which "
                           "checks, why (the engine's working), the change that caused it according to the history, "
                           "its acknowledgement, and the smallest remedy the checks accept.", class_="note"),
                   *[_problem(p) for p in items])
    return cat(el("h2", "4. Open problems", id="problems"), body)


def _depth(ref: str) -> int:
    return ref.count("/")


def _compact(changes: list[dict]) -> list[dict]:
    """Additions and removals of whole circuits carry their loads with them: list the circuit only."""
    whole = {ch["ref"] for ch in changes if ch["change"] in ("added", "removed")}
    return [ch for ch in changes
            if not (ch["change"] in ("added", "removed") and any(ch["ref"].startswith(circuit_ref + "/") for circuit_ref in whole))]


def _change_line(ch: dict, site_id: str) -> str:
    ref = _short(ch["ref"], site_id)
    if ch["change"] == "modified":
        return f"{ref} {ch['field']}: {figures.change(ch['old'], ch['new'])}"
    what = {0: "site", 1: "board", 2: "circuit", 3: "load"}.get(_depth(ch["ref"]), "element")
    return f"{ref} {what} {ch['change']}"


def _first_record(r: dict) -> bool:
    return r["source"] == "startup" and bool(r["changes"]) and all(ch["change"] == "added" for ch in r["changes"])


def _signature_text(r: dict):
    """How the git commit a change arrived by was signed, in words (nothing if not by a commit)."""
    signed = r.get("signature")
    if not signed:
        return ""
    words = {"verified": "signed commit, verified", "unverified": "signed commit, not verifiable",
             "bad": "commit with a BAD signature", "unsigned": "unsigned commit"}[signed["status"]]
    return el("div", words + (f" ({signed['signer']})" if signed.get("signer") else ""), class_="small")


def _source_text(r: dict) -> str:
    return "first record" if _first_record(r) else SOURCE_TEXT.get(r["source"], r["source"])


def _what_changed(r: dict, site_id: str) -> Safe:
    if r.get("ack"):
        later = r["ack"].get("superseded_by")
        return cat("acknowledgement of ", el("code", r["ack"]["ref"]), f" ({', '.join(r['ack']['checks'])})",
                   el("div", f"superseded by revision #{later}", class_="small") if later else None)
    changes = _compact(r["changes"])
    first = _first_record(r)
    lead = el("div", el("code", r["file"] or ""), " — first record" if first else None,
              " (did not load)" if not r["valid"] else None, class_="small")
    if first:
        kinds = {}
        for ch in r["changes"]:
            what = {0: "site", 1: "board", 2: "circuit", 3: "load"}.get(_depth(ch["ref"]), "element")
            kinds[what] = kinds.get(what, 0) + 1
        return cat(lead, ", ".join(f"{n} {k}{'s' if n != 1 else ''}" for k, n in kinds.items()) + " recorded")
    if not changes:
        return cat(lead, el("span", "no element changed (layout or comments only)", class_="small"))
    return cat(lead, _changes_text(changes, site_id))


TRANSITION_WORD = {"newly-failing": "newly failing", "worse": "worse", "cleared": "cleared",
                   "input-error": "input error"}


def _short(ref: str, site_id: str) -> str:
    """A ref inside the site's own report, without the site id ('CU1/3'; the origin: 'origin')."""
    if ref == site_id:
        return "origin"
    return ref[len(site_id) + 1:] if ref.startswith(site_id + "/") else ref


def _what_it_did(r: dict, site_id: str) -> Safe:
    if not r["events"]:
        return el("span", "no check changed state", class_="small")
    out = []
    for e in r["events"]:
        m = TRANSITION_MARK.get(e["transition"], WARN)
        word = el("b", TRANSITION_WORD.get(e["transition"], e["transition"]))
        if e["transition"] == "input-error":
            out.append(el("li", mark(m), " ", word, ": ", e["detail"] or ""))
            continue
        if e["check"] == "deadline" and e.get("detail"):     # the deadline in words: what, its last day, its rule
            out.append(el("li", mark(m), " ", el("code", _short(e["ref"], site_id)), " deadline ", word, ": ",
                          e["detail"]))
            continue
        figure = ""
        if e.get("value") is not None and e.get("unit"):
            figure = f": {num(e['value'], e['unit'])}"
            figure += f" against {num(e['limit'], e['unit'])}" if e.get("limit") is not None else ""
        out.append(el("li", mark(m), " ", el("code", _short(e["ref"], site_id)), " ", e["check"] or "", " ", word,
                      figure))
    return el("ul", out, class_="plain events")


def _history(doc: dict) -> Safe:
    h = doc["history"]
    head = el("h2", "5. Change history", id="history")
    if h["state"] == "none":
        return cat(head, el("p", badge(NOT_ASSESSED, "No history recorded yet."), " ", h["reason"] or "",
                            ". The circuits above are checked from the site files as they are now; changes are "
                            "recorded from the first use of izwatch watch, replace or ack."))
    if h["state"] == "unreadable":
        return cat(head, el("p", badge(FAIL, "The history could not be read:"), " ", h["reason"] or ""))
    revs = h["revisions"]
    scope = (f"Revisions at or after {h['since']}: {len(revs)} of the {h['revisions_of_site']} about this site."
             if h["since"] else f"All {len(revs)} revisions about this site, oldest first.")
    if not revs:
        return cat(head, el("p", scope))
    rows = [el("tr",
               el("td", f"#{r['id']}", el("div", _source_text(r), class_="small")),
               el("td", el("span", when(r["at"]).split(" ")[0], class_="nowrap"),
                  el("div", " ".join(when(r["at"]).split(" ")[1:]), class_="small")),
               el("td", r["author"], _signature_text(r)),
               el("td", r["note"] or el("span", "no note", class_="small")),
               el("td", _what_changed(r, doc["site"]["id"])),
               el("td", _what_it_did(r, doc["site"]["id"])), data_revision=r["id"])
            for r in revs]
    cols = el("colgroup", [el("col", style=f"width:{width}%") for width in (12, 11, 11, 18, 24, 24)])
    table = el("table", cols, el("thead", el("tr", el("th", "Rev."), el("th", "When"), el("th", "Who"), el("th", "Why"),
                                       el("th", "What changed (before → after)"), el("th", "What it did"))),
               el("tbody", rows), class_="data history fixed")
    return cat(head, el("p", scope, class_="note"), table)


FILE_STATE = {
    "recorded": lambda f: cat(badge(PASS, "recorded"), f" — matches revision #{f['recorded_revision']}"),
    "changed-since": lambda f: cat(badge(WARN, "changed"), f" since revision #{f['recorded_revision']}: "
                                   "the change is not in the history yet"),
    "not-recorded": lambda f: cat(badge(WARN, "not in the history"), " — never recorded"),
    "no-history": lambda f: cat(badge(NOT_ASSESSED, "no history")),
}


def _integrity(doc: dict) -> Safe:
    v = doc["verification"]
    head = el("h2", "6. Integrity of the history", id="integrity")
    if v["state"] == "intact":
        full = v.get("verified_in_full")
        if full is None:
            result = cat(badge(PASS, "Intact."), f" The hash chain of all {v['revisions']} revisions recomputes: no "
                         "recorded revision has been changed or removed. SQLite's own integrity check of the file "
                         "is run by izwatch verify.")
        else:
            result = cat(badge(PASS, "Intact."), f" The hash chain of all {v['revisions']} revisions holds: the "
                         f"revisions after #{full['revision']} recompute now, and #{full['revision']} still has the "
                         f"hash it had when izwatch verify checked revisions #1 to #{full['revision']} in full "
                         f"({when(full['at'])}).")
    elif v["state"] == "broken":
        result = cat(badge(FAIL, "Does not verify."), " ", v["problem"] or "",
                     f" (first revision that does not match: #{v['first_bad']})." if v["first_bad"] else ".",
                     " The history above cannot be relied on past that point.")
    elif v["state"] == "unreadable":
        result = cat(badge(FAIL, "Could not be verified:"), " ", v["problem"] or "")
    else:
        result = cat(badge(NOT_ASSESSED, "Nothing to verify:"), " no history is recorded yet.")
    meta = [("Checked", v["scope"]), ("History file", el("code", doc["history"]["path"]))]
    if v["head_hash"]:
        meta.append(("Chain head", el("span", v["head_hash"], class_="hash")))
    files = el("table", el("thead", el("tr", el("th", "Site file"), el("th", "SHA-256 of its content now"),
                                       el("th", "Against the history"))),
               el("tbody", [el("tr", el("td", el("code", f["file"])), el("td", el("span", f["sha256"] or "—", class_="hash")),
                               el("td", FILE_STATE[f["state"]](f))) for f in doc["site"]["files"]]),
               class_="data")
    return cat(head, el("p", result),
               el("dl", [cat(el("dt", k), el("dd", x)) for k, x in meta], class_="meta"),
               el("p", "Keep the chain head with your records: a later history that does not contain it has lost "
                       "revisions from its end, which no check inside the file can show.", class_="note") if v["head_hash"] else None,
               el("h3", "The site files this report was made from"), files)


def _appendix(doc: dict) -> Safe:
    blocks = []
    for c in doc["circuits"]:
        rows = [el("tr", el("td", badge(k["status"])), el("td", el("code", k["id"])), el("td", against(k), class_="n"),
                   el("td", k["detail"], class_="detail")) for k in c["checks"]]
        blocks.append(cat(el("h4", el("code", c["ref"]), " — ", c["name"]),
                          el("table", el("tbody", rows), class_="data details")))
    for b in doc["boards"] + [dict(doc["origin"], name="origin of the supply")]:
        k = b["check"]
        blocks.append(cat(el("h4", el("code", b["ref"]), " — ", b.get("name") or ""),
                          el("table", el("tbody", el("tr", el("td", badge(k["status"])), el("td", el("code", k["id"])),
                                                     el("td", against(k), class_="n"),
                                                     el("td", k["detail"], class_="detail"))), class_="data details")))
    return el("section", el("h2", "Appendix: the working of every check", id="appendix"),
              el("p", "Each check's figure against its limit and the engine's one-line working, naming the regulation "
                      "or method it applies. Values marked [code], [derived] or [recalled] are catalogue values not "
                      "confirmed against a published source.", class_="note"),
              blocks, class_="appendix")


def _warnings(doc: dict) -> Safe | None:
    if not doc["warnings"]:
        return None
    return el("p", badge(WARN, "Notes on the site files:"), " ",
              "; ".join(warning["text"] for warning in doc["warnings"]), class_="note")


def _foot(doc: dict) -> Safe:
    return el("footer",
              el("p", el("b", "Caution. "), doc["caution"]),
              el("p", f"Made by izwatch {doc['tool']['version']} on {when(doc['generated_at'])} from the site files "
                      "listed in section 6 and the history they were checked against. The figures are the checks' own "
                      "(the appendix that follows gives the working of each); where data was missing a check says not "
                      "assessed and why."))


def _contents() -> Safe:
    links = [("supply", "1 Site and supply"), ("diagram", "2 One-line diagram"), ("circuits", "3 Circuits"),
             ("problems", "4 Open problems"), ("history", "5 Change history"), ("integrity", "6 Integrity"),
             ("inspections", "7 Inspections and deadlines"), ("appendix", "Appendix")]
    return el("p", "Contents: ", cat(*[cat(el("a", t, href=f"#{a}"), " · " if i < len(links) - 1 else "")
                                       for i, (a, t) in enumerate(links)]), class_="contents")


def _page(title: str, footer_left: str, body: Safe) -> str:
    return "<!DOCTYPE html>\n" + el(
        "html",
        el("head", el("meta", charset="utf-8"),
           el("meta", http_equiv="Content-Security-Policy", content=CSP),
           el("meta", name="viewport", content="width=device-width, initial-scale=1"),
           el("meta", name="generator", content="izwatch"),
           el("title", title),
           el("style", stylesheet(footer_left))),
        el("body", el("main", body, class_="page")), lang="en") + "\n"


def render(doc: dict) -> str:
    site = doc["site"]
    body = cat(_head(doc), _summary(doc),
               el("aside", el("b", "Caution. "), doc["caution"], class_="caution"),
               _contents(), _warnings(doc),
               _supply(doc), _diagram(doc), _circuits(doc), _problems(doc), _history(doc), _integrity(doc),
               inspections_html.section(doc), _foot(doc), _appendix(doc))
    return _page(f"Installation report — {site['name'] or site['id']}",
                 f"izwatch report · {site['id']} · {doc['generated_at'][:10]}", body)


def render_index(index: dict) -> str:
    """The front page of `--all-sites`: one line per site, linking its report."""
    rows = []
    for s in index["sites"]:
        if s.get("errors"):
            rows.append(el("tr", el("td", el("code", s["id"])), el("td", s.get("name") or ""),
                           el("td", badge(FAIL, "not loaded")),
                           el("td", el("ul", [el("li", e["text"]) for e in s["errors"]], class_="plain small"), colspan=3)))
            continue
        rows.append(el("tr", el("td", el("a", el("code", s["id"], class_="nowrap"), href=s["report"])),
                       el("td", s["name"]),
                       el("td", badge(s["status"])), el("td", status_count(s["circuits"])),
                       el("td", f"{s['problems']} ({s['unacknowledged']} not acknowledged)", class_="n"),
                       el("td", when(s["last_change"]) if s["last_change"] else "none recorded")))
    v = index["verification"]
    ver = {"intact": badge(PASS, f"intact, {v['revisions']} revisions"), "broken": badge(FAIL, "does not verify"),
           "unreadable": badge(FAIL, "unreadable"), "none": badge(NOT_ASSESSED, "none recorded yet")}[v["state"]]
    body = cat(
        el("header", el("p", "Electrical installation reports — index", class_="kicker"),
           el("h1", f"Installation reports: {len(index['sites'])} site{'s' if len(index['sites']) != 1 else ''}"),
           el("dl", el("dt", "Estate"), el("dd", el("code", index["estate"])),
              el("dt", "Report made"), el("dd", f"{when(index['generated_at'])} with izwatch {index['tool']['version']}"),
              el("dt", "History"), el("dd", ver, " ", v["problem"] or ""),
              *([cat(el("dt", "Chain head"), el("dd", el("span", v["head_hash"], class_="hash")))] if v["head_hash"] else []),
              class_="meta")),
        el("aside", el("b", "Caution. "), index["caution"], class_="caution"),
        el("table", el("thead", el("tr", el("th", "Site"), el("th", "Name"), el("th", "Verdict"), el("th", "Circuits"),
                                   el("th", "Open problems", class_="n"), el("th", "Last recorded change"))),
           el("tbody", rows), class_="data index"),
        _legend(),
        el("footer", el("p", el("b", "Caution. "), index["caution"])))
    return _page("Installation reports — index", f"izwatch reports · {index['generated_at'][:10]}", body)
