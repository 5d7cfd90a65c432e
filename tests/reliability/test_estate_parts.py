"""No part of an estate vanishes silently: a site folder nested too deep, a site file's name that
holds a FIFO, a folder or a dangling link, a site folder or file that cannot be read. Each is an
input error naming the path — `check` and `report` exit 2, the watcher records it once and shows
it, the UI lists it — and a FIFO is never opened (it would block the reader for good)."""
from __future__ import annotations

import json
import os
import shutil
import threading
from contextlib import contextmanager
from pathlib import Path

import pytest

from tests.conftest import DEMO, MINIMAL
from tests.reliability.conftest import FIGURES, record
from tests.watch_helpers import settle, start_watcher
from tracker.cli import main
from tracker.loading import load_estate

BOARD = ('circuits:\n  - {id: "9", board: CU1, device: {kind: rcbo, curve: B, rating_a: 16, breaking_ka: 6},\n'
         '     rcd_ma: 30, cable: {kind: twin-earth-70, csa_mm2: 2.5, length_m: 8, method: C},\n'
         '     loads: [{id: door, kind: fixed, power_kw: 0.3}]}\n')
WHAT = {"fifo": "is a FIFO (named pipe), not a site file", "folder": "is a folder, not a site file",
        "dangling": "is a link to nothing (its target is missing), not a site file"}


@contextmanager
def never_hangs(*fifos: Path):
    """Should anything open a FIFO for reading, open its other end after a while so the reader
    gets an empty file (and the test fails on what it reads) instead of waiting for ever."""
    done = threading.Event()

    def release():
        if done.wait(30):
            return
        for f in fifos:
            try:
                os.close(os.open(f, os.O_WRONLY | os.O_NONBLOCK))
            except OSError:
                pass
    t = threading.Thread(target=release, daemon=True)
    t.start()
    try:
        yield
    finally:
        done.set()
        t.join()


def _estate(tmp_path: Path) -> Path:
    root = tmp_path / "estate"
    for flat in ("flat-1", "flat-2"):
        (root / flat).mkdir(parents=True)
        (root / flat / "site.yaml").write_text(MINIMAL)
    return root


def _put(path: Path, kind: str) -> None:
    """Put a FIFO, a folder or a dangling link under `path`'s name."""
    if path.exists() or path.is_symlink():
        path.unlink()
    if kind == "fifo":
        os.mkfifo(path)
    elif kind == "folder":
        path.mkdir()
    else:
        path.symlink_to(path.with_name("gone.yaml"))


def _count(ok: bool) -> None:
    key = "parts of an estate left unread (nested site folder; board file or site.yaml a FIFO, folder or dangling link)"
    FIGURES[key] = FIGURES.get(key, 0) + 1
    FIGURES[key + ": an error naming the path"] = FIGURES.get(key + ": an error naming the path", 0) + bool(ok)


def test_a_site_folder_nested_too_deep_is_an_error(tmp_path, capsys):
    """Found in review: block-b/flat-9/site.yaml was not read, and check exited 0."""
    root = _estate(tmp_path)
    (root / "block-b" / "flat-9").mkdir(parents=True)
    (root / "block-b" / "flat-9" / "site.yaml").write_text(MINIMAL)
    assert main(["check", str(root)]) == 2
    out, err = capsys.readouterr()
    ok = "block-b/flat-9/site.yaml:1:1: not read: block-b/flat-9/ is a site folder 2 levels below" in err
    assert ok, err
    assert "in 2 sites" in out                     # the others are still checked
    assert main(["check", str(root), "--json"]) == 2
    doc = json.loads(capsys.readouterr().out)
    assert [e["file"] for e in doc["errors"]] == ["block-b/flat-9/site.yaml"]
    assert [e.file for e in load_estate(root).errors] == ["block-b/flat-9/site.yaml"]
    assert main(["report", str(root), "--all-sites", "--format", "json", "-o", str(tmp_path / "out")]) == 2
    assert "block-b/flat-9/site.yaml" in capsys.readouterr().err
    w, h, _ = start_watcher(root)
    try:
        assert "block-b/flat-9/site.yaml" in w.state.errors
        from tui.snapshot import build
        assert any(e.file == "block-b/flat-9/site.yaml" for e in build(w.state, h).errors)
    finally:
        w.stop()
        h.close()
    (root / "block-b" / "flat-9").rename(root / "block-b" / ".flat-9")    # hidden: left out on purpose
    assert main(["check", str(root)]) == 0
    _count(ok)


@pytest.mark.parametrize("kind", ["fifo", "folder", "dangling"])
@pytest.mark.parametrize("name", ["board.yaml", "site.yaml"])
def test_a_site_file_name_that_holds_no_file_is_an_error(tmp_path, capsys, kind, name):
    """Found in review: a board file that was a FIFO, a folder or a dangling link was left out
    (exit 0); a site.yaml that was one left its whole site out with only a warning."""
    root = _estate(tmp_path)
    (root / "flat-2" / "board.yaml").write_text(BOARD)
    target = root / "flat-2" / name
    _put(target, kind)
    with never_hangs(target):
        code = main(["check", str(root)])
        err = capsys.readouterr().err
        ok = code == 2 and f"flat-2/{name}:1:1: {WHAT[kind]}" in err
        assert ok, err
        assert main(["report", str(root), "--all-sites", "--format", "json", "-o", str(tmp_path / "out")]) == 2
        assert f"flat-2/{name}:1:1: {WHAT[kind]}" in capsys.readouterr().err
        w, h, _ = start_watcher(root)
        try:
            assert [str(e) for e in w.state.errors[f"flat-2/{name}"]] == [f"flat-2/{name}:1:1: {WHAT[kind]}"]
        finally:
            w.stop()
            h.close()
    _count(ok)


@pytest.mark.parametrize("kind", ["fifo", "folder", "dangling"])
def test_a_single_site_whose_site_yaml_holds_no_file(tmp_path, capsys, kind):
    site = tmp_path / "flat-1"
    site.mkdir()
    _put(site / "site.yaml", kind)
    with never_hangs(site / "site.yaml"):
        assert main(["check", str(site)]) == 2
    err = capsys.readouterr().err
    assert f"site.yaml:1:1: {WHAT[kind]}" in err and "no site.yaml here" not in err


def test_the_watcher_records_a_board_file_turned_fifo_once_and_keeps_its_last_good_state(tmp_path):
    """Found in review: at a restart a board file that had become a FIFO counted as deleted (its
    circuits recorded as removed, or the site's errors recorded instead of what was wrong)."""
    root = tmp_path / "estate"
    shutil.copytree(DEMO, root, ignore=shutil.ignore_patterns(".izwatch"))
    board = root / "orchard-end" / "workshop.yaml"
    good = board.read_bytes()
    w, h, _ = start_watcher(root)
    n_circuits = len(w.state.site_by_id("orchard-end").site.circuits)
    w.stop()
    h.close()
    _put(board, "fifo")
    with never_hangs(board):
        w, h, updates = start_watcher(root)
        try:
            [u] = updates
            assert u.outcome.file == "orchard-end/workshop.yaml" and not u.outcome.valid
            assert [str(e) for e in u.outcome.errors] == ["orchard-end/workshop.yaml:1:1: " + WHAT["fifo"]]
            assert not u.outcome.changes                           # nothing recorded as removed
            assert len(w.state.site_by_id("orchard-end").site.circuits) == n_circuits   # last good in force
            revisions = h.count()
        finally:
            w.stop()
            h.close()
        w, h, updates = start_watcher(root)                       # said once, not at every start
        try:
            assert updates == [] and h.count() == revisions
            assert "orchard-end/workshop.yaml" in w.state.errors
            board.unlink()
            board.write_bytes(good)                                # the file comes back as it was
            got = settle(w, until=lambda g: g)
            assert got[0].outcome.valid and got[0].outcome.loads_again
            assert "orchard-end/workshop.yaml" not in w.state.errors
            _put(board, "fifo")                                    # and goes again, live
            got = settle(w, until=lambda g: g)
            assert not got[0].outcome.valid and WHAT["fifo"] in str(got[0].outcome.errors)
        finally:
            w.stop()
            h.close()
    assert main(["verify", str(root)]) == 0
    record("a board file turned FIFO while nothing watched", "an input error recorded once at the next start, "
                                                             "its last good state in force; never opened")


@pytest.mark.skipif(os.geteuid() == 0, reason="root reads a folder of mode 000 all the same")
def test_a_site_folder_or_estate_of_mode_000(tmp_path, capsys):
    root = _estate(tmp_path)
    os.chmod(root / "flat-2", 0)
    try:
        assert main(["check", str(root)]) == 2
        assert "flat-2/site.yaml:1:1: cannot be read (Permission denied)" in capsys.readouterr().err
    finally:
        os.chmod(root / "flat-2", 0o755)
    os.chmod(root, 0)
    try:
        assert main(["check", str(root)]) == 2
        assert "cannot be read (Permission denied)" in capsys.readouterr().err
    finally:
        os.chmod(root, 0o755)


def _unreadable(monkeypatch, folder: Path) -> None:
    """What mode 000 on `folder` does to anyone but root (simulated, so that it is tested as root
    too): it cannot be listed, and nothing in it can be looked at or opened."""
    real_scandir, real_open, real_stat, real_lstat = os.scandir, os.open, os.stat, os.lstat
    inner = str(folder)

    def guard(real, path, *args, **kwargs):
        p = os.fspath(path)
        p = p.decode() if isinstance(p, bytes) else p
        if p == inner and real is real_scandir or p.startswith(inner + os.sep):
            raise PermissionError(13, "Permission denied", p)
        return real(path, *args, **kwargs)
    monkeypatch.setattr(os, "scandir", lambda path=".", *a, **k: guard(real_scandir, path, *a, **k))
    monkeypatch.setattr(os, "open", lambda path, *a, **k: guard(real_open, path, *a, **k))
    monkeypatch.setattr(os, "stat", lambda path, *a, **k: guard(real_stat, path, *a, **k))
    monkeypatch.setattr(os, "lstat", lambda path, *a, **k: guard(real_lstat, path, *a, **k))


def test_an_unreadable_site_folder_is_an_error_not_a_deletion(tmp_path, capsys, monkeypatch):
    """Found in review: a site folder of mode 000 made `check` and the watcher exit 3; read as
    'no files', it would be recorded as every circuit removed."""
    root = _estate(tmp_path)
    (root / "flat-2" / "board.yaml").write_text(BOARD)
    w, h, _ = start_watcher(root)
    w.stop()
    h.close()
    with monkeypatch.context() as m:
        _unreadable(m, root / "flat-2")
        assert main(["check", str(root)]) == 2
        err = capsys.readouterr().err
        assert "flat-2/site.yaml:1:1: cannot be read (Permission denied)" in err and "internal error" not in err
        w, h, updates = start_watcher(root)
        try:
            assert updates and all(not u.outcome.valid and not u.outcome.changes for u in updates)
            assert {u.outcome.file for u in updates} == {"flat-2/site.yaml", "flat-2/board.yaml"}
            assert "Permission denied" in str(updates[0].outcome.errors)
            assert w.state.site_by_id("flat-2").site is not None        # last good in force
        finally:
            w.stop()
            h.close()
    assert main(["verify", str(root)]) == 0
    record("a site folder that cannot be read (mode 000)", "exit 2 naming it; the watcher records an input error, "
                                                           "not a deletion")


def test_the_watcher_says_what_is_left_out_as_it_happens(tmp_path):
    """A site folder nested too deep and a folder under a site file's name, made while the
    watcher runs: each said at once (the UI lists it) rather than at the next start."""
    root = _estate(tmp_path)
    w, h, _ = start_watcher(root)
    said = []
    w.on_problem = said.append
    try:
        (root / "block-b" / "flat-9").mkdir(parents=True)
        (root / "block-b" / "flat-9" / "site.yaml").write_text(MINIMAL)
        settle(w, seconds=3)
        assert any("block-b/flat-9/site.yaml:1:1: not read: block-b/flat-9/ is a site folder" in s for s in said), said
        assert "block-b/flat-9/site.yaml" in w.state.errors
        (root / "flat-1" / "extra.yaml").mkdir()
        got = settle(w, until=lambda g: g)
        assert got and [str(e) for e in got[0].outcome.errors] == ["flat-1/extra.yaml:1:1: " + WHAT["folder"]]
        (root / "block-b" / "flat-9").rename(root / "block-b" / ".flat-9")     # hidden: left out on purpose
        settle(w, seconds=3)
        assert "block-b/flat-9/site.yaml" not in w.state.errors
    finally:
        w.stop()
        h.close()


def test_an_unreadable_estate_is_said_plainly_by_every_command(tmp_path, capsys, monkeypatch):
    """An estate folder of mode 000 (simulated, as above): every command names it and what is
    wrong (exit 2; `verify` gives no verdict on a chain it did not read), never exit 3."""
    root = _estate(tmp_path)
    w, h, _ = start_watcher(root)
    w.stop()
    h.close()
    with monkeypatch.context() as m:
        _unreadable(m, root)
        for argv in (["check", str(root)], ["watch", str(root)], ["due", str(root)], ["history", str(root)],
                     ["report", str(root), "--all-sites", "--format", "json", "-o", str(tmp_path / "out")],
                     ["ack", str(root), "flat-1/CU1/1", "--by", "T", "--note", "booked"],
                     ["replace", str(root), "flat-1/CU1/1/sockets", "--power-kw", "1", "--by", "T"]):
            code = main(argv)
            err = capsys.readouterr().err
            assert code == 2 and f"{root}: cannot be read (Permission denied)" in err, (argv[0], err)
        assert main(["verify", str(root)]) == 1
        out = capsys.readouterr().out
        assert "not verified" in out and "FAILED" not in out
    record("an estate folder that cannot be read (mode 000)", "8 of 8 commands name it (exit 2; verify: not "
                                                              "verified, exit 1), none exits 3")
