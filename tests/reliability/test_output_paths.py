"""Hostile output paths for `report -o`: it must never write over a site file (of any site of
the estate, by any name: a hard link, a symbolic link), the history or its companion files, and
never follow a link it finds in the output folder."""
from __future__ import annotations

import os

from tests.reliability.conftest import FIGURES, record
from tests.watch_helpers import start_watcher
from tracker.cli import main
from tracker.history import History
from tracker.history.verify import verify

SITE = "quill-court-2"


def snapshot(root):
    out = {}
    for dirpath, dirs, files in os.walk(root):
        dirs[:] = [d for d in dirs if d != ".izwatch"]     # the history: checked by verify and its count
        for name in files:
            p = os.path.join(dirpath, name)
            if not os.path.islink(p) and not name.endswith(("-shm", "-wal")):
                with open(p, "rb") as fh:
                    out[os.path.relpath(p, root)] = fh.read()
    return out


def refused(capsys, root, *args) -> bool:
    code = main(["report", str(root), *args])
    err = capsys.readouterr().err
    assert "Traceback" not in err and "internal error" not in err
    FIGURES["hostile report outputs tried"] = FIGURES.get("hostile report outputs tried", 0) + 1
    ok = code == 2
    FIGURES["… of them refused (exit 2, nothing written)"] = FIGURES.get("… of them refused (exit 2, nothing written)", 0) + ok
    return ok


def test_report_never_writes_over_a_site_file_or_the_history(demo_copy, tmp_path, capsys):
    w, h, _ = start_watcher(demo_copy)          # a history with its -wal and -shm beside it
    w.stop()
    db = demo_copy / ".izwatch" / "history.sqlite"
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    os.link(demo_copy / SITE / "site.yaml", elsewhere / "hard-link.html")
    (elsewhere / "soft-link.html").symlink_to(demo_copy / "orchard-end" / "workshop.yaml")
    (elsewhere / "wal-link.html").symlink_to(db.with_name("history.sqlite-wal"))
    before, revisions = snapshot(demo_copy), h.count()
    targets = [
        demo_copy / "orchard-end" / "site.yaml",                # another site's site.yaml
        demo_copy / "orchard-end" / "workshop.yaml",            # another site's board file
        demo_copy / SITE / "site.yaml",
        elsewhere / "hard-link.html",                           # the same file by another name
        elsewhere / "soft-link.html",
        elsewhere / "wal-link.html",
        db, db.with_name("history.sqlite-wal"), db.with_name("history.sqlite-shm"),
        db.with_name("history.sqlite-journal"),                 # (not there yet: refused by name)
        demo_copy / SITE / "report.yaml",                       # would be read as a board file
    ]
    for target in targets:
        assert refused(capsys, demo_copy, "--site", SITE, "-o", str(target)), target
    assert db.with_name("history.sqlite-wal").exists()
    h.close()
    assert snapshot(demo_copy) == before
    h = History.open(db)
    assert verify(h).ok and h.count() == revisions
    h.close()
    assert not db.with_name("history.sqlite-journal").exists()


def test_all_sites_does_not_follow_links_in_the_output_folder(demo_copy, tmp_path, capsys):
    out = tmp_path / "reports"
    out.mkdir()
    precious = tmp_path / "precious.txt"
    precious.write_text("keep me\n")
    (out / f"{SITE}.html").symlink_to(precious)
    (out / "index.html").symlink_to(tmp_path / "not-there-yet.txt")      # a dangling link
    assert main(["report", str(demo_copy), "--all-sites", "-o", str(out)]) == 0
    capsys.readouterr()
    assert precious.read_text() == "keep me\n" and not (tmp_path / "not-there-yet.txt").exists()
    assert not (out / f"{SITE}.html").is_symlink() and (out / f"{SITE}.html").read_text().startswith("<!DOCTYPE")
    assert not (out / "index.html").is_symlink()
    # a link in the output folder to a site file: refused before anything is written
    (out / "orchard-end.html").unlink()
    (out / "orchard-end.html").symlink_to(demo_copy / "orchard-end" / "site.yaml")
    before = snapshot(demo_copy)
    assert refused(capsys, demo_copy, "--all-sites", "-o", str(out))
    assert snapshot(demo_copy) == before
    record("links followed in a report's output folder", 0)


def test_a_report_is_written_whole_with_the_usual_permissions(demo_copy, tmp_path, capsys):
    target = tmp_path / "r.html"
    old = os.umask(0o027)
    try:
        assert main(["report", str(demo_copy), "--site", SITE, "-o", str(target)]) == 0
    finally:
        os.umask(old)
    capsys.readouterr()
    assert target.stat().st_mode & 0o777 == 0o640
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]
