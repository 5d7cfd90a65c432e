"""Paths: links out of the estate are not followed, and nothing is written outside the history
folder except by `replace` (the one file it edits)."""
from __future__ import annotations

import os

from tests.conftest import MINIMAL
from tests.reliability.conftest import record
from tests.watch_helpers import settle, start_watcher
from tracker.cli import main
from tracker.loading import load_estate


def tree(root):
    """Every file under root (the history folder left out) with its content and mtime."""
    out = {}
    for dirpath, dirnames, filenames in os.walk(root):
        dirnames[:] = [d for d in dirnames if d != ".izwatch"]
        for name in filenames:
            p = os.path.join(dirpath, name)
            st = os.lstat(p)
            out[os.path.relpath(p, root)] = (st.st_mtime_ns, st.st_size)
    return out


def test_links_out_of_the_estate_are_not_followed(tmp_path):
    outside = tmp_path / "outside"
    (outside / "secret-site").mkdir(parents=True)
    (outside / "secret-site" / "site.yaml").write_text(MINIMAL)
    (outside / "board.yaml").write_text("circuits: []\n")
    estate = tmp_path / "estate"
    (estate / "flat-1").mkdir(parents=True)
    (estate / "flat-1" / "site.yaml").write_text(MINIMAL)
    (estate / "linked-site").symlink_to(outside / "secret-site", target_is_directory=True)
    (estate / "flat-1" / "board.yaml").symlink_to(outside / "board.yaml")
    (estate / "shared").mkdir()
    (estate / "shared" / "garage.yaml").write_text(
        'circuits:\n  - {id: "9", board: CU1, device: {kind: rcbo, curve: B, rating_a: 16, breaking_ka: 6},\n'
        '     rcd_ma: 30, cable: {kind: twin-earth-70, csa_mm2: 2.5, length_m: 8, method: C},\n'
        '     loads: [{id: door, kind: fixed, power_kw: 0.3}]}\n')
    (estate / "flat-1" / "inside.yaml").symlink_to(estate / "shared" / "garage.yaml")   # inside: read
    e = load_estate(estate)
    assert list(e.sites) == ["flat-1"] and len(e.sites["flat-1"].circuits) == 2
    warnings = [str(w) for w in e.warnings]
    assert "linked-site/:1:1: warning: not followed: the link points outside the estate" in warnings
    assert "flat-1/board.yaml:1:1: warning: not followed: the link points outside the estate" in warnings
    w, h, updates = start_watcher(estate)
    try:
        assert {u.outcome.file for u in updates} == {"flat-1/site.yaml", "flat-1/inside.yaml"}
        (outside / "board.yaml").write_text("circuits: [1, 2]\n")
        assert not any(u.outcome.file == "flat-1/board.yaml" for u in settle(w, seconds=2))
    finally:
        w.stop()
        h.close()
    record("links out of the estate followed", 0)


def test_only_the_history_folder_is_written(demo_copy, capsys):
    before = tree(demo_copy)
    assert main(["check", str(demo_copy)]) == 1
    assert main(["check", str(demo_copy), "--json"]) == 1
    assert tree(demo_copy) == before and not (demo_copy / ".izwatch").exists()   # check writes nothing
    w, h, _ = start_watcher(demo_copy)
    w.stop()
    h.close()
    assert main(["history", str(demo_copy)]) == 0
    assert main(["verify", str(demo_copy)]) == 0
    assert main(["ack", str(demo_copy), "tansy-walk-9a/FB1/1", "--by", "T", "--note", "booked"]) == 0
    assert main(["replace", str(demo_copy), "quill-court-2/CU1/3/shower", "--power-kw", "8", "--by", "R",
                 "--dry-run"]) == 0
    assert tree(demo_copy) == before
    assert main(["replace", str(demo_copy), "quill-court-2/CU1/3/shower", "--power-kw", "8", "--by", "R"]) == 0
    after = tree(demo_copy)
    changed = {k for k in set(before) | set(after) if before.get(k) != after.get(k)}
    assert changed == {"quill-court-2/site.yaml"}
    # the history and, beside it, the briefs a watcher's next start may take sites from (README
    # "Starting again quickly")
    assert set(p.name for p in (demo_copy / ".izwatch").iterdir()) <= {"history.sqlite", "history.sqlite-shm",
                                                                       "history.sqlite-wal",
                                                                       "history.sqlite.warm.json"}
