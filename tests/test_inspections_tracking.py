"""An added inspection is recorded like any other change: its elements in the history, events for
measured checks that newly fail, and deadline events for what the change makes overdue."""
from __future__ import annotations

import datetime

from tests.conftest import MINIMAL
from tracker.inspection.events import CHECK, deadline_events
from tracker.loading import load_estate
from tracker.tracking.state import EstateState

RENTED = MINIMAL.replace('  name: "Test flat"\n', '  name: "Test flat"\n  tenure: private-rented\n')
INSPECTION = """\
inspections:
  - date: 2026-03-11
    by: "A. Tester"
    kind: periodic
    copy_to_tenant_on: 2026-03-12
    results: [{ref: CU1/1, ir_mohm: 0.4, ir_test_v: 500}]
    observations:
      - {code: C2, text: "Socket faceplate cracked", ref: CU1/1}
"""


def _state(root, today):
    state = EstateState(root)
    state.today = lambda: today
    files = {p.relative_to(root).as_posix(): p.read_bytes() for p in root.glob("*/*.yaml")}
    state.seed(files)
    return state


def test_an_added_inspection_records_its_elements_and_events(site_factory):
    root = site_factory(RENTED)
    state = _state(root, datetime.date(2026, 4, 20))
    out = state.apply_bytes("flat-1/site.yaml", (RENTED + INSPECTION).encode())
    assert {str(c) for c in out.changes} >= {"flat-1/inspection:2026-03-11 added",
                                              "flat-1/inspection:2026-03-11/CU1/1 added",
                                              "flat-1/inspection:2026-03-11/observation:1 added"}
    seen = {(e["ref"], e["check"], e["transition"]) for e in out.events}
    # Table 64: 0.4 MΩ < 1.0 MΩ at 500 V — a reading that newly fails
    assert ("flat-1/CU1/1", "insulation-resistance", "newly-failing") in seen
    # SI 2020/312 reg. 3(4)(a): the C2's 28 days starting with 2026-03-11 ran out on 2026-04-07
    deadline = [e for e in out.events if e["check"] == CHECK]
    assert [(e["ref"], e["transition"], e["value"], e["unit"]) for e in deadline] == [
        ("flat-1/CU1/1", "newly-failing", 13.0, "days"),
        # and the first inspection, overdue since 1 April 2021 (reg. 1(3)(b)), is no longer
        ("flat-1", "cleared", 1845.0, "days")]
    assert "2026-04-07" in deadline[0]["detail"] and "3(4)(a)" in deadline[0]["detail"]


def test_completing_the_work_clears_the_deadline(site_factory):
    root = site_factory(RENTED + INSPECTION)
    state = _state(root, datetime.date(2026, 4, 20))
    done = (RENTED + INSPECTION).replace('ref: CU1/1}\n', 'ref: CU1/1, done_on: 2026-04-15}\n')
    out = state.apply_bytes("flat-1/site.yaml", done.encode())
    deadline = [(e["transition"], e["ref"]) for e in out.events if e["check"] == CHECK]
    assert deadline == [("cleared", "flat-1/CU1/1")]


def test_nothing_overdue_before_the_last_day(site_factory):
    site = load_estate(site_factory(RENTED + INSPECTION)).sites["flat-1"]
    assert deadline_events(None, site, datetime.date(2026, 4, 7)) == []     # the last day itself
    assert len(deadline_events(None, site, datetime.date(2026, 4, 8))) == 1


def test_a_watcher_records_the_added_inspection(site_factory):
    from tests.watch_helpers import settle, start_watcher
    from tracker.history import query
    from tracker.history.verify import verify

    root = site_factory(RENTED)
    w, h, _ = start_watcher(root)
    try:
        (root / "flat-1" / "site.yaml").write_text(RENTED + INSPECTION, encoding="utf-8")
        got = settle(w, until=lambda g: g)
        assert got
        last = query.revisions(h)[-1]
        assert any(c["ref"] == "flat-1/inspection:2026-03-11" for c in last["changes"])
        assert ("flat-1/CU1/1", "insulation-resistance", "newly-failing") in {
            (e["ref"], e["check"], e["transition"]) for e in last["events"]}
        assert verify(h).ok
    finally:
        w.stop()
        h.close()
