"""Events have one definition (tracker.events.Event): every event made, stored and read back has
its keys, so a renamed key fails here instead of showing "—" somewhere."""
from __future__ import annotations

from tests.watch_helpers import settle, start_watcher
from tracker.events import TRANSITIONS, Event
from tracker.history.query import revisions

SHOWER = "quill-court-2/site.yaml"
KEYS = set(Event.__annotations__)


def _well_formed(e: dict) -> None:
    assert Event.__required_keys__ <= set(e) <= KEYS, sorted(e)
    assert e["transition"] in TRANSITIONS


def test_events_made_by_an_edit_a_bad_save_and_read_back_have_the_one_shape(demo_copy):
    w, h, first = start_watcher(demo_copy)
    try:
        path = demo_copy / SHOWER
        good = path.read_text()
        path.write_text(good.replace("power_kw: 7.5", "power_kw: 8.5"))
        made = settle(w, until=lambda g: g)
        path.write_text(good.replace("power_kw: 7.5", "power_kw: [oops"))
        made += settle(w, until=lambda g: g)
        live = [e for u in made for e in u.outcome.events]
        assert {e["transition"] for e in live} >= {"newly-failing", "input-error"}
        stored = [e for rev in revisions(h) for e in rev["events"]]
        assert {e["transition"] for e in stored} >= {"newly-failing", "input-error"}
        for e in live + stored:
            _well_formed(e)
    finally:
        w.stop()
        h.close()
