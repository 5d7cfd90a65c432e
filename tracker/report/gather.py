"""The report document (izwatch.report/1): everything the landlord's report says about one site,
gathered once, as plain JSON-able data. Every format renders this document and nothing else.

The numbers are the engine's (rounded as `check --json` rounds them); nothing is recomputed here.
The history is opened for reading only. Where a figure or a record is missing, the document says
so and why instead of leaving it out.
"""
from __future__ import annotations

import sqlite3
from datetime import datetime, timezone
from pathlib import Path

from tracker import __version__
from tracker.checks.context import build_facts, device_label
from tracker.checks.readings import unmeasured
from tracker.checks.fault_loop import FaultLoopWorking
from tracker.checks.rcd import RcdWorking
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, SEVERITY, WARN
from tracker.checks import demand_remedy
from tracker.checks.site import SiteResult, board_spare_kw, evaluate_site, origin_spare_kw
from tracker.graph import BOARD, CIRCUIT, LOAD, build_graph, kind_of
from tracker.history import History, HistoryError, history_location, location_exists, shown_location
from tracker.history import query
from tracker.history.store import is_damage
from tracker.history.verify import verify_tail
from tracker.model import PHASES, Site
from tracker.output.figures import rounded
from tracker.output.json_out import CAUTION, circuit_entry
from tracker.report import inspections as inspection_record

SCHEMA = "izwatch.report/1"
STATUSES = (PASS, FAIL, WARN, NOT_ASSESSED)
VERIFY_SCOPE = "the whole history file (every site recorded in it)"


def damaged_read(db, exc: BaseException) -> str:
    """A damaged page met while reading the history, in words."""
    return (f"{shown_location(db)}: the history database is damaged ({exc}); it is left as it is — run izwatch "
            "verify, and restore it from a backup")


def verify_scope(verified_head: dict | None) -> str:
    """What a report's verification covered, in words (verify.verify_tail)."""
    if verified_head is None:
        return ("the whole history file (every site recorded in it): every revision's hash recomputed now; "
                "SQLite's own integrity check of the file is run by `izwatch verify`")
    n = verified_head["revision"]
    return (f"the whole history file (every site recorded in it): the hashes of the revisions after #{n} recomputed "
            f"now; revisions #1 to #{n} checked in full by `izwatch verify` on {verified_head['at']} (SQLite's "
            f"integrity check and every hash), and revision #{n} still has the hash it had then")




def _iso(moment: datetime) -> str:
    return moment.astimezone(timezone.utc).isoformat(timespec="seconds").replace("+00:00", "Z")


# -- the installation ----------------------------------------------------------------------

def _supply(site: Site, sr: SiteResult) -> dict:
    s = site.supply
    used = next(iter(sr.boards.values())).ctx.supply.pfc_ka if sr.boards else s.pfc_ka
    out = {"system": s.system, "u0_v": s.u0_v, "ze_ohm": s.ze_ohm, "pfc_ka": s.pfc_ka,
           "pfc_used_ka": rounded(used, "kA"), "service_fuse_a": s.service_fuse_a,
           "electrode_ohm": s.electrode_ohm, "private": s.private}
    if s.three_phase:
        sup = next(iter(sr.boards.values())).ctx.supply if sr.boards else None
        out.update({"phases": 3, "u_line_v": rounded(s.line_v, "V", 1), "pfc_line_neutral_ka": s.pfc_line_neutral_ka,
                    "pfc3_used_ka": rounded(sup.pfc3_ka, "kA") if sup else None})
    return out


def _origin(sr: SiteResult) -> dict:
    chk = sr.supply_check
    out = {"ref": sr.site.id, "status": chk.status, "demand_a": rounded(chk.value, "A"), "check": chk.as_json(),
           "spare_kw": rounded(origin_spare_kw(sr), "kW"), "remedy": _demand_remedy(demand_remedy.for_origin(sr))}
    if sr.supply_phases_a is not None:
        out["demand_phases_a"] = {ph: rounded(v, "A") for ph, v in zip(PHASES, sr.supply_phases_a)}
    if sr.notification is not None:
        out["network_operator"] = sr.notification.as_json()
    return out


def _demand_remedy(found: dict | None) -> dict | None:
    """A board's or the origin's remedy in the shape of a circuit's (its options as the changes)."""
    if found is None:
        return None
    return {"text": found["text"], "changes": found["options"], "load_limit_kw": None}


def _board(sr: SiteResult, b) -> dict:
    board = sr.site.board(b.board_id)
    ctx = b.ctx
    return {
        "ref": b.ref, "id": b.board_id, "name": board.name, "fed_by": board.fed_by,
        "fed_via": ctx.fed_via, "main_switch_a": board.main_switch_a, "rcd_ma": board.rcd_ma,
        "conditional_rating_ka": board.conditional_rating_ka,
        "file": board.src.file if board.src else None,
        "status": b.status, "demand_a": rounded(b.demand.demand_a, "A"),
        "demand_parts": [{"category": cat, "connected_a": rounded(conn, "A"), "allowed_a": rounded(allowed, "A")}
                         for cat, conn, allowed in b.demand.parts],
        "not_counted": list(b.demand.unknown),
        "pfc_ka": rounded(ctx.pfc_ka, "kA"), "loop_at_board_ohm": rounded(ctx.z_ext_ohm, "ohm"),
        "check": b.check.as_json(),
        **_board_phases(b),
        "diversity_table": b.demand.table,
        "spare_kw": rounded(board_spare_kw(sr, b.ref)[0], "kW"), "spare_limit": board_spare_kw(sr, b.ref)[1] or None,
        "remedy": _demand_remedy(demand_remedy.for_board(sr, b.ref)),
    }


def _board_phases(b) -> dict:
    """Extension, a board of a three-phase supply: its phases, its line or each line's demand."""
    ctx, d = b.ctx, b.demand
    if not ctx.supply.three_phase:
        return {}
    if d.phases_a is None:
        return {"phases": 1, "phase": ctx.line}
    return {"phases": 3, "phase": None, "demand_phases_a": {ph: rounded(v, "A") for ph, v in zip(PHASES, d.phases_a)},
            "neutral_a": rounded(d.neutral_a, "A"), "imbalance_pct": rounded(d.imbalance_pct, "%", 1),
            "pfc3_ka": rounded(ctx.pfc3_ka, "kA")}


def _circuit(sr: SiteResult, r) -> dict:
    c = r.circuit
    entry = circuit_entry(sr, r)          # the check --json entry: the same figures, the same rounding
    facts = build_facts(c, r.ctx, r.fed_demand_a, fed_phases_a=r.fed_phases_a)
    vd = r.check("voltage-drop")
    rcd, loop = r.working.of(RcdWorking), r.working.of(FaultLoopWorking)
    entry.update({
        "id": c.id,
        "topology": c.topology,
        "feeds": c.feeds,
        "overload_exempt": c.overload_exempt,
        "device": {"kind": c.device.kind, "curve": c.device.curve, "rating_a": c.device.rating_a,
                   "breaking_ka": c.device.breaking_ka, "label": device_label(c.device)},
        "rcd_ma": rcd.rcd_ma if rcd else None,
        "cable": {"kind": c.cable.kind, "csa_mm2": c.cable.csa_mm2, "cpc_mm2": facts.cpc_mm2,
                  "cpc_given": c.cable.cpc_mm2 is not None, "length_m": c.cable.length_m,
                  "method": c.cable.method},
        "loads": [{"id": ld.id, "kind": ld.kind, "name": ld.name, "power_kw": ld.power_kw,
                   "current_a": ld.current_a, "location": ld.location} for ld in c.loads],
        "vd_pct": rounded(vd.value, "%"), "vd_limit_pct": rounded(vd.limit, "%"),
        "zs_ohm": rounded(loop.zs_ohm, "ohm") if loop else None, "max_zs_ohm": rounded(loop.max_zs_ohm, "ohm") if loop else None,
    })
    entry.setdefault("remedy", None)
    return entry


def _one_line(site: Site, sr: SiteResult) -> dict:
    """The tree origin → boards → circuits (→ the board a sub-main feeds → ...), from the graph."""
    g = build_graph([site])
    status = {ref: r.status for ref, r in sr.circuits.items()}
    status.update({ref: b.status for ref, b in sr.boards.items()})
    status[site.id] = sr.supply_check.status

    def node(ref: str) -> dict:
        kind = kind_of(g, ref)
        kids = [n for n in g.successors(ref) if kind_of(g, n) != LOAD]
        return {"ref": ref, "kind": kind if kind in (BOARD, CIRCUIT) else "origin", "status": status[ref],
                "children": [node(n) for n in kids]}

    return node(site.id)


# -- the history ---------------------------------------------------------------------------

def _file_states(site_files: dict[str, str | None], latest: dict | None) -> list[dict]:
    out = []
    for rel, digest in site_files.items():
        entry = {"file": rel, "sha256": digest, "recorded_revision": None}
        if latest is None:
            entry["state"] = "no-history"
        elif rel not in latest:
            entry["state"] = "not-recorded"
        else:
            rid, chash, valid = latest[rel]
            entry["recorded_revision"] = rid
            entry["state"] = "recorded" if chash == digest and valid else "changed-since"
        out.append(entry)
    return out


def _cause(key, failing: dict, by_id: dict) -> dict | None:
    found = failing.get(key)
    if found is None:
        return None
    rev = by_id.get(found["revision"], {})
    return {
        "revision": found["revision"], "at": found["at"], "author": found["author"], "note": found["note"],
        "file": found["file"], "source": rev.get("source"), "transition": found["transition"],
        "worse_revision": found.get("worse_revision"),
        "first_record": rev.get("source") == "startup" and bool(rev.get("changes"))
        and all(ch["change"] == "added" for ch in rev["changes"]),
        "changes": rev.get("changes", []),
    }


def _no_cause_reason(status: str, history_state: str, files: list[dict]) -> str:
    if history_state == "none":
        return "no history recorded yet"
    if history_state == "unreadable":
        return "the history could not be read"
    if status == NOT_ASSESSED:
        return "the history records when checks start failing; this check is not assessed, so it has no cause entry"
    if status == WARN:
        return "the history records when checks start failing; this is an advisory, so it has no cause entry"
    never = [f["file"] for f in files if f["state"] == "not-recorded"]
    changed = [f["file"] for f in files if f["state"] == "changed-since"]
    if never:
        return f"not in the history yet: it holds no record of {', '.join(never)}"
    if changed:
        return f"not in the history yet: {', '.join(changed)} changed after its last recorded revision"
    return "no failing event recorded for this check"


def _problems(sr: SiteResult, circuits: list[dict], boards: list[dict], origin: dict,
              hist: dict) -> list[dict]:
    failing, acks, by_id = hist["failing"], hist["acks"], hist["by_id"]
    items = []
    for entry, kind, checks in (
            [(c, "circuit", c["checks"]) for c in circuits]
            + [(b, "board", [b["check"]]) for b in boards]
            + [(origin, "origin", [origin["check"]])]):
        open_checks = [chk for chk in checks if chk["status"] != PASS and not unmeasured(chk)]
        if not open_checks:
            continue
        ref = entry["ref"]
        ack = acks.get(ref)
        listed = []
        for chk in open_checks:
            cause = _cause((ref, chk["id"]), failing, by_id) if chk["status"] == FAIL else None
            since = max(cause["revision"], cause["worse_revision"] or 0) if cause else 0
            covered = ack is not None and chk["id"] in ack["checks"] and ack["revision"] > since
            listed.append({**chk, "cause": cause,
                           "cause_note": None if cause else _no_cause_reason(chk["status"], hist["state"], hist["files"]),
                           "acknowledged": covered})
        items.append({
            "ref": ref, "kind": kind,
            "name": entry.get("name") or ("origin of the supply" if kind == "origin" else ""),
            "status": entry["status"], "open_checks": listed,
            "acknowledgement": ack,
            "acknowledged": all(x["acknowledged"] for x in listed),
            "remedy": entry.get("remedy"),
        })
    items.sort(key=lambda p: -SEVERITY[p["status"]])   # stable: file order within a severity
    return items


class HistoryReader:
    """The history as the report reads it: opened once (query only), with what is the same for
    every site of the estate — failure causes, acknowledgements, files' latest states, the chain's
    verification — worked out once; `for_site` adds the site's own revisions. Never writes."""

    def __init__(self, db: Path, scoped: bool = False, checked: dict | None = None):
        """`scoped`: each site's failures, acknowledgements and files are read by index when its
        report is built, so that the cost follows the site's rows and not the history's (else they
        are read once for the whole history). `checked`: the chain's verification as another
        reader of the same history found it (`checked()`), not done again."""
        self.db = history_location(db)
        self.history = None
        self.error: str | None = None
        self.report = None
        self.failing = self.acks = self.latest = None
        if checked is not None and checked["error"] is not None:
            self.error = checked["error"]
            return
        if not location_exists(self.db):
            return
        self.older: str | None = None
        try:
            # a history an earlier izwatch wrote is read as it is (a report never migrates it): the
            # migrations since add a revision source and a table of verified heads, both optional here
            self.history = History.open_for_reading(self.db, older=True)
            behind = self.history.schema_behind()
        except HistoryError as exc:
            self.error = str(exc)
            return
        except sqlite3.DatabaseError as exc:
            self.error = damaged_read(self.db, exc) if is_damage(exc) else f"{shown_location(self.db)}: {exc}"
            return
        if behind is not None:
            self.older = (f"written by an earlier izwatch (history schema {behind[0]} of {behind[1]}), read as it "
                          "is; open it once with `izwatch watch` or `izwatch verify` to bring it up to date")
        try:
            self.report = checked["report"] if checked is not None else verify_tail(self.history)
            if not scoped:
                self.failing = query.failing_since(self.history)
                self.acks = query.latest_acks(self.history)
                self.latest = self.history.latest_by_file()
        except HistoryError as exc:   # rows izwatch did not write: the report says so (verify names where)
            self.error = str(exc)
        except sqlite3.DatabaseError as exc:
            if is_damage(exc):
                self.error = damaged_read(self.db, exc)
            elif self.older is not None:    # a query this earlier schema cannot answer
                self.error = f"{shown_location(self.db)}: {self.older} ({exc})"
            else:
                raise

    def checked(self) -> dict:
        """The verification found here, for readers in other processes (picklable)."""
        return {"report": self.report, "error": self.error}

    def close(self) -> None:
        if self.history is not None:
            self.history.close()
            self.history = None

    def for_site(self, site: Site, site_files: dict, since: str | None) -> dict:
        db = self.db
        out = {"state": "none", "path": shown_location(db), "reason": None, "since": since, "revisions": [],
               "revisions_of_site": 0, "latest_at": None, "failing": {}, "acks": {}, "by_id": {}, "files": None,
               "verification": {"state": "none", "ok": None, "revisions": None, "head_hash": None,
                                "problem": None, "first_bad": None, "scope": VERIFY_SCOPE, "verified_in_full": None}}
        if self.history is None and self.error is None:
            out["reason"] = f"no history recorded yet ({shown_location(db)} does not exist)"
            out["verification"]["problem"] = "no history to verify"
            out["files"] = _file_states(site_files, None)
            return out
        if self.error is not None:
            return _unreadable(out, self.error, site_files)
        try:
            everything = query.revisions(self.history, ref=site.id)
            latest = self.history.latest_by_file(site_files) if self.latest is None else self.latest
            failing = query.failing_since(self.history, ref=site.id) if self.failing is None else self.failing
            acks = query.latest_acks(self.history, ref=site.id) if self.acks is None else self.acks
        except sqlite3.DatabaseError as exc:
            if not is_damage(exc) and self.older is None:
                raise
            problem = (damaged_read(self.db, exc) if is_damage(exc)
                       else f"{shown_location(db)}: {self.older} ({exc})")
            return _unreadable(out, problem, site_files)
        except HistoryError as exc:
            return _unreadable(out, str(exc), site_files)
        out["by_id"] = {r["id"]: r for r in everything}
        out["revisions_of_site"] = len(everything)
        out["latest_at"] = everything[-1]["at"] if everything else None
        out["revisions"] = ([r for r in everything if r["at"] >= since] if since else everything)
        out["failing"] = failing
        out["acks"] = {ref: a for ref, a in acks.items() if ref.split("/")[0] == site.id}
        out["files"] = _file_states(site_files, {f: v for f, v in latest.items() if f in site_files})
        rep = self.report
        out["verification"].update(state="intact" if rep.ok else "broken", ok=rep.ok, revisions=rep.revisions,
                                   head_hash=rep.head_hash or None, problem=rep.problem or None,
                                   first_bad=rep.first_bad, scope=verify_scope(rep.verified_head),
                                   verified_in_full=rep.verified_head)
        out["state"] = "recorded"
        out["reason"] = self.older      # None, or how an earlier izwatch's history was read
        return out


def _unreadable(out: dict, problem: str, site_files: dict) -> dict:
    """A site's history part where the history could not be read: the reason, and no file states."""
    out.update(state="unreadable", reason=problem)
    out["verification"].update(state="unreadable", ok=False, problem=problem)
    out["files"] = _file_states(site_files, None)
    return out


def _read_history(db: Path, site: Site, site_files: dict, since: str | None) -> dict:
    """What the report of one site needs from the history, read in one go."""
    reader = HistoryReader(db, scoped=True)
    try:
        return reader.for_site(site, site_files, since)
    finally:
        reader.close()


# -- the document --------------------------------------------------------------------------

def build(site: Site, site_files: dict[str, str | None], db: Path, since: str | None = None,
          now: datetime | None = None, warnings=(), reader: HistoryReader | None = None) -> dict:
    """The report document of `site`. `site_files`: rel file -> sha256 of its bytes as loaded.
    `reader`: a HistoryReader shared by the reports of many sites (else the history is read here)."""
    now = now or datetime.now(timezone.utc)
    sr = evaluate_site(site)
    circuits = [_circuit(sr, r) for r in sr.circuits.values()]
    boards = [_board(sr, b) for b in sr.boards.values()]
    origin = _origin(sr)
    hist = reader.for_site(site, site_files, since) if reader else _read_history(history_location(db), site, site_files, since)
    hist["files_pending"] = any(f["state"] in ("changed-since", "not-recorded") for f in hist["files"])
    problems = _problems(sr, circuits, boards, origin, hist)
    counts = {s: sum(1 for c in circuits if c["status"] == s) for s in STATUSES}
    history = {k: hist[k] for k in ("state", "path", "reason", "since", "revisions_of_site", "latest_at")}
    history["revisions"] = [_revision(r) for r in hist["revisions"]]
    return {
        "schema": SCHEMA,
        "generated_at": _iso(now),
        "tool": {"name": "izwatch", "version": __version__},
        "caution": CAUTION,
        "site": {"id": site.id, "name": site.name, "rules": site.rules, "premises": site.premises,
                 "folder": site.folder, "files": hist["files"]},
        "supply": _supply(site, sr),
        "summary": {
            "status": sr.status,
            "circuits": {"total": len(circuits), **counts},
            "boards": len(boards),
            "problems": len(problems),
            "unacknowledged": sum(1 for p in problems if not p["acknowledged"]),
            "files_pending": hist["files_pending"],
        },
        "origin": origin,
        "boards": boards,
        "circuits": circuits,
        "one_line": _one_line(site, sr),
        "problems": problems,
        "history": history,
        "verification": hist["verification"],
        "inspections": inspection_record.section(sr, now.date()),
        "warnings": [warning.as_json() for warning in warnings],
    }


def _revision(r: dict) -> dict:
    keep = ("id", "at", "author", "note", "source", "file", "site", "valid", "content_hash", "hash",
            "changes", "events")
    out = {k: r[k] for k in keep}
    out["ack"] = r.get("ack")
    if r.get("signature"):     # arrived as a git commit (extension)
        out["signature"] = r["signature"]
    return out


INDEX_SCHEMA = "izwatch.report-index/1"


def index_row(doc: dict, name: str) -> dict:
    """A site's row of the index of `--all-sites`: its report document's summary, `name` its file."""
    return {"id": doc["site"]["id"], "name": doc["site"]["name"], "report": name,
            "status": doc["summary"]["status"], "circuits": doc["summary"]["circuits"],
            "problems": doc["summary"]["problems"], "unacknowledged": doc["summary"]["unacknowledged"],
            "last_change": doc["history"]["latest_at"], "errors": []}


def index(docs: list[tuple[dict, str]], failed: list[tuple[str, list]], estate: str,
          now: datetime | None = None, verification: dict | None = None) -> dict:
    """The index of `--all-sites`: `docs` as (report document, its file name), `failed` as
    (site folder, input errors) for the sites that did not load."""
    if verification is None and docs:
        verification = docs[0][0]["verification"]
    return index_of([index_row(doc, name) for doc, name in docs], failed, estate, now, verification)


def index_of(rows: list[dict], failed: list[tuple[str, list]], estate: str, now: datetime | None = None,
             verification: dict | None = None) -> dict:
    """The index from its rows (`index_row`), kept without the documents they came from."""
    now = now or datetime.now(timezone.utc)
    sites = list(rows)
    for folder, errors in failed:
        sites.append({"id": folder, "name": None, "report": None, "status": None, "circuits": None,
                      "problems": None, "unacknowledged": None, "last_change": None,
                      "errors": [e.as_json() for e in errors]})
    sites.sort(key=lambda s: s["id"])
    if verification is None:
        verification = {"state": "none", "ok": None, "revisions": None, "head_hash": None, "problem": "no site loaded",
                        "first_bad": None, "scope": VERIFY_SCOPE, "verified_in_full": None}
    return {"schema": INDEX_SCHEMA, "generated_at": _iso(now), "tool": {"name": "izwatch", "version": __version__},
            "caution": CAUTION, "estate": estate, "verification": verification, "sites": sites}
