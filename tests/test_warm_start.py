"""A watcher's start on an estate the history already holds: a folder whose files are all as its
brief says (tracker.tracking.warm) is taken from the brief, unread until first needed, and what
it gives is what reading it through gives; anything else is read as before."""
from __future__ import annotations

import datetime
import json
import shutil

from tests.watch_helpers import edit, settle, start_watcher
from tracker.history.query import revisions
from tracker.loading.errors import sort_problems
from tracker.tracking import warm
from tracker.tracking.state import EstateState
from tracker.tracking.transitions import checks_by_ref

SHOWER = "quill-court-2/site.yaml"


def transitions(updates):
    return sorted((e["ref"], e["check"], e["transition"]) for u in updates for e in u.outcome.events)


def first_run(root):
    w, h, _ = start_watcher(root)
    w.stop()
    h.close()


def cold_state(root) -> EstateState:
    st = EstateState(root)
    st.seed({rel: p.read_bytes() for rel, p in st.disk_files().items()})
    return st


def snapshot(state: EstateState) -> dict:
    return {ref: (status, [(c.id, c.status, c.value, c.limit) for c in checks])
            for sr in state.site_results() for ref, (status, checks) in checks_by_ref(sr).items()}


def test_an_unchanged_estate_restarts_from_its_briefs_and_records_nothing(demo_copy):
    first_run(demo_copy)
    assert (demo_copy / ".izwatch" / "history.sqlite.warm.json").is_file()
    w, h, updates = start_watcher(demo_copy)
    try:
        assert updates == []
        assert w.state.sites and all(s.asleep for s in w.state.sites.values())
        cold = cold_state(demo_copy)
        # the counts and warnings the ready line gives are those of every site read through
        assert w.state.counts() == cold.counts()
        assert sort_problems(w.state.warnings()) == sort_problems(cold.warnings())
        assert all(s.asleep for s in w.state.sites.values())    # (counting read nothing)
        # and each site read through gives exactly what a fresh evaluation gives
        assert snapshot(w.state) == snapshot(cold)
        assert not any(s.asleep for s in w.state.sites.values())
    finally:
        w.stop()
        h.close()


def _edit_after_restart(root, warm_record: bool):
    first_run(root)
    if not warm_record:
        (root / ".izwatch" / "history.sqlite.warm.json").unlink()
    w, h, updates = start_watcher(root)
    try:
        assert updates == []
        assert all(s.asleep for s in w.state.sites.values()) == warm_record
        edit(root / SHOWER, "power_kw: 7.5", "power_kw: 8.5")
        got = settle(w, until=lambda g: g)
        assert revisions(h)[-1]["source"] == "watch"
        return (transitions(got), [str(c) for u in got for c in u.outcome.changes],
                [r for u in got for r in u.outcome.results])
    finally:
        w.stop()
        h.close()


def test_an_edit_after_a_restart_from_briefs_is_recorded_as_after_a_full_read(demo_copy, tmp_path):
    other = tmp_path / "other"
    shutil.copytree(demo_copy, other)
    briefed = _edit_after_restart(demo_copy, warm_record=True)
    read = _edit_after_restart(other, warm_record=False)
    assert briefed == read
    assert ("quill-court-2/CU1/3", "capacity", "newly-failing") in briefed[0]
    assert briefed[1] == ["quill-court-2/CU1/3/shower power_kw 7.5 → 8.5"]


def test_an_offline_edit_is_read_and_recorded_and_the_rest_stay_briefs(demo_copy):
    first_run(demo_copy)
    edit(demo_copy / SHOWER, "power_kw: 7.5", "power_kw: 9.5")
    w, h, updates = start_watcher(demo_copy)
    try:
        assert [u.outcome.file for u in updates] == [SHOWER]
        assert updates[0].recorded.source == "startup"
        assert ("quill-court-2/CU1/3", "capacity", "newly-failing") in transitions(updates)
        asleep = {f for f, s in w.state.sites.items() if s.asleep}
        assert "quill-court-2" not in asleep and len(asleep) == len(w.state.sites) - 1
    finally:
        w.stop()
        h.close()
    # the brief written at the stop holds the edited folder as it is now: a third start reads nothing
    w, h, updates = start_watcher(demo_copy)
    try:
        assert updates == [] and all(s.asleep for s in w.state.sites.values())
        assert w.state.counts() == cold_state(demo_copy).counts()
    finally:
        w.stop()
        h.close()


def test_a_site_read_after_its_file_changed_is_read_as_last_checked(demo_copy):
    """The file on disk is no longer the content the brief names: the site is read from the
    history's copy, so the change is then found and recorded like any other."""
    first_run(demo_copy)
    w, h, _ = start_watcher(demo_copy)
    try:
        edit(demo_copy / SHOWER, "power_kw: 7.5", "power_kw: 8.5")
        site = w.state.sites["quill-court-2"].site
        shower = [c for c in site.circuits if c.id == "3"][0]
        assert [ld.power_kw for ld in shower.loads] == [7.5]
        got = settle(w, until=lambda g: g)
        assert ("quill-court-2/CU1/3", "capacity", "newly-failing") in transitions(got)
    finally:
        w.stop()
        h.close()


def test_briefs_written_by_other_rules_are_not_trusted(demo_copy, monkeypatch):
    first_run(demo_copy)
    monkeypatch.setattr(warm, "rules_fingerprint", lambda: "another rule set")
    w, h, updates = start_watcher(demo_copy)
    try:
        assert updates == [] and not any(s.asleep for s in w.state.sites.values())
    finally:
        w.stop()
        h.close()


def test_a_damaged_brief_record_costs_only_the_speed(demo_copy):
    first_run(demo_copy)
    record = demo_copy / ".izwatch" / "history.sqlite.warm.json"
    for damage in (b"{not json", b"[]", json.dumps({"format": warm.FORMAT, "rules": warm.rules_fingerprint(),
                                                     "sites": {"quill-court-2": {"id": 3}}}).encode()):
        record.write_bytes(damage)
        w, h, updates = start_watcher(demo_copy)
        try:
            assert updates == [] and not any(s.asleep for s in w.state.sites.values())
            assert w.state.counts() == cold_state(demo_copy).counts()
        finally:
            w.stop()
            h.close()


def test_a_folder_with_an_input_error_is_never_a_brief(demo_copy):
    first_run(demo_copy)
    (demo_copy / "tansy-walk-9a" / "site.yaml").write_text("site: [unclosed\n", encoding="utf-8")
    w, h, updates = start_watcher(demo_copy)
    try:
        assert [u.outcome.file for u in updates] == ["tansy-walk-9a/site.yaml"]
        assert not updates[0].outcome.valid
        assert "tansy-walk-9a" not in w.state.briefs()
        assert all(s.asleep for f, s in w.state.sites.items() if f != "tansy-walk-9a")
    finally:
        w.stop()
        h.close()


def test_every_site_read_through_at_once_gives_a_fresh_evaluation(demo_copy):
    first_run(demo_copy)
    w, h, _ = start_watcher(demo_copy)
    try:
        w.state.wake_all(jobs=1)
        assert not any(s.asleep for s in w.state.sites.values())
        assert snapshot(w.state) == snapshot(cold_state(demo_copy))
    finally:
        w.stop()
        h.close()


def _items(items):
    return sorted((i.ref, i.what, i.due, i.source, i.duty, i.about, i.done_on, i.status) for i in items)


def test_a_brief_tells_the_deadlines_overdue_on_each_day_as_the_site_read_through_does(demo_copy):
    from tracker.inspection.events import overdue_items
    from tests.test_date_passed import INSPECTION, RENTED
    (demo_copy / "flat-1").mkdir()
    (demo_copy / "flat-1" / "site.yaml").write_text(RENTED + INSPECTION, encoding="utf-8")
    cold = cold_state(demo_copy)
    record = demo_copy / "briefs.json"
    told = 0
    for made in (datetime.date(2025, 6, 1), datetime.date(2026, 3, 12), datetime.date(2026, 4, 7)):
        cold.today = lambda made=made: made
        warm.save(record, cold.briefs())
        briefs = warm.load(record)         # (through the file: what a start reads)
        assert set(briefs) == set(cold.sites)
        for folder, s in cold.sites.items():
            b = briefs[folder]
            for n in range(-3, 2400, 3):
                day = made + datetime.timedelta(days=n)
                got = b.overdue_on(day)
                if got is None:
                    assert day < made or (b.due_until is not None and day >= b.due_until)
                    continue
                told += 1
                assert _items(got) == _items(overdue_items(s.site, day, s.result.notification)), (folder, day)
    assert told > 1000


def test_a_deadline_the_date_passes_is_recorded_without_reading_the_site(site_factory):
    from tests.test_date_passed import EVE, FIRST_LATE, INSPECTION, RENTED, Clock, _date_events, _watcher
    root = site_factory(RENTED + INSPECTION)
    clock = Clock(EVE)
    w, h = _watcher(root, clock)
    w.stop()
    h.close()
    clock.day = FIRST_LATE
    w, h = _watcher(root, clock)
    try:
        assert all(s.asleep for s in w.state.sites.values())
        passed = w.date_passed()
        assert [(e["ref"], e["transition"], e["due"]) for p in passed for e in p.events] == [
            ("flat-1/CU1/1", "newly-failing", "2026-04-07")]   # SI 2020/312 reg. 3(4)(a): 28 days from 2026-03-11
        assert all(s.asleep for s in w.state.sites.values())
        assert _date_events(h)[-1][3:] == ("flat-1/CU1/1", "newly-failing")
    finally:
        w.stop()
        h.close()


def test_a_site_file_is_known_by_its_folder_as_before(tmp_path):
    """The plain-path reading of folder_of gives what the path rules give (common practice of the
    loader: site folders one level down, *.yaml, hidden names and the state folder left out)."""
    st = EstateState(tmp_path, single_site=False)
    cases = {"a/site.yaml": "a", "a/boards.yaml": "a", "a/.hidden.yaml": None, "a/.yaml": None,
             ".izwatch/x.yaml": None, ".a/site.yaml": None, "site.yaml": None, "a/b/site.yaml": None,
             "a/site.yml": None, "a/site.yaml.bak": None, "a//site.yaml": "a", "./a/site.yaml": "a",
             "a/../site.yaml": None}
    assert {rel: st.folder_of(rel) for rel in cases} == cases
    one = EstateState(tmp_path, single_site=True)
    assert [one.folder_of(r) for r in ("site.yaml", "b.yaml", "a/site.yaml", ".x.yaml")] == ["", "", None, None]
