"""The watcher: saves of every kind noticed, re-checked and recorded; offline changes found at
start; bad saves keep the last good state; the CLI's ready line, events and clean stop."""
from __future__ import annotations

import json
import os
import shutil
import signal
import subprocess
import sys
import time

from tests.conftest import MINIMAL
from tests.watch_helpers import edit, settle, start_watcher
from tracker.history import History
from tracker.history.query import revisions
from tracker.history.verify import verify
from tracker.loading.estate import sha256_hex

SHOWER = "quill-court-2/site.yaml"


def transitions(updates):
    return {(e["ref"], e["check"], e["transition"]) for u in updates for e in u.outcome.events}


def test_first_start_records_every_file(demo_copy):
    w, h, updates = start_watcher(demo_copy)
    try:
        files = sorted(p.relative_to(demo_copy).as_posix() for p in demo_copy.glob("*/*.yaml"))
        assert sorted(u.outcome.file for u in updates) == files
        assert all(u.outcome.first_record and u.recorded.source == "startup" for u in updates)
        assert verify(h).ok
    finally:
        w.stop()
        h.close()


def test_an_edit_in_place_is_noticed(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        edit(demo_copy / SHOWER, "power_kw: 7.5", "power_kw: 8.5")
        got = settle(w, until=lambda g: g)
        assert ("quill-court-2/CU1/3", "capacity", "newly-failing") in transitions(got)
        last = revisions(h)[-1]
        assert last["source"] == "watch" and last["changes"][0]["field"] == "power_kw"
    finally:
        w.stop()
        h.close()


def test_atomic_rename_save(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        path = demo_copy / SHOWER
        tmp = path.with_name(".site.yaml.swp")
        tmp.write_text(path.read_text().replace("power_kw: 7.5", "power_kw: 8.5"))
        os.replace(tmp, path)
        got = settle(w, until=lambda g: g)
        assert [u.outcome.file for u in got] == [SHOWER]
        assert ("quill-court-2/CU1/3", "capacity", "newly-failing") in transitions(got)
    finally:
        w.stop()
        h.close()


def test_burst_of_50_saves_ends_with_the_final_state(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        path = demo_copy / SHOWER
        base = path.read_text()
        t0 = time.monotonic()
        for i in range(50):   # paced at 50 a second (how fast the saves really went is the benchmark's)
            path.write_text(base.replace("power_kw: 7.5", f"power_kw: {7 + i / 100:.2f}"))
            time.sleep(max(0.0, t0 + (i + 1) / 50 - time.monotonic()))
        settle(w, seconds=8)
        final = sha256_hex(path.read_bytes())
        assert h.latest_by_file()[SHOWER][1] == final
        assert w.state.hashes[SHOWER] == final
        assert w.state.site_by_id("quill-court-2").site.circuits[2].loads[0].power_kw == 7.49
        assert verify(h).ok
    finally:
        w.stop()
        h.close()


EXTRA = """\
circuits:
  - id: "9"
    board: CU1
    name: "Garage door opener"
    device: {kind: mcb, curve: B, rating_a: 6, breaking_ka: 6}
    rcd_ma: 30
    cable: {kind: twin-earth-70, csa_mm2: 1.5, length_m: 12, method: C}
    loads: [{id: motor, kind: fixed, power_kw: 0.4}]
"""


def test_delete_and_recreate(demo_copy):
    extra = demo_copy / "orchard-end" / "garage.yaml"
    extra.write_text(EXTRA)
    w, h, _ = start_watcher(demo_copy)
    try:
        extra.unlink()
        got = settle(w, until=lambda g: g)
        assert got[0].outcome.content is None and got[0].outcome.valid
        assert {str(c) for c in got[0].outcome.changes} == {"orchard-end/CU1/9 removed",
                                                             "orchard-end/CU1/9/motor removed"}
        assert "orchard-end/CU1/9" not in w.state.sites["orchard-end"].result.circuits
        extra.write_text(EXTRA)
        got = settle(w, until=lambda g: g)
        assert {str(c) for c in got[0].outcome.changes} == {"orchard-end/CU1/9 added",
                                                             "orchard-end/CU1/9/motor added"}
        assert "orchard-end/CU1/9" in w.state.sites["orchard-end"].result.circuits
    finally:
        w.stop()
        h.close()


def test_deleting_a_file_others_depend_on_is_an_input_error(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        ws = demo_copy / "orchard-end" / "workshop.yaml"
        text = ws.read_text()
        ws.unlink()
        got = settle(w, until=lambda g: g)
        assert got[0].outcome.valid is False and "board 'WS1' is not defined" in got[0].outcome.events[0]["detail"]
        assert "orchard-end/WS1" in w.state.sites["orchard-end"].result.boards   # last good state kept
        ws.write_text(text)
        got = settle(w, until=lambda g: g)
        assert got[0].outcome.valid and got[0].outcome.changes == []
    finally:
        w.stop()
        h.close()


def test_a_new_site_folder_and_a_removed_one(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        new = demo_copy / "flat-9"
        new.mkdir()
        (new / "site.yaml").write_text(MINIMAL)
        got = settle(w, until=lambda g: any(u.outcome.site_id == "flat-9" for u in g))
        assert w.state.site_by_id("flat-9") is not None
        shutil.rmtree(demo_copy / "bracken-cottage")
        got = settle(w, until=lambda g: w.state.site_by_id("bracken-cottage") is None)
        assert w.state.site_by_id("bracken-cottage") is None
        assert any(c.ref == "bracken-cottage/CU1/5" and c.change == "removed" for u in got for c in u.outcome.changes)
        assert verify(h).ok
    finally:
        w.stop()
        h.close()


def test_broken_save_keeps_last_good_state_then_fixed(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        path = demo_copy / SHOWER
        good = path.read_text()
        path.write_text(good.replace("power_kw: 7.5", "power_kw: [7.5"))
        got = settle(w, until=lambda g: g)
        assert got[0].outcome.valid is False
        assert got[0].outcome.events[0]["transition"] == "input-error"
        assert SHOWER in got[0].outcome.events[0]["detail"]
        assert w.state.site_by_id("quill-court-2").site.circuits[2].loads[0].power_kw == 7.5   # last good
        path.write_text(good.replace("power_kw: 7.5", "power_kw: 8.5"))
        got = settle(w, until=lambda g: g)
        assert got[0].outcome.valid
        assert [str(c) for c in got[0].outcome.changes] == ["quill-court-2/CU1/3/shower power_kw 7.5 → 8.5"]
        assert ("quill-court-2/CU1/3", "capacity", "newly-failing") in transitions(got)
    finally:
        w.stop()
        h.close()


def test_offline_change_found_at_start(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    w.stop()
    h.close()
    edit(demo_copy / SHOWER, "power_kw: 7.5", "power_kw: 9.5")
    (demo_copy / "tansy-walk-9a" / "site.yaml").unlink()
    w, h, updates = start_watcher(demo_copy)
    try:
        by_file = {u.outcome.file: u for u in updates}
        assert set(by_file) == {SHOWER, "tansy-walk-9a/site.yaml"}
        u = by_file[SHOWER]
        assert u.recorded.source == "startup" and not u.outcome.first_record
        assert [str(c) for c in u.outcome.changes] == ["quill-court-2/CU1/3/shower power_kw 7.5 → 9.5"]
        assert ("quill-court-2/CU1/3", "capacity", "newly-failing") in transitions(updates)
        assert ("quill-court-2/CU1", "demand", "newly-failing") in transitions(updates)
        assert by_file["tansy-walk-9a/site.yaml"].outcome.content is None
        # and a third start finds nothing to record
        w.stop()
        h.close()
        w, h, updates = start_watcher(demo_copy)
        assert updates == []
    finally:
        w.stop()
        h.close()


def test_cli_watch_ready_events_and_clean_stop(demo_copy):
    proc = subprocess.Popen([sys.executable, "-m", "tracker.cli", "watch", str(demo_copy), "--json"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    try:
        ready = json.loads(proc.stdout.readline())
        assert ready["event"] == "ready" and ready["sites"] == 7 and ready["first_record"] is True
        edit(demo_copy / SHOWER, "power_kw: 7.5", "power_kw: 8.5")
        line = json.loads(proc.stdout.readline())
        assert (line["ref"], line["check"], line["transition"]) == ("quill-court-2/CU1/3", "capacity", "newly-failing")
        assert line["value"] == 35.0 and line["limit"] > 36.9
        proc.send_signal(signal.SIGINT)
        assert proc.wait(timeout=10) == 0
        assert "Traceback" not in proc.stderr.read()
    finally:
        if proc.poll() is None:
            proc.kill()
    assert verify(History.open(demo_copy / ".izwatch" / "history.sqlite")).ok


def test_author_is_the_git_author_for_a_commit_and_the_editor_for_an_uncommitted_edit(demo_copy):
    """Found in review: an edit saved in place (not committed) was credited to whoever last
    committed the file. A change that arrives as a commit (here: a checkout) is credited to the
    commit's author; an uncommitted one to the person editing (git's user.name), marked so."""
    def git(*cmd, who="Alex Marlow"):
        env = {**os.environ, "GIT_AUTHOR_NAME": who, "GIT_AUTHOR_EMAIL": "a@example.invalid",
               "GIT_COMMITTER_NAME": who, "GIT_COMMITTER_EMAIL": "a@example.invalid"}
        subprocess.run(["git", "-C", str(demo_copy), *cmd], check=True, env=env, capture_output=True)

    for cmd in (["init", "-q", "-b", "main"], ["config", "user.name", "Sam Editor"], ["add", "."],
                ["commit", "-qm", "estate"]):
        git(*cmd)
    git("checkout", "-qb", "larger-cooker")
    edit(demo_copy / SHOWER, "power_kw: 6}", "power_kw: 7}")
    git("commit", "-qam", "cooker", who="Jo Commit")
    git("checkout", "-q", "main")
    w, h, updates = start_watcher(demo_copy)
    try:
        assert {u.recorded.author for u in updates} == {"Alex Marlow"}     # as committed
        edit(demo_copy / SHOWER, "power_kw: 7.5", "power_kw: 8.5")
        got = settle(w, until=lambda g: g)
        assert got[0].recorded.author == "Sam Editor (uncommitted)"
        edit(demo_copy / SHOWER, "power_kw: 8.5", "power_kw: 7.5")          # put back as committed
        settle(w, until=lambda g: g)
        git("checkout", "-q", "larger-cooker")                               # arrives as a commit
        got = settle(w, until=lambda g: g)
        assert [u.recorded.author for u in got] == ["Jo Commit"]
    finally:
        w.stop()
        h.close()


def test_worse_when_a_failing_check_moves_further_over(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        edit(demo_copy / "orchard-end" / "site.yaml", "length_m: 58", "length_m: 70")   # the garden lighting
        got = settle(w, until=lambda g: g)
        assert ("orchard-end/CU1/5", "voltage-drop", "worse") in transitions(got)
        edit(demo_copy / "orchard-end" / "site.yaml", "length_m: 70", "length_m: 60")
        got = settle(w, until=lambda g: g)
        assert not any(e["ref"] == "orchard-end/CU1/5" for u in got for e in u.outcome.events)  # better, still failing
    finally:
        w.stop()
        h.close()


def test_reading_every_file_does_not_flood_the_watcher(demo_copy, monkeypatch):
    """Found at 100k circuits: the watcher's own reading of every file once filled the kernel's
    event queue with opens and closes (16,384 at most), and each overflow's rescan read everything
    again. Only events that can mean a change are asked for now: reading makes none at all."""
    import tracker.watcher as watcher_module
    seen = []
    original = watcher_module._Handler.on_any_event
    monkeypatch.setattr(watcher_module._Handler, "on_any_event",
                        lambda self, event: (seen.append(event.event_type), original(self, event)))
    w, h, _ = start_watcher(demo_copy)
    try:
        settle(w, seconds=1.0)
        seen.clear()
        for _ in range(20):
            for p in demo_copy.glob("*/*.yaml"):
                p.read_bytes()
        assert settle(w, seconds=1.5) == []
        assert seen == []                         # no opened / closed_no_write events arrive
        edit(demo_copy / SHOWER, "power_kw: 7.5", "power_kw: 8.5")
        assert settle(w, until=lambda g: g) and seen   # while a save still does
    finally:
        w.stop()
        h.close()


def _two_problems(path):
    """A schema error and a reference that does not resolve, in one save."""
    edit(path, "ze_ohm: 0.28", "ze_ohm: -0.28")
    edit(path, "board: CU1", "board: CU9")


def _check_errors(root):
    proc = subprocess.run([sys.executable, "-m", "tracker.cli", "check", str(root)], capture_output=True,
                          text=True, timeout=120)
    assert proc.returncode == 2
    return proc.stderr.strip().splitlines()


def test_a_bad_save_reports_every_problem_as_check_does(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        _two_problems(demo_copy / SHOWER)
        got = settle(w, until=lambda g: g)
        assert [str(e) for e in got[0].outcome.errors] == _check_errors(demo_copy)
        # the two, and the demo inspection's readings of CU1/1, which now name no circuit of the site
        assert len(got[0].outcome.errors) == 3 and "CU9" in got[0].outcome.events[0]["detail"]
    finally:
        w.stop()
        h.close()


def test_a_bad_file_found_at_start_reports_every_problem_as_check_does(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    w.stop()
    h.close()
    _two_problems(demo_copy / SHOWER)
    w, h, updates = start_watcher(demo_copy)
    try:
        assert [str(e) for e in w.state.errors[SHOWER]] == _check_errors(demo_copy)
        assert [u.outcome.valid for u in updates if u.outcome.file == SHOWER] == [False]
    finally:
        w.stop()
        h.close()


def test_a_bad_file_at_the_first_start_reports_every_problem_as_check_does(demo_copy):
    _two_problems(demo_copy / SHOWER)
    w, h, updates = start_watcher(demo_copy)
    try:
        assert [str(e) for e in w.state.errors[SHOWER]] == _check_errors(demo_copy)
        bad = [u.outcome for u in updates if u.outcome.file == SHOWER]
        assert len(bad) == 1 and not bad[0].valid and "CU9" in bad[0].events[0]["detail"]
    finally:
        w.stop()
        h.close()


def test_history_of_a_site_shows_the_save_that_made_it_load_again(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        path = demo_copy / SHOWER
        good = path.read_text()
        path.write_text(good.replace("power_kw: 7.5", "power_kw: [7.5"))
        settle(w, until=lambda g: g)
        path.write_text(good)                                  # as it last loaded
        got = settle(w, until=lambda g: g)
        rid = got[0].recorded.id
        assert got[0].outcome.valid and got[0].outcome.changes == [] and got[0].outcome.events == []
    finally:
        w.stop()
        h.close()
    h = History.open(demo_copy / ".izwatch" / "history.sqlite")
    assert rid in [r["id"] for r in revisions(h, ref="quill-court-2")]
    assert rid not in [r["id"] for r in revisions(h, ref="orchard-end")]
    h.close()
    proc = subprocess.run([sys.executable, "-m", "tracker.cli", "history", str(demo_copy), "--ref", "quill-court-2"],
                          capture_output=True, text=True, timeout=60)
    block = proc.stdout.split(f"#{rid} ")[1]
    assert "no element changed" in block.splitlines()[1]
    proc = subprocess.run([sys.executable, "-m", "tracker.cli", "history", str(demo_copy), "--ref", "nosuch"],
                          capture_output=True, text=True, timeout=60)
    assert proc.stdout.strip() == "no revisions match"
