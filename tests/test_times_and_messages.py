"""What a user reads: a line when a file loads again, a YAML mistake at its own line, times in
local time with their offset (the history keeps UTC)."""
from __future__ import annotations

import json
import time

import pytest

from tests.watch_helpers import settle, start_watcher
from tracker.cli import main
from tracker.commands.watch import emit_updates
from tracker.output.times import local_stamp

SITE = "quill-court-2/site.yaml"


def test_watch_says_when_a_file_loads_again(demo_copy, capsys):
    """Found in review: a file fixed after an input error printed nothing, whether or not a check
    changed, so the user could not tell the fix had been taken."""
    path = demo_copy / SITE
    good = path.read_text()
    w, h, _ = start_watcher(demo_copy)
    try:
        path.write_text(good.replace("csa_mm2: 6,", "csa_mm2: 7,", 1))
        got = settle(w, until=lambda g: g)
        assert not got[0].outcome.valid
        path.write_text(good)                               # back as it was: no check changes
        got = settle(w, until=lambda g: g)
        assert got[0].outcome.valid and got[0].outcome.loads_again and not got[0].outcome.events
        capsys.readouterr()
        emit_updates(got, as_json=False)
        line = capsys.readouterr().out.strip()
        assert line.startswith(f"LOADS AGAIN  {SITE}  (input error cleared")
        emit_updates(got, as_json=True)
        doc = json.loads(capsys.readouterr().out)
        assert doc["event"] == "loads-again" and doc["file"] == SITE and doc["revision"] == got[0].recorded.id
    finally:
        w.stop()
        h.close()


@pytest.mark.parametrize("mistake, line, col, words", [
    # a key without its colon: libyaml notices it on the next line
    (('    board: CU1\n    name: "Shower, bathroom"', '    board CU1\n    name: "Shower, bathroom"'),
     "board CU1", 5, "a key without ':' after it"),
    # a flow mapping not closed: noticed at the next line
    (("rating_a: 40, breaking_ka: 6}", "rating_a: 40, breaking_ka: 6"), "rating_a: 40, breaking_ka: 6", 13,
     "a '{' that is not closed"),
])
def test_a_yaml_mistake_is_reported_at_its_own_line(demo_copy, capsys, mistake, line, col, words):
    path = demo_copy / SITE
    text = path.read_text()
    assert text.count(mistake[0]) == 1
    text = text.replace(mistake[0], mistake[1])
    path.write_text(text)
    wanted = next(i for i, s in enumerate(text.splitlines(), 1) if line in s)
    assert main(["check", str(demo_copy)]) == 2
    err = [e for e in capsys.readouterr().err.splitlines() if e.startswith(SITE)]
    assert err[0].startswith(f"{SITE}:{wanted}:{col}:") and "YAML: " in err[0] and words in err[0], err


def test_a_quote_left_open_is_reported_where_it_opens():
    from tracker.loading.yamlread import parse
    _, errors = parse('site:\n  name: "Flat 1\nsupply:\n  system: TT\n', "f.yaml")
    assert str(errors[0]).startswith("f.yaml:2:9: YAML: a quoted text whose closing quote is missing")


@pytest.fixture
def zone(monkeypatch):
    """A local zone 5 h 30 min ahead of UTC (a POSIX TZ string: no zone database needed)."""
    monkeypatch.setenv("TZ", "XST-05:30")
    time.tzset()
    yield
    monkeypatch.setenv("TZ", "UTC")
    time.tzset()


def test_times_are_local_with_their_offset(zone):
    # 23:45 UTC on 2 December is 05:15 on 3 December at +05:30 (arithmetic)
    assert local_stamp("2026-12-02T23:45:10.123Z") == "2026-12-03 05:15 +05:30"
    assert local_stamp("2026-12-02T23:45:10.123Z", seconds=True) == "2026-12-03 05:15:10 +05:30"
    assert local_stamp(None) == "—"


def test_history_shows_local_time_and_keeps_utc_in_json(demo_copy, capsys, zone, monkeypatch):
    monkeypatch.setattr("tracker.history.store.now_iso", lambda: "2026-12-02T23:45:10.123Z")
    assert main(["ack", str(demo_copy), "orchard-end/CU1/5", "--by", "T", "--note", "booked"]) == 0
    capsys.readouterr()
    assert main(["history", str(demo_copy), "--ref", "orchard-end/CU1/5"]) == 0
    out = capsys.readouterr().out
    assert "2026-12-03 05:15:10 +05:30" in out and "23:45" not in out
    assert main(["history", str(demo_copy), "--json", "--ref", "orchard-end/CU1/5"]) == 0
    assert json.loads(capsys.readouterr().out)[-1]["at"] == "2026-12-02T23:45:10.123Z"
