"""A "worse" that is undone no longer stands as the cause of a problem.

Found in review: after an edit made a failing circuit worse and was reverted, the UI kept showing
the undone edit as the cause, and the problem as newly broken although it had been acknowledged
as it stands again. The results each revision records say how badly the check fails; a revision
that brings it back to how it stood before a "worse" unwinds that "worse"."""
from __future__ import annotations

from tests.watch_helpers import settle, start_watcher
from tracker.history.query import failing_since
from tracker.history.store import NewRevision
from tui.snapshot import build
from tui.wording import ACKED, NEW

SITE = "orchard-end/site.yaml"
REF = "orchard-end/CU1/5"          # garden lighting: its voltage drop fails at 58 m (the demo's README)


def edit_length(root, old, new):
    path = root / SITE
    text = path.read_text()
    assert text.count(f"length_m: {old},") == 1
    path.write_text(text.replace(f"length_m: {old},", f"length_m: {new},"))


def transitions(updates):
    return [e["transition"] for u in updates for e in u.outcome.events if e["ref"] == REF]


def test_an_undone_worse_unwinds_the_cause_and_the_acknowledgement_stands(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        first = failing_since(h)[(REF, "voltage-drop")]["revision"]
        ack = h.record(NewRevision(source="ack", author="T", site="orchard-end", note="booked",
                                   ack=(REF, ["voltage-drop"])))
        assert build(w.state, h).by_ref[REF].state == ACKED
        edit_length(demo_copy, 58, 70)                       # longer: a larger drop
        assert transitions(settle(w, until=lambda g: g)) == ["worse"]
        row = build(w.state, h).by_ref[REF]
        assert row.state == NEW and row.cause.revision > ack.id
        edit_length(demo_copy, 70, 58)                       # put back
        assert transitions(settle(w, until=lambda g: g)) == []      # still failing: no event
        entry = failing_since(h)[(REF, "voltage-drop")]
        assert entry["revision"] == first and "worse_revision" not in entry
        row = build(w.state, h).by_ref[REF]
        assert row.state == ACKED and row.cause.revision == first
    finally:
        w.stop()
        h.close()


def test_a_partial_improvement_unwinds_only_what_it_undoes(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        steps = {}
        for old, new in ((58, 70), (70, 80), (80, 75)):
            edit_length(demo_copy, old, new)
            got = settle(w, until=lambda g: g)
            steps[new] = got[0].recorded.id
        # 75 m: better than 80 m, but still worse than before the edit to 80 m, which stands
        assert failing_since(h)[(REF, "voltage-drop")]["worse_revision"] == steps[80]
        edit_length(demo_copy, 75, 60)          # back below 70 m: the edit to 80 m is undone, not the one to 70 m
        settle(w, until=lambda g: g)
        assert failing_since(h)[(REF, "voltage-drop")]["worse_revision"] == steps[70]
        edit_length(demo_copy, 60, 58)          # back where it was: nothing worse stands
        settle(w, until=lambda g: g)
        assert "worse_revision" not in failing_since(h)[(REF, "voltage-drop")]
    finally:
        w.stop()
        h.close()
