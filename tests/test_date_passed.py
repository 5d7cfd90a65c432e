"""A deadline overdue only because a day passed: the watcher, on a fake clock, records it once in a
revision of the date's own (no file, by "izwatch (date passed)", never a person), says it (a watch
line, a `watch --json` event, a UI notice), and `history` and the report show it; a restart or a
second watcher records nothing more; the item is done once `done_on` is added."""
from __future__ import annotations

import datetime
import json
import subprocess
import sys
import threading

import jsonschema

from tests.conftest import MINIMAL, ROOT
from tests.watch_helpers import settle
from tracker.commands.common import CommandError, date_lines, plain_name
from tracker.commands.history import render
from tracker.history import History, query
from tracker.history.datepassed import DATE_AUTHOR
from tracker.history.verify import verify
from tracker.inspection import due as dues
from tracker.loading import load_estate
from tracker.watcher import Watcher

REPORT_SCHEMA = json.loads((ROOT / "schema" / "report.schema.json").read_text(encoding="utf-8"))
RENTED = MINIMAL.replace('  name: "Test flat"\n', '  name: "Test flat"\n  tenure: private-rented\n')
# One C2 at an inspection on 2026-03-11; the copy to the tenant was given the next day, so the
# remedial work is the only deadline near.
INSPECTION = """\
inspections:
  - date: 2026-03-11
    by: "A. Tester"
    kind: periodic
    copy_to_tenant_on: 2026-03-12
    observations:
      - {code: C2, text: "Socket faceplate cracked", ref: CU1/1}
"""
# SI 2020/312 reg. 3(4)(a): remedial work "within the period of 28 days beginning with the date of
# the inspection" — 28 days counting 2026-03-11 as the first: the last day is 2026-04-07, and the
# item is overdue from 2026-04-08.
EVE, LAST_DAY, FIRST_LATE = datetime.date(2026, 4, 6), datetime.date(2026, 4, 7), datetime.date(2026, 4, 8)


class Clock:
    def __init__(self, day: datetime.date):
        self.day = day

    def __call__(self) -> datetime.date:
        return self.day


def _watcher(root, clock, db=None) -> tuple[Watcher, History]:
    history = History.open(db or root / ".izwatch" / "history.sqlite")
    w = Watcher(root, history, debounce_s=0.1, today=clock)
    w.start()
    return w, history


def _date_events(history) -> list[tuple]:
    return [(r["source"], r["author"], r["file"], e["ref"], e["transition"])
            for r in query.revisions(history) for e in r["events"] if e["check"] == "deadline"]


def test_overdue_by_the_date_is_recorded_once(site_factory):
    root = site_factory(RENTED + INSPECTION)
    clock = Clock(EVE)                     # the last day is tomorrow
    w, h = _watcher(root, clock)
    try:
        assert w.date_passed() == []       # at start: nothing overdue
        clock.day = LAST_DAY
        assert w.date_passed() == []       # the last day itself is still in time
        clock.day = FIRST_LATE
        passed = w.date_passed()
        assert len(passed) == 1 and len(passed[0].events) == 1
        e = passed[0].events[0]
        assert (e["ref"], e["check"], e["transition"], e["value"]) == ("flat-1/CU1/1", "deadline", "newly-failing", 1.0)
        assert e["due"] == "2026-04-07" and "3(4)(a)" in e["detail"]
        rec = passed[0].recorded
        assert (rec.source, rec.author) == ("date", DATE_AUTHOR)
        assert w.date_passed() == []       # the same day again: nothing
        clock.day = FIRST_LATE + datetime.timedelta(days=1)
        assert w.date_passed() == []       # still overdue, already recorded
        assert _date_events(h) == [("date", DATE_AUTHOR, None, "flat-1/CU1/1", "newly-failing")]
    finally:
        w.stop()
        h.close()
    # a restart on the same history, the same day or later: nothing more
    w, h = _watcher(root, clock)
    try:
        count = h.count()
        assert w.date_passed() == [] and h.count() == count
        assert len(_date_events(h)) == 1
        assert verify(h).ok
    finally:
        w.stop()
        h.close()


def test_done_on_added_puts_the_item_right(site_factory):
    root = site_factory(RENTED + INSPECTION)
    clock = Clock(EVE)
    w, h = _watcher(root, clock)
    try:
        clock.day = FIRST_LATE
        assert len(w.date_passed()) == 1
        done = (RENTED + INSPECTION).replace('ref: CU1/1}\n', 'ref: CU1/1, done_on: 2026-04-08}\n')
        (root / "flat-1" / "site.yaml").write_text(done, encoding="utf-8")
        got = settle(w, until=lambda g: g)
        deadline = [(e["ref"], e["transition"]) for u in got for e in u.outcome.events if e["check"] == "deadline"]
        assert deadline == [("flat-1/CU1/1", "cleared")]
        assert got[-1].recorded.source == "watch"       # the change is the person's, recorded as a save
        site = load_estate(root).sites["flat-1"]
        remedial = [i for i in dues.site_items(site, FIRST_LATE) if i.duty == "remedial"]
        assert [(i.status, i.due) for i in remedial] == [(dues.DONE, LAST_DAY)]
        clock.day = FIRST_LATE + datetime.timedelta(days=3)
        assert w.date_passed() == []       # done: never overdue again
        assert [t for *_, t in _date_events(h)] == ["newly-failing", "cleared"]
    finally:
        w.stop()
        h.close()


def test_two_watchers_on_one_history_record_it_once(site_factory):
    root = site_factory(RENTED + INSPECTION)
    clock = Clock(EVE)
    w1, h1 = _watcher(root, clock)
    w2, h2 = _watcher(root, clock)
    try:
        clock.day = FIRST_LATE
        found: list = []
        threads = [threading.Thread(target=lambda w=w: found.extend(w.date_passed())) for w in (w1, w2)]
        for t in threads:
            t.start()
        for t in threads:
            t.join()
        assert len(found) == 1            # the second, under the write lock, finds it held
        assert len(_date_events(h1)) == 1 and verify(h1).ok
    finally:
        for w, h in ((w1, h1), (w2, h2)):
            w.stop()
            h.close()


def test_a_change_that_makes_it_overdue_is_not_recorded_again_by_the_date(site_factory):
    """An inspection added after its 28 days ran out: the save's revision holds the deadline event;
    the date's check the same day and the next finds it held."""
    root = site_factory(RENTED)
    clock = Clock(FIRST_LATE)
    w, h = _watcher(root, clock)
    try:
        w.date_passed()                  # the first inspection, overdue as found, recorded at the first record
        (root / "flat-1" / "site.yaml").write_text(RENTED + INSPECTION, encoding="utf-8")
        settle(w, until=lambda g: g)
        clock.day = FIRST_LATE + datetime.timedelta(days=1)
        assert w.date_passed() == []
        remedial = [x for x in _date_events(h) if x[3] == "flat-1/CU1/1"]
        assert remedial == [("watch", remedial[0][1], "flat-1/site.yaml", "flat-1/CU1/1", "newly-failing")]
    finally:
        w.stop()
        h.close()


def test_history_and_report_show_the_dates_revision(site_factory, tmp_path):
    root = site_factory(RENTED + INSPECTION)
    clock = Clock(EVE)
    w, h = _watcher(root, clock)
    try:
        clock.day = FIRST_LATE
        passed = w.date_passed()
        text = render(query.revisions(h, ref="flat-1/CU1/1"))
        assert f"date  flat-1: deadlines the date passed (no file changed)  by {DATE_AUTHOR}" in text
        assert "flat-1/CU1/1 deadline newly-failing: overdue since 2026-04-07: remedial work: C2" in text
        # the watch lines: text and JSON
        line = date_lines(passed[0], False)[0]
        assert line.startswith("OVERDUE") and "the last day was 2026-04-07, 1 day ago" in line
        assert "the date passed: 2026-04-08" in line and DATE_AUTHOR in line
        doc = json.loads(date_lines(passed[0], True)[0])
        assert (doc["event"], doc["check"], doc["file"], doc["source"], doc["cause"], doc["on"]) == \
            ("newly-failing", "deadline", None, "date", "date-passed", "2026-04-08")
    finally:
        w.stop()
        h.close()
    out = tmp_path / "r.json"
    assert subprocess.run([sys.executable, "-m", "tracker.cli", "report", str(root), "--site", "flat-1",
                           "--format", "json", "-o", str(out)], capture_output=True).returncode == 0
    report = json.loads(out.read_text())
    jsonschema.Draft202012Validator(REPORT_SCHEMA).validate(report)     # 'date' is a source the schema knows
    dated = [r for r in report["history"]["revisions"] if r["source"] == "date"]
    assert [(r["author"], r["file"], [e["transition"] for e in r["events"]]) for r in dated] == [
        (DATE_AUTHOR, None, ["newly-failing"])]
    html = tmp_path / "r.html"
    assert subprocess.run([sys.executable, "-m", "tracker.cli", "report", str(root), "--site", "flat-1",
                           "--format", "html", "-o", str(html)], capture_output=True).returncode == 0
    page = html.read_text()
    assert "the date passed (no file changed)" in page and "overdue since 2026-04-07" in page


def test_ui_notice_of_the_date():
    from tracker.history.store import Recorded
    from tracker.tracking.datepassed import DatePassed
    from tui.app import news_lines
    from tui.live import News

    e = {"ref": "flat-1/CU1/1", "check": "deadline", "transition": "newly-failing", "value": 1.0, "limit": 0.0,
         "unit": "days", "detail": "overdue since 2026-04-07: remedial work: C2 x (rule)",
         "what": "remedial work: C2 x", "due": "2026-04-07"}
    news = News.of_date(DatePassed("flat-1", FIRST_LATE, (e,), Recorded(9, False, "t", DATE_AUTHOR, "date")))
    bad, good = news_lines([news])
    assert bad == ["▲ overdue: flat-1/CU1/1 remedial work: C2 x — the last day was 2026-04-07 "
                   "(the date passed: 2026-04-08)"] and good == []


def test_no_person_may_take_izwatchs_name():
    try:
        plain_name("--by", DATE_AUTHOR)
    except CommandError as exc:
        assert "izwatch's own" in str(exc)
    else:
        raise AssertionError("izwatch's own name was accepted as a person's")


def test_watch_at_start_records_what_the_date_passed_while_nothing_watched(site_factory):
    """The history last looked on the eve; `izwatch watch` started on a later day (today, past
    2026-04-08) prints the overdue item before its ready line, and a second start prints nothing."""
    root = site_factory(RENTED + INSPECTION)
    w, h = _watcher(root, Clock(EVE))
    w.stop()
    h.close()

    def start_once() -> list[dict]:
        proc = subprocess.Popen([sys.executable, "-m", "tracker.cli", "watch", str(root), "--json"],
                                stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
        lines = []
        try:
            while True:
                line = proc.stdout.readline()
                if not line:
                    break
                doc = json.loads(line)
                lines.append(doc)
                if doc["event"] == "ready":
                    break
        finally:
            proc.terminate()
            proc.communicate(timeout=60)
        return lines

    first = start_once()
    dated = [d for d in first if d.get("cause") == "date-passed"]
    assert [(d["ref"], d["due"], d["author"], d["file"]) for d in dated] == [
        ("flat-1/CU1/1", "2026-04-07", DATE_AUTHOR, None)]
    assert first[-1]["event"] == "ready"
    again = start_once()
    assert [d for d in again if d.get("cause") == "date-passed"] == [] and again[-1]["event"] == "ready"


def test_the_uis_live_loop_announces_the_date(site_factory):
    """The UI's watcher (tui/live.py) on a fake clock: when the date moves past the last day, a
    notice of the date's own, and the snapshot rebuilt."""
    import queue

    from tui.live import Callbacks, LiveEstate

    root = site_factory(RENTED + INSPECTION)
    clock = Clock(EVE)
    news: queue.Queue = queue.Queue()
    snaps: queue.Queue = queue.Queue()
    stop = threading.Event()
    live = LiveEstate(root, root / ".izwatch" / "history.sqlite", debounce_s=0.1, today=clock)
    cb = Callbacks(snapshot=lambda s, why: snaps.put(why), news=lambda n: news.put(n),
                   failed=lambda text: news.put(text))
    thread = threading.Thread(target=live.run, args=(cb, stop.is_set), daemon=True)
    thread.start()
    try:
        assert snaps.get(timeout=60) == "start"
        clock.day = FIRST_LATE
        got = news.get(timeout=60)
        assert [(n.passed_on, [e["ref"] for e in n.events], n.author) for n in got] == [
            ("2026-04-08", ["flat-1/CU1/1"], DATE_AUTHOR)]
        assert snaps.get(timeout=60) == "change"
    finally:
        stop.set()
        thread.join(timeout=30)


def test_a_saves_deadline_events_are_worded_as_deadlines(site_factory):
    """The watch line of a deadline a save makes overdue, or puts right, names the item and its last
    day (SI 2020/312 reg. 3(4)(a): 28 days starting with 2026-03-11 → 2026-04-07), not "days
    against 0"."""
    from tracker.commands.common import event_line
    from tracker.tracking.state import EstateState

    root = site_factory(RENTED)
    state = EstateState(root)
    state.today = lambda: datetime.date(2026, 4, 20)
    state.seed({"flat-1/site.yaml": RENTED.encode()})
    out = state.apply_bytes("flat-1/site.yaml", (RENTED + INSPECTION).encode())
    lines = [event_line(e, out, None, False) for e in out.events if e["check"] == "deadline"]
    assert lines[0].startswith("OVERDUE       flat-1/CU1/1  remedial work: C2 Socket faceplate cracked (CU1/1): "
                               "the last day was 2026-04-07, 13 days ago  (flat-1/site.yaml")
    # the first inspection (SI 2020/312 reg. 1(3)(b): by 1 April 2021) is met by this one
    assert lines[1].startswith("deadline met  flat-1  first inspection and test (none recorded)")


def test_the_dates_revision_on_a_team_history(site_factory, pg_schema):
    """On PostgreSQL (migration 3 replaces the sources' constraint): the date's revision is recorded
    once by two watchers on one server history, and verifies."""
    root = site_factory(RENTED + INSPECTION)
    clock = Clock(EVE)
    w1, h1 = _watcher(root, clock, db=pg_schema)
    w2, h2 = _watcher(root, clock, db=pg_schema)
    try:
        clock.day = FIRST_LATE
        found = w1.date_passed() + w2.date_passed()
        assert [(d.recorded.source, d.recorded.author, [e["ref"] for e in d.events]) for d in found] == [
            ("date", DATE_AUTHOR, ["flat-1/CU1/1"])]
        assert _date_events(h2) == [("date", DATE_AUTHOR, None, "flat-1/CU1/1", "newly-failing")]
        assert verify(h1).ok
    finally:
        for w, h in ((w1, h1), (w2, h2)):
            w.stop()
            h.close()


def test_izwatchs_own_name_is_not_erased(site_factory, capsys):
    """`erase` is for a person's data: the date's author stays, so the trail keeps saying that no
    person made those revisions."""
    from tracker.cli import main

    root = site_factory(RENTED + INSPECTION)
    clock = Clock(EVE)
    w, h = _watcher(root, clock)
    clock.day = FIRST_LATE
    assert len(w.date_passed()) == 1
    w.stop()
    h.close()
    assert main(["erase", str(root), "--person", DATE_AUTHOR]) == 2
    assert "izwatch's own name, not a person's" in capsys.readouterr().err
    h = History.open(root / ".izwatch" / "history.sqlite")
    try:
        assert [r["author"] for r in query.revisions(h) if r["source"] == "date"] == [DATE_AUTHOR]
    finally:
        h.close()
