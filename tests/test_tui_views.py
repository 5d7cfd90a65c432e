"""What the terminal UI shows, built without Textual: rows and their states, causes, filters,
the working of a circuit and an element's history — all the engine's and the history's own."""
from __future__ import annotations

from datetime import datetime, timedelta, timezone

import pytest

from tracker.checks.readings import unmeasured
from tracker.checks.site import explain_circuit

from tests.tui_helpers import AUTHOR, settle_file
from tests.watch_helpers import edit
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, WARN
from tracker.history import History, NewRevision
from tracker.history.query import revisions
from tracker.tracking.authors import Authors
from tracker.watcher import Watcher
from tui import snapshot as S
from tui.records import Records, ack_problem
from tui.timeline import timeline
from tui.wording import ACKED, NEW, ago, change_text, field_and_unit, number
from tui.working import utilisation, working_of

SHOWER = "quill-court-2/CU1/3"


@pytest.fixture
def live(demo_copy):
    h = History.open(demo_copy / ".izwatch" / "history.sqlite")
    w = Watcher(demo_copy, h, Authors(demo_copy, by=AUTHOR), debounce_s=0.1)
    first = w.start()
    yield demo_copy, w, h, first
    w.stop()
    h.close()


def test_first_record_lists_every_problem_as_newly_broken(live):
    root, w, h, first = live
    snap = S.build(w.state, h, first_record=True)
    circuits = [r for r in snap.rows if r.kind == S.CIRCUIT]
    engine = [r for sr in w.state.site_results() for r in sr.circuits.values()]
    assert len(circuits) == len(engine) == snap.circuits == 53
    # the demo's check report: 14 fail, 2 warn, 2 not fully assessed, 35 pass
    assert sum(r.status == FAIL for r in circuits) == 14
    assert sum(r.status == WARN for r in circuits) == 2
    assert sum(r.status == NOT_ASSESSED for r in circuits) == 2
    assert sum(r.status == PASS for r in circuits) == 35
    failing = [r for r in snap.rows if r.status == FAIL]
    assert failing and all(r.state == NEW and r.cause.kind == "first-record" for r in failing)
    # boards and origins are rows too: orchard-end's CU1 and WS1 exceed their main switches, and
    # heron-row's line L1 its landlord's board's main switch and the supplier's fuse
    assert {r.ref for r in failing if r.kind != S.CIRCUIT} == {"orchard-end", "orchard-end/CU1", "orchard-end/WS1",
                                                              "heron-row", "heron-row/LB"}
    assert snap.counts[NEW] == len(failing) and snap.counts[ACKED] == 0
    # problems first: the list starts with every failing row
    assert [r.status for r in snap.rows[:len(failing)]] == [FAIL] * len(failing)


def test_a_saved_change_puts_its_circuit_first_with_its_cause(live):
    root, w, h, _ = live
    edit(root / "quill-court-2" / "site.yaml", "power_kw: 7.5", "power_kw: 8.5")
    settle_file(w, root, "quill-court-2/site.yaml")
    snap = S.build(w.state, h)
    top = snap.rows[0]
    assert top.ref == SHOWER and top.state == NEW and top.failing == ("capacity",)
    assert top.cause.kind == "change" and top.cause.author == AUTHOR
    assert top.cause.text == "shower power 7.5 → 8.5 kW"
    assert ("capacity" in top.open_checks) and snap.since[(SHOWER, "capacity")]["revision"] == top.cause.revision


def test_acknowledged_until_it_gets_worse(live):
    root, w, h, _ = live
    site = root / "quill-court-2" / "site.yaml"
    edit(site, "power_kw: 7.5", "power_kw: 8.5")
    settle_file(w, root, "quill-court-2/site.yaml")
    row = S.build(w.state, h).by_ref[SHOWER]
    h.record(NewRevision(source="ack", author="A. Fenwick", site="quill-court-2", note="cable upgrade booked",
                         ack=(SHOWER, list(row.open_checks))))
    snap = S.build(w.state, h)
    acked = snap.by_ref[SHOWER]
    assert acked.state == ACKED and acked.ack.author == "A. Fenwick" and acked.ack.note == "cable upgrade booked"
    assert snap.counts[ACKED] == 1
    assert snap.rows.index(acked) > max(i for i, r in enumerate(snap.rows) if r.state == NEW)
    edit(site, "power_kw: 8.5", "power_kw: 9.5")     # worse than when it was acknowledged
    settle_file(w, root, "quill-court-2/site.yaml")
    again = S.build(w.state, h).by_ref[SHOWER]
    assert again.state == NEW and again.cause.text == "shower power 8.5 → 9.5 kW"


def test_filters_and_search(live):
    _, w, h, _ = live
    snap = S.build(w.state, h)
    every = S.visible(snap.rows, S.SHOW_ALL)
    assert len(every) == len(snap.rows)
    assert S.visible(snap.rows, S.SHOW_NEW) == [r for r in snap.rows if r.state == NEW]
    assert all(r.status == FAIL for r in S.visible(snap.rows, S.SHOW_FAILING))
    assert [r.ref for r in S.visible(snap.rows, S.SHOW_ALL, "SHOWER")] == [SHOWER]     # by name, any case
    assert {r.ref for r in S.visible(snap.rows, S.SHOW_ALL, "orchard-end/ws1")} == {
        "orchard-end/WS1", "orchard-end/WS1/1", "orchard-end/WS1/2", "orchard-end/WS1/3", "orchard-end/WS1/4"}
    assert S.visible(snap.rows, S.SHOW_FAILING, "quill") == []
    assert S.filter_counts(snap) == {S.SHOW_NEW: snap.counts[NEW], S.SHOW_FAILING: snap.counts[NEW],
                                     S.SHOW_ALL: len(snap.rows)}


def test_rows_are_rebuilt_only_where_something_changed(live):
    root, w, h, _ = live
    cache = S.RowCache()
    first = S.build(w.state, h, cache)
    edit(root / "quill-court-2" / "site.yaml", "power_kw: 7.5", "power_kw: 8.5")
    settle_file(w, root, "quill-court-2/site.yaml")
    second = S.build(w.state, h, cache)
    assert second.by_ref["orchard-end/CU1/1"] is first.by_ref["orchard-end/CU1/1"]    # another site
    assert second.by_ref[SHOWER] is not first.by_ref[SHOWER]
    fresh = S.build(w.state, h)                                # the same picture without the cache
    assert [r.ref for r in second.rows] == [r.ref for r in fresh.rows] and second.rows == fresh.rows
    row = second.by_ref["orchard-end/CU1/1"]
    h.record(NewRevision(source="ack", author=AUTHOR, site="orchard-end", note="booked",
                         ack=(row.ref, list(row.open_checks))))
    third = S.build(w.state, h, cache)
    assert third.by_ref[row.ref] is not row and third.by_ref[row.ref].state == ACKED
    assert third.by_ref[SHOWER] is second.by_ref[SHOWER]     # the acknowledgement's site only
    for cached in (second, third):                            # the cache changes nothing seen
        fresh = S.build(w.state, h) if cached is third else fresh
        assert (cached.rows, cached.counts, cached.since, cached.circuits) == (
            fresh.rows, fresh.counts, fresh.since, fresh.circuits)


def test_the_working_is_the_engines_own(live):
    _, w, h, _ = live
    snap = S.build(w.state, h)
    sr = snap.sites["orchard-end"]
    r = explain_circuit(sr.circuits["orchard-end/CU1/1"])   # the engine's working of that circuit
    wk = working_of(snap.by_ref["orchard-end/CU1/1"], snap)
    lines = {(sec.title, ln.label): ln for sec in wk.sections for ln in sec.lines}
    # Iz = It 27 A (2.5 mm² flat twin and cpc, method C: BS 7671 Table 4D5, seen) × Cg 0.70 (three
    # circuits bunched: Table 4C1) = 18.90 A
    assert lines[("Currents", "Iz")].text == number(r.iz_a, "A") == "18.90 A"
    assert lines[("Rating factors", "Cg")].text.startswith(f"{r.working['cg']:.2f}")
    assert lines[("Earth fault loop", "Zs")].text == number(r.working["zs_ohm"], "ohm")
    for g in wk.gauges:
        c = r.check(g.check_id)
        assert g.ratio == utilisation(c) and g.status == c.status
    cap = next(g for g in wk.gauges if g.check_id == "capacity")
    # needed over Iz: the ring's 20 A (433.1.204) over Iz 18.90 A (above)
    assert cap.ratio == pytest.approx(1.0582, abs=0.00005)          # 20 A / 18.9 A
    assert cap.word == "FAIL"
    # every check the engine ran, but a check on readings with nothing measured (said in "As measured")
    assert [c.check_id for c in wk.checks] == [c.id for c in r.checks if not unmeasured(c)]
    assert lines[("As measured", "readings")].text.startswith("none recorded")
    # headroom in two figures: the ring fails its capacity whatever its load; the board's spare
    # demand apart, (100 − 136.6) A × 230 V = −8.4 kW (the engine's demand against the 100 A limits)
    assert wk.wants_remedy and wk.headroom.startswith("circuit fails capacity whatever its load; the board is 8.4 kW over")


def test_missing_figures_say_not_assessed_and_why(live):
    _, w, h, _ = live
    snap = S.build(w.state, h)
    wk = working_of(snap.by_ref["bracken-cottage/CU1/5"], snap)
    cpc = next(ln for sec in wk.sections for ln in sec.lines if sec.title.startswith("Adiabatic") and ln.label == "cpc")
    assert cpc.status == NOT_ASSESSED and cpc.text.startswith("not assessed: ") and "time-current data" in cpc.text
    g = next(g for g in wk.gauges if g.check_id == "cpc-adiabatic")
    assert g.ratio is None and g.word == "not assessed"


def test_board_and_origin_working(live):
    _, w, h, _ = live
    snap = S.build(w.state, h)
    board = working_of(snap.by_ref["orchard-end/CU1"], snap)
    assert board.status == FAIL and board.gauges[0].label == "demand/limit"
    assert board.gauges[0].ratio == pytest.approx(snap.sites["orchard-end"].boards["orchard-end/CU1"].check.value / 100)
    origin = working_of(snap.by_ref["orchard-end"], snap)
    assert origin.kind == S.ORIGIN and origin.checks[0].check_id == "demand"
    # the spare demand in words, the allowances used and the demand remedies, beside the figures
    assert board.headroom.startswith("the board is 8.4 kW over")
    lines = {(sec.title, ln.label): ln.text for sec in board.sections for ln in sec.lines}
    assert "households" in lines[("Maximum demand", "allowances")]
    assert "three-phase supply" in lines[("Remedy", "remedy")]
    workshop = working_of(snap.by_ref["orchard-end/WS1"], snap)
    assert "load management holding EV charge point" in {ln.label: ln.text for sec in workshop.sections
                                                          for ln in sec.lines}["remedy"]
    assert origin.headroom == "the origin is 8.4 kW over"


def test_timeline_of_a_circuit(live):
    root, w, h, _ = live
    edit(root / "quill-court-2" / "site.yaml", "power_kw: 7.5", "power_kw: 8.5")
    settle_file(w, root, "quill-court-2/site.yaml")
    entries = timeline(revisions(h, ref=SHOWER, newest_first=True), SHOWER)
    assert entries[0].headline == "saved" and entries[0].author == AUTHOR
    texts = [i.text for i in entries[0].items]
    assert "shower power 7.5 → 8.5 kW" in texts
    assert any(t.startswith("capacity newly failing: 35.00 A against 36.96 A") for t in texts)
    assert entries[-1].headline == "first record"


def test_records_write_an_acknowledgement_by_the_rules(live, tmp_path):
    root, w, h, _ = live
    snap = S.build(w.state, h)
    row = snap.by_ref["orchard-end/CU1/1"]
    assert ack_problem(row, AUTHOR, " ") == "the note must say what is being done about it"
    assert ack_problem(row, "", "booked") == "say who is acknowledging it"
    assert "nothing to acknowledge" in ack_problem(snap.by_ref["quill-court-2/CU1/1"], AUTHOR, "x")
    records = Records(root / ".izwatch" / "history.sqlite")
    try:
        written = records.acknowledge(row, AUTHOR, "  cable upgrade booked ")
        assert written.checks == ("capacity",) and written.note == "cable upgrade booked"
        last = revisions(h)[-1]
        assert last["source"] == "ack" and last["ack"] == {"ref": row.ref, "checks": ["capacity"]}
        assert records.timeline(row.ref)[0]["id"] == written.revision
    finally:
        records.close()


def test_wording():
    assert field_and_unit("cable.csa_mm2") == ("cable csa", "mm²")
    assert field_and_unit("power_kw") == ("power", "kW")
    assert field_and_unit("topology") == ("topology", "")
    assert change_text({"ref": "s/CU1/3/shower", "change": "modified", "field": "power_kw", "old": 7.5, "new": 8.5},
                       "s/CU1/3") == "shower power 7.5 → 8.5 kW"
    assert change_text({"ref": "s/WS1/4", "change": "added"}, "s/CU1/6") == "WS1/4 added"
    assert change_text({"ref": "s/CU1/3", "change": "modified", "field": "cable.length_m", "old": 15, "new": 20},
                       "s/CU1/3") == "cable length 15 → 20 m"
    now = datetime(2026, 3, 2, 9, 30, tzinfo=timezone.utc)
    at = lambda d: (now - d).isoformat().replace("+00:00", "Z")   # noqa: E731
    assert ago(at(timedelta(seconds=10)), now) == "just now"
    assert ago(at(timedelta(minutes=5)), now) == "5 min ago"
    assert ago(at(timedelta(hours=3)), now) == "3 h ago"
    assert ago(at(timedelta(days=2)), now) == "2 d ago"
    assert ago(at(timedelta(days=90)), now) == "2025-12-02"
    assert ago(None, now) == "—"


def test_the_cause_of_a_board_problem_is_written_from_its_site(live):
    root, w, h, _ = live
    edit(root / "quill-court-2" / "site.yaml", "power_kw: 7.5", "power_kw: 9.5")   # the board's demand too
    settle_file(w, root, "quill-court-2/site.yaml")
    snap = S.build(w.state, h)
    board = snap.by_ref["quill-court-2/CU1"]
    assert board.state == NEW and board.cause.text == "CU1/3/shower power 7.5 → 9.5 kW"
    assert snap.by_ref[SHOWER].cause.text == "shower power 7.5 → 9.5 kW"


def test_a_cached_snapshot_equals_a_fresh_one_over_random_edits_and_acks(live):
    """Edits (loads, lengths) and acknowledgements in a seeded random order: after each, the
    snapshot built from the kept cache is the one built from nothing."""
    import random
    import re
    root, w, h, _ = live
    rng = random.Random(11)
    cache = S.RowCache()
    S.build(w.state, h, cache)
    files = sorted(p for p in root.glob("*/*.yaml"))
    for step in range(12):
        if step % 3 == 2:
            snap = S.build(w.state, h, cache)
            failing = [r for r in snap.rows if r.state == NEW]
            row = rng.choice(failing)
            h.record(NewRevision(source="ack", author=AUTHOR, site=row.site_id, note=f"step {step}",
                                 ack=(row.ref, list(row.open_checks))))
        else:
            path = rng.choice(files)
            text = path.read_text()
            numbers = list(re.finditer(r"(power_kw|length_m): ([0-9.]+)", text))
            m = rng.choice(numbers)
            value = round(float(m.group(2)) * rng.choice((0.5, 1.6, 2.5)), 2)
            path.write_text(text[:m.start(2)] + str(value) + text[m.end(2):])
            settle_file(w, root, path.relative_to(root).as_posix())
        cached, fresh = S.build(w.state, h, cache), S.build(w.state, h)
        assert (cached.rows, cached.counts, cached.since) == (fresh.rows, fresh.counts, fresh.since), step


def test_a_patched_snapshot_is_the_fresh_one_after_every_edit(tmp_path):
    """Sites' rows patched into the merged list, edit after edit (a circuit made to fail and put
    right, on several sites, some acknowledged between), give what a snapshot built from nothing
    gives: the same rows in the same order, counts, lookups and failing-since entries."""
    import random

    from tests.benchmark.generate import generate
    from tracker.tracking.outcome import to_revision
    from tracker.tracking.state import EstateState

    root = tmp_path / "estate"
    generate(root, 8, 12, seed=5)
    st = EstateState(root)
    st.seed({rel: p.read_bytes() for rel, p in st.disk_files().items()})
    h = History.open(None)
    cache = S.RowCache()
    S.build(st, h, cache)
    rng = random.Random(11)
    texts = {rel: (root / rel).read_text() for rel in st.disk_files()}
    site_files = sorted(rel for rel in texts if rel.endswith("/site.yaml"))
    for step in range(14):
        rel = rng.choice(site_files)
        new = texts[rel].replace("kind: lighting, power_kw: ", "kind: lighting, power_kw: 6", 1) \
            if step % 3 != 2 else texts[rel]
        out = st.apply_bytes(rel, new.encode())
        if out is not None:
            h.record(to_revision(out, "watch", AUTHOR))
        cached = S.build(st, h, cache)
        if step % 4 == 3 and cached.counts[NEW]:                    # acknowledge the top row
            top = cached.rows[0]
            h.record(NewRevision(source="ack", author=AUTHOR, site=top.site_id, note="booked",
                                 ack=(top.ref, list(top.open_checks))))
            cached = S.build(st, h, cache)
        fresh = S.build(st, h)
        assert [r.ref for r in cached.rows] == [r.ref for r in fresh.rows]
        assert (cached.rows, cached.counts, cached.circuits) == (fresh.rows, fresh.counts, fresh.circuits)
        assert dict(cached.by_ref) == dict(fresh.by_ref) and dict(cached.since) == dict(fresh.since)
        assert S.visible(cached.rows, S.SHOW_FAILING) == [r for r in fresh.rows if r.status == FAIL]
        assert S.visible(cached.rows, S.SHOW_NEW) == [r for r in fresh.rows if r.state == NEW]
        assert S.visible(cached.rows, S.SHOW_FAILING, counts=cached.counts) == S.visible(fresh.rows, S.SHOW_FAILING)
        assert S.visible(cached.rows, S.SHOW_NEW, counts=cached.counts) == S.visible(fresh.rows, S.SHOW_NEW)
        assert cached.sites == fresh.sites and cached.files_in_force == fresh.files_in_force
    assert fresh.counts[NEW] + fresh.counts[ACKED] > 0          # the edits made something fail
