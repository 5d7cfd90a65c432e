"""The report as CSV for spreadsheets: one row per circuit, its key figures and its state.

UTF-8 without a byte-order mark, a header row, comma-separated, CRLF line ends (RFC 4180).
Numbers are plain numbers (units live in the column names, as everywhere in izwatch); an empty
cell is a figure that was not assessed (the check columns say which and `open_checks` why not).
Text that a spreadsheet would run as a formula (it begins with = + - @) gets a leading apostrophe.
"""
from __future__ import annotations

import csv
import io

from tracker.checks import registry
from tracker.checks.readings import unmeasured


def _check(c: dict, check_id: str) -> dict:
    """A circuit's check by id ({} where the check does not apply to that circuit)."""
    return next((k for k in c["checks"] if k["id"] == check_id), {})


def _acknowledged(doc: dict, ref: str) -> str:
    for p in doc["problems"]:
        if p["ref"] == ref:
            return "yes" if p["acknowledged"] else "no"
    return ""


COLUMNS = [
    ("site", lambda d, c: d["site"]["id"]),
    ("ref", lambda d, c: c["ref"]),
    ("board", lambda d, c: c["board"]),
    ("circuit", lambda d, c: c["id"]),
    ("name", lambda d, c: c["name"]),
    ("status", lambda d, c: c["status"]),
    ("topology", lambda d, c: c["topology"]),
    ("feeds_board", lambda d, c: c["feeds"]),
    ("device", lambda d, c: c["device"]["label"]),
    ("device_kind", lambda d, c: c["device"]["kind"]),
    ("curve", lambda d, c: c["device"]["curve"]),
    ("breaking_ka", lambda d, c: c["device"]["breaking_ka"]),
    ("rcd_ma", lambda d, c: c["rcd_ma"]),
    ("cable_kind", lambda d, c: c["cable"]["kind"]),
    ("csa_mm2", lambda d, c: c["cable"]["csa_mm2"]),
    ("cpc_mm2", lambda d, c: c["cable"]["cpc_mm2"]),
    ("method", lambda d, c: c["cable"]["method"]),
    ("length_m", lambda d, c: c["cable"]["length_m"]),
    ("ib_a", lambda d, c: c["ib_a"]),
    ("in_a", lambda d, c: c["in_a"]),
    ("iz_a", lambda d, c: c["iz_a"]),
    ("iz_basis", lambda d, c: c["basis"]),
    ("iz_needed_a", lambda d, c: _check(c, "capacity").get("limit")),
    ("vd_pct", lambda d, c: c["vd_pct"]),
    ("vd_limit_pct", lambda d, c: c["vd_limit_pct"]),
    ("zs_ohm", lambda d, c: c["zs_ohm"]),
    ("max_zs_ohm", lambda d, c: c["max_zs_ohm"]),
    ("headroom_kw", lambda d, c: c["headroom_kw"]),
    *[(f"check_{cid.replace('-', '_')}", (lambda cid: lambda d, c: _check(c, cid).get("status"))(cid))
      for cid in registry.circuit_ids()],
    ("open_checks", lambda d, c: "; ".join(k["id"] for k in c["checks"] if k["status"] != "pass" and not unmeasured(k))),
    ("acknowledged", lambda d, c: _acknowledged(d, c["ref"])),
    ("remedy", lambda d, c: (c["remedy"] or {}).get("text")),
    ("file", lambda d, c: c["file"]),
]
HEADER = [name for name, _ in COLUMNS]

INDEX_COLUMNS = ["site", "name", "status", "circuits", "pass", "fail", "warn", "not_assessed", "problems",
                 "unacknowledged", "last_change", "report", "errors"]


FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def _cell(value):
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, str) and value.startswith(FORMULA_START):
        # A name or note a spreadsheet would take for a formula is kept as text.
        return "'" + value
    return value


def _write(header: list[str], rows) -> str:
    buf = io.StringIO(newline="")
    writer = csv.writer(buf, lineterminator="\r\n")
    writer.writerow(header)
    for row in rows:
        writer.writerow([_cell(v) for v in row])
    return buf.getvalue()


def render(doc: dict) -> str:
    return _write(HEADER, ([get(doc, c) for _, get in COLUMNS] for c in doc["circuits"]))


def render_index(index: dict) -> str:
    rows = []
    for s in index["sites"]:
        counts = s.get("circuits") or {}
        rows.append([s["id"], s.get("name"), s.get("status"), counts.get("total"), counts.get("pass"),
                     counts.get("fail"), counts.get("warn"), counts.get("not-assessed"), s.get("problems"),
                     s.get("unacknowledged"), s.get("last_change"), s.get("report"),
                     "; ".join(e["text"] for e in s.get("errors") or [])])
    return _write(INDEX_COLUMNS, rows)
