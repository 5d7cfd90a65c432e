"""Reads that cost what they read: a full `verify` records the head it found intact, a report
recomputes only the revisions after it (and compares that head's hash), and what every open checks
still catches a damaged file without reading every page."""
from __future__ import annotations

import json
import sqlite3

import pytest

from tests.report_helpers import run, shower_swap_and_ack
from tracker.cli import main
from tracker.history import History, HistoryError, NewRevision
from tracker.history import store as store_module
from tracker.history.verify import last_verified_head, record_verified_head, verify, verify_tail
from tracker.loading.estate import sha256_hex

SITE = "quill-court-2"


def _rev(n: int) -> NewRevision:
    body = f"a: {n}\n".encode()
    return NewRevision(source="watch", author="tester", file="flat-1/site.yaml", site="flat-1", content=body,
                       content_hash=sha256_hex(body),
                       changes=[("flat-1/CU1/1/lights", "modified", "power_kw", n, n + 1)],
                       results=[("flat-1/CU1/1", "pass", {"capacity": ["pass", 10.0 + n, 6, "A"]})])


def _unguarded(path):
    """A connection to the file with the append-only triggers dropped, as someone rewriting it would."""
    conn = sqlite3.connect(path)
    for (name,) in conn.execute("SELECT name FROM sqlite_master WHERE type = 'trigger'").fetchall():
        conn.execute(f"DROP TRIGGER {name}")
    return conn


@pytest.fixture
def history(tmp_path):
    path = tmp_path / "h.sqlite"
    h = History.open(path)
    h.record_many(_rev(n) for n in range(1, 31))
    yield h, path
    h.close()


def test_verify_records_its_head_and_the_tail_starts_after_it(history):
    h, _ = history
    assert last_verified_head(h) is None
    whole = verify_tail(h)       # nothing recorded yet: every revision recomputed
    assert whole.ok and whole.revisions == 30 and whole.verified_head is None
    full = verify(h)
    assert full.ok and record_verified_head(h, full)
    record_verified_head(h, full)       # the same head twice: no error, one row
    assert h.db.execute("SELECT count(*) FROM verified_heads").fetchone()[0] == 1
    head = last_verified_head(h)
    assert head["revision"] == 30 and head["hash"] == full.head_hash
    h.record_many(_rev(n) for n in range(31, 36))
    tail = verify_tail(h)
    assert tail.ok and tail.revisions == 35 and tail.verified_head["revision"] == 30
    assert tail.head_hash == h.head()[1]


def test_a_row_rewritten_after_the_head_is_caught(history):
    h, path = history
    record_verified_head(h, verify(h))
    h.record_many(_rev(n) for n in range(31, 36))
    conn = _unguarded(path)
    conn.execute("UPDATE changes SET new = '99' WHERE revision_id = 33")
    conn.commit()
    conn.close()
    report = verify_tail(h)
    assert not report.ok and report.first_bad == 33


def test_a_rewrite_reaching_the_recorded_head_is_caught(history):
    h, path = history
    record_verified_head(h, verify(h))
    conn = _unguarded(path)
    conn.execute("UPDATE revisions SET hash = ? WHERE id = 30", ["f" * 64])   # the chain recomputed up to it
    conn.commit()
    conn.close()
    report = verify_tail(h)
    assert not report.ok and "no longer has the hash" in report.problem


def test_revisions_cut_off_before_the_recorded_head_are_caught(history):
    h, path = history
    record_verified_head(h, verify(h))
    conn = _unguarded(path)
    for table in ("changes", "results"):
        conn.execute(f"DELETE FROM {table} WHERE revision_id >= 28")
    conn.execute("DELETE FROM revisions WHERE id >= 28")
    conn.commit()
    conn.close()
    report = verify_tail(h)
    assert not report.ok and "cut off" in report.problem


def test_a_rewrite_before_the_head_that_leaves_hashes_alone_is_left_to_verify(history):
    """The documented limit (README, "Reliability"): a row before the recorded head edited without
    its hash is not recomputed by a report, only by `verify`; the dropped triggers are seen at once."""
    h, path = history
    record_verified_head(h, verify(h))
    conn = _unguarded(path)
    conn.execute("UPDATE changes SET new = '99' WHERE revision_id = 5")
    conn.commit()
    conn.close()
    tail = verify_tail(h)
    assert not tail.ok and "append-only triggers" in tail.problem and tail.first_bad is None
    full = verify(h)
    assert not full.ok and full.first_bad == 5


def test_verify_command_records_the_head_and_the_report_says_what_it_checked(demo_copy, capsys, tmp_path):
    shower_swap_and_ack(demo_copy, capsys)
    db = demo_copy / ".izwatch" / "history.sqlite"
    assert main(["verify", str(demo_copy)]) == 0
    capsys.readouterr()
    h = History.open(db, create=False)
    head = last_verified_head(h)
    count = h.count()
    h.close()
    assert head is not None and head["revision"] == count
    code, out, err = run(capsys, "report", demo_copy, "--site", SITE, "--format", "json", "-o", "-")
    doc = json.loads(out)
    ver = doc["verification"]
    assert code == 0 and ver["state"] == "intact" and ver["revisions"] == count
    assert ver["verified_in_full"]["revision"] == count and f"#{count}" in ver["scope"]
    code, out, _ = run(capsys, "report", demo_copy, "--site", SITE, "--format", "html", "-o", "-")
    assert f"checked revisions #1 to #{count} in full" in out


def test_verify_of_a_read_only_copy_records_nothing(history, tmp_path):
    h, path = history
    h.close()
    copy = tmp_path / "copy.sqlite"
    copy.write_bytes(path.read_bytes())
    ro = History.open_for_reading(copy)
    report = verify(ro)
    assert report.ok and not record_verified_head(ro, report)
    ro.close()


# -- what every open checks, without reading every page --------------------------------------------

def _damage(path, how) -> bytes:
    data = bytearray(path.read_bytes())
    if how == "truncated":
        data = data[: len(data) // 2]
    elif how == "zeroed first table pages":
        data[4096:4096 * 3] = bytes(4096 * 2)
    elif how == "garbage header":
        data[:100] = b"x" * 100
    path.write_bytes(bytes(data))
    return bytes(data)


@pytest.mark.parametrize("how", ["truncated", "zeroed first table pages", "garbage header"])
def test_open_catches_damage_without_quick_check(tmp_path, monkeypatch, how):
    monkeypatch.setattr(store_module, "QUICK_CHECK_UP_TO_BYTES", 0)   # as for a large history
    path = tmp_path / "h.sqlite"
    h = History.open(path)
    h.record_many(_rev(n) for n in range(1, 200))
    h.db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    h.close()
    damaged = _damage(path, how)
    for opener in (lambda: History.open(path, create=False), lambda: History.open_for_reading(path)):
        with pytest.raises(HistoryError) as caught:
            opener().close()
        assert caught.value.kind == "damaged", str(caught.value)
        assert path.read_bytes() == damaged


def test_a_damaged_page_met_later_is_said_plainly_and_left_alone(tmp_path, monkeypatch, capsys, demo_copy):
    """A page in the middle damaged: not seen on open (no page is read that the open does not
    need), said plainly where a read meets it, never a traceback; `verify` fails on it."""
    monkeypatch.setattr(store_module, "QUICK_CHECK_UP_TO_BYTES", 0)
    db = demo_copy / ".izwatch" / "history.sqlite"
    h = History.open(db)
    h.record_many(_rev(n) for n in range(1, 400))
    h.db.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    h.close()
    data = bytearray(db.read_bytes())
    pages = len(data) // 4096
    data[4096 * (pages // 2): 4096 * (pages * 3 // 4)] = bytes(4096 * (pages * 3 // 4 - pages // 2))
    db.write_bytes(bytes(data))
    code, out, err = run(capsys, "history", demo_copy, "--json")
    assert code == 2 and "damaged" in err and "Traceback" not in err
    assert db.read_bytes() == bytes(data)
    assert main(["verify", str(demo_copy)]) == 1
    assert "FAILED" in capsys.readouterr().out
    assert db.read_bytes() == bytes(data)


def test_one_site_read_by_index_gives_what_the_whole_history_gives(demo_copy, capsys):
    """The report of one site reads its failures, acknowledgements and files by index: the same
    answer as reading every row of the history (the shared reader of --all-sites)."""
    from tracker.loading import load_estate
    from tracker.report import gather
    shower_swap_and_ack(demo_copy, capsys)
    db = demo_copy / ".izwatch" / "history.sqlite"
    estate = load_estate(demo_copy)
    whole = gather.HistoryReader(db)
    try:
        for site in estate.sites.values():
            files = estate.loads[site.folder].files
            one = gather.HistoryReader(db, scoped=True)
            try:
                a, b = one.for_site(site, files, None), whole.for_site(site, files, None)
            finally:
                one.close()
            mine = {k: v for k, v in b["failing"].items() if k[0] == site.id or k[0].startswith(site.id + "/")}
            assert a["failing"] == mine and a["acks"] == b["acks"] and a["files"] == b["files"]
            assert a["revisions"] == b["revisions"] and a["verification"] == b["verification"]
    finally:
        whole.close()


# -- report --all-sites, streamed ------------------------------------------------------------------

def _estate_of(tmp_path, sites: int):
    from tests.benchmark.generate import generate
    root = tmp_path / "estate"
    generate(root, sites, 2, seed=5)
    return root


def _pages(out):
    return {p.name: p.read_text(encoding="utf-8") for p in sorted(out.iterdir())}


def test_all_sites_over_workers_writes_what_one_process_writes(tmp_path, capsys):
    """Pages written by worker processes as they are rendered, renamed into place in order: the
    same pages and index as in one process, nothing staged left behind, the history's folder as
    it was (no -wal/-shm left by a worker's connection)."""
    from tracker.tracking.authors import Authors
    from tracker.tracking.startup import start
    root = _estate_of(tmp_path, 45)       # over parallel.MIN_ITEMS_FOR_WORKERS: workers are used
    db = root / ".izwatch" / "history.sqlite"
    h = History.open(db)
    start(root, h, Authors(root), jobs=1)
    h.close()
    before = sorted(p.name for p in db.parent.iterdir())
    got = {}
    for jobs in ("1", "2"):
        out = tmp_path / f"out-{jobs}"
        code, _, err = run(capsys, "report", root, "--all-sites", "--format", "json", "--jobs", jobs, "-o", out)
        assert code == 0, err
        pages = _pages(out)
        assert not [n for n in pages if n.startswith(".")]
        index = json.loads(pages.pop("index.json"))
        assert len(pages) == 45 and [s["report"] for s in index["sites"]] == sorted(pages)
        assert index["verification"]["state"] == "intact"
        got[jobs] = ({n: {k: v for k, v in json.loads(t).items() if k != "generated_at"} for n, t in pages.items()},
                     [s for s in index["sites"]])
    assert got["1"] == got["2"]
    assert sorted(p.name for p in db.parent.iterdir()) == before


def test_all_sites_keeps_the_first_of_two_sites_with_one_id(tmp_path, capsys):
    root = _estate_of(tmp_path, 3)
    folders = sorted(p for p in root.iterdir() if p.is_dir())
    text = (folders[2] / "site.yaml").read_text()
    first_id = folders[0].name
    (folders[2] / "site.yaml").write_text(text.replace(f"id: {folders[2].name}", f"id: {first_id}", 1))
    out = tmp_path / "out"
    code, _, err = run(capsys, "report", root, "--all-sites", "--format", "json", "-o", out)
    assert code == 2 and f"site id '{first_id}' is already used" in err
    index = json.loads((out / "index.json").read_text())
    assert sorted(p.name for p in out.iterdir()) == sorted([f"{first_id}.json", f"{folders[1].name}.json",
                                                            "index.json"])
    page = json.loads((out / f"{first_id}.json").read_text())
    assert page["site"]["folder"] == folders[0].name          # the first folder's page, not overwritten
    assert any(s["errors"] for s in index["sites"])
