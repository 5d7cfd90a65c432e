"""An acknowledgement can be corrected: a later one of the same element supersedes the earlier,
and both stay in the chain — in `history`, the report and the terminal UI."""
from __future__ import annotations

import json

from tracker.cli import main
from tracker.history import History
from tracker.history.query import revisions
from tracker.history.verify import verify

REF = "orchard-end/CU1/5"     # the demo's garden lighting: its voltage drop fails (README walkthrough)


def two_acks(root, capsys):
    assert main(["ack", str(root), REF, "--by", "A. Wrong", "--note", "booked under the wrong job"]) == 0
    assert main(["ack", str(root), REF, "--by", "B. Right", "--note", "job 4410: cable to be upsized"]) == 0
    capsys.readouterr()


def test_a_later_acknowledgement_supersedes_the_earlier_and_both_are_kept(demo_copy, capsys):
    two_acks(demo_copy, capsys)
    assert main(["history", str(demo_copy), "--json", "--ref", REF]) == 0
    acks = [r for r in json.loads(capsys.readouterr().out) if r["source"] == "ack"]
    assert [r["author"] for r in acks] == ["A. Wrong", "B. Right"]
    assert acks[0]["ack"]["superseded_by"] == acks[1]["id"] and "superseded_by" not in acks[1]["ack"]
    assert main(["history", str(demo_copy), "--ref", REF]) == 0
    text = capsys.readouterr().out
    assert f"superseded by #{acks[1]['id']}" in text and text.count("superseded") == 1
    h = History.open(demo_copy / ".izwatch" / "history.sqlite")
    assert verify(h).ok and len(revisions(h, ref=REF)) >= 3
    h.close()


def test_the_report_and_the_ui_take_the_later_acknowledgement(demo_copy, capsys, tmp_path):
    two_acks(demo_copy, capsys)
    out = tmp_path / "r.json"
    assert main(["report", str(demo_copy), "--site", "orchard-end", "--format", "json", "-o", str(out)]) == 0
    doc = json.loads(out.read_text())
    problem = next(p for p in doc["problems"] if p["ref"] == REF)
    assert problem["acknowledgement"]["author"] == "B. Right" and problem["acknowledged"]
    superseded = [r for r in doc["history"]["revisions"] if r["ack"] and r["ack"].get("superseded_by")]
    assert [r["author"] for r in superseded] == ["A. Wrong"]
    import jsonschema
    from tests.conftest import ROOT
    jsonschema.validate(doc, json.loads((ROOT / "schema" / "report.schema.json").read_text()))

    from tracker.tracking.authors import Authors
    from tracker.tracking.startup import start
    from tui.snapshot import build
    from tui.timeline import timeline
    h = History.open(demo_copy / ".izwatch" / "history.sqlite")
    state, _ = start(demo_copy, h, Authors(demo_copy), jobs=1)
    row = build(state, h).by_ref[REF]
    assert row.ack.author == "B. Right" and row.ack.note.startswith("job 4410")
    entries = timeline(revisions(h, ref=REF, newest_first=True), REF)
    assert any("superseded by revision" in i.text for e in entries if e.author == "A. Wrong" for i in e.items)
    h.close()
