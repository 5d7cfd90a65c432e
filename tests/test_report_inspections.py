"""The report's section 7: inspections, measurements beside the calculated figures, observations
with their deadlines, and the statement that the report is no certificate."""
from __future__ import annotations

import datetime
import json

import jsonschema

from tests.conftest import DEMO, ROOT
from tests.report_helpers import Page, run
from tracker.loading import load_estate
from tracker.report import gather
from tracker.report.inspections import STATEMENT

SCHEMA = json.loads((ROOT / "schema" / "report.schema.json").read_text(encoding="utf-8"))
ON = datetime.datetime(2026, 12, 3, 9, 0, tzinfo=datetime.timezone.utc)


def _doc(site_id: str, tmp_path) -> dict:
    estate = load_estate(DEMO)
    site = estate.sites[site_id]
    return gather.build(site, {f: None for f in site.files}, tmp_path / "none.sqlite", now=ON)


def test_measurements_beside_the_calculated_figures(tmp_path):
    doc = _doc("quill-court-2", tmp_path)
    jsonschema.Draft202012Validator(SCHEMA).validate(doc)
    sec = doc["inspections"]
    assert sec["statement"] == STATEMENT and sec["tenure"] == "private-rented"
    (rec,) = sec["records"]
    assert (rec["date"], rec["by"], rec["outcome"]) == ("2026-03-11", "Ruth Ashdown-Pike", "satisfactory")
    shower = next(m for m in rec["measurements"] if m["ref"] == "quill-court-2/CU1/3")
    # demo: 14 m of 6/2.5 mm² at 20 °C: (3.08 + 7.41) mΩ/m × 14 m = 0.147 Ω (IEC 60228)
    assert shower["r1_r2_ohm"] == 0.15 and shower["r1_r2_expected_ohm"] == 0.147
    # the fault-loop check's Zs at 70 °C: Ze 0.28 + 0.147 × 1.2 = 0.456 Ω (BS 7671 411.4.4, common ×1.2)
    assert shower["zs_ohm"] == 0.43 and shower["zs_calculated_ohm"] == 0.456
    assert {c["id"]: c["status"] for c in shower["checks"]} == {
        "measured-zs": "pass", "insulation-resistance": "pass", "rcd-operation": "pass", "continuity": "pass"}


def test_observations_with_their_deadlines(tmp_path):
    rec = _doc("quill-court-2", tmp_path)["inspections"]["records"][0]
    c2, c3 = rec["observations"]
    # SI 2020/312 reg. 3(4)(a): 28 days starting with 2026-03-11 → 2026-04-07; done 2026-03-24
    assert (c2["code"], c2["due"], c2["status"], c2["open"]) == ("C2", "2026-04-07", "done", False)
    assert (c3["code"], c3["due"], c3["status"], c3["open"]) == ("C3", None, None, True)


def test_an_overdue_site_and_a_failing_reading(tmp_path):
    tansy = _doc("tansy-walk-9a", tmp_path)["inspections"]
    overdue = [d for d in tansy["deadlines"] if d["status"] == "overdue"]
    assert [d["due"] for d in overdue] == ["2024-01-18"]            # the inspector's three years
    larkspur = _doc("larkspur-yard-4", tmp_path)["inspections"]
    assert [(s["ref"], s["check"], s["code"]) for s in larkspur["suggestions"]] == [
        ("larkspur-yard-4/DB1/3", "measured-zs", "C2")]
    assert larkspur["records"][0]["outcome"] == "unsatisfactory"    # an open C2


def test_html_section_says_it_is_no_certificate(demo_copy, capsys, tmp_path):
    out = tmp_path / "r.html"
    code, _, err = run(capsys, "report", demo_copy, "--site", "quill-court-2", "-o", out)
    assert code == 0, err
    html = out.read_text(encoding="utf-8")
    Page(html)   # well formed
    assert 'id="inspections"' in html and "7. Inspections, measurements and deadlines" in html
    assert "Not a certificate." in html and "not an electrical installation certificate" in html
    assert "model 0.456 Ω" in html          # the shower's calculated Zs beside its reading


def test_csv_open_checks_leave_out_what_was_not_measured(capsys):
    code, out, _ = run(capsys, "report", DEMO, "--site", "larkspur-yard-4", "--format", "csv", "-o", "-")
    rows = {r.split(",")[1]: r for r in out.splitlines()[1:]}
    assert "measured-zs" in rows["larkspur-yard-4/DB1/3"]                 # its reading fails
    assert "insulation-resistance" not in rows["larkspur-yard-4/DB1/1"]   # nothing measured there
