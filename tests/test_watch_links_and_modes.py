"""The watcher takes at once an edit that reaches a site file through a link inside the estate
(the kernel reports it under the target's path), and a file whose attributes changed (made
readable again): neither waits for the minute's safety scan."""
from __future__ import annotations

import os

import pytest

from tests.watch_helpers import settle, start_watcher

WORKSHOP = "orchard-end/workshop.yaml"
SHOWER = "quill-court-2/site.yaml"
# the settle interval and the safety scan (60 s) are both far longer than the waits below: an
# update within them can only have come from the event on the target or the attribute change
LONG_SETTLE_S = 60.0


def _until(w, files: set[str], tries: int = 100):
    got = []
    for _ in range(tries):
        got += w.wait_and_process(timeout=0.2)
        if files <= {u.outcome.file for u in got}:
            break
    return got


def _link_board(root):
    """orchard-end's workshop board file becomes a link to boards/workshop.yaml in the site folder."""
    real = root / "orchard-end" / "boards" / "workshop.yaml"
    real.parent.mkdir()
    os.replace(root / WORKSHOP, real)
    os.symlink("boards/workshop.yaml", root / WORKSHOP)
    return real


def _link_site(root):
    """The heron-row site folder becomes a link to a hidden folder of the estate."""
    os.replace(root / "heron-row", root / ".sites-real")
    os.symlink(".sites-real", root / "heron-row")
    return root / ".sites-real" / "flats.yaml"


def _edited(text: str) -> str:
    line = next(x for x in text.splitlines() if "length_m: " in x)
    value = line.split("length_m: ")[1].split(",")[0].split("}")[0]
    return text.replace(line, line.replace(f"length_m: {value}", f"length_m: {float(value) + 7:g}", 1), 1)


@pytest.mark.parametrize("how", ["the target edited", "edited through the link", "a linked site folder"])
def test_an_edit_through_a_link_inside_the_estate_is_taken_at_once(demo_copy, how):
    if how == "a linked site folder":
        target, rel = _link_site(demo_copy), "heron-row/flats.yaml"
    else:
        target, rel = _link_board(demo_copy), WORKSHOP
    w, h, started = start_watcher(demo_copy, debounce_s=LONG_SETTLE_S)
    try:
        assert all(u.outcome.valid for u in started)
        path = target if how == "the target edited" else demo_copy / rel
        path.write_text(_edited(path.read_text(encoding="utf-8")), encoding="utf-8")
        got = _until(w, {rel})
        mine = [u for u in got if u.outcome.file == rel]
        assert mine and mine[0].outcome.valid and any("length_m" in str(c.field) for c in mine[0].outcome.changes), mine[0].outcome.changes
        assert (demo_copy / rel).is_symlink() or (demo_copy / rel).parent.is_symlink()   # (the link stays)
    finally:
        w.stop()
        h.close()


@pytest.mark.parametrize("through_link", [False, True])
def test_a_file_made_in_a_linked_site_folder_is_taken_at_once(demo_copy, through_link):
    target = _link_site(demo_copy).parent
    w, h, _ = start_watcher(demo_copy, debounce_s=LONG_SETTLE_S)
    try:
        folder = demo_copy / "heron-row" if through_link else target
        (folder / "notes.yaml").write_text("x_notes: a board file to come\n", encoding="utf-8")
        got = _until(w, {"heron-row/notes.yaml"})
        assert "heron-row/notes.yaml" in {u.outcome.file for u in got}
    finally:
        w.stop()
        h.close()


def test_a_link_made_while_watching_is_followed_too(demo_copy):
    """(The settle interval is short here, so that the link's creation is looked at; the edit
    after it would otherwise wait for the safety scan all the same.)"""
    w, h, _ = start_watcher(demo_copy, debounce_s=0.1)
    try:
        target = _link_board(demo_copy)          # the file moved away and a link put in its place
        settle(w)                                # (same content: nothing to record)
        target.write_text(_edited(target.read_text(encoding="utf-8")), encoding="utf-8")
        got = _until(w, {WORKSHOP})
        mine = [u for u in got if u.outcome.file == WORKSHOP]
        assert mine and mine[-1].outcome.valid and any("length_m" in str(c.field) for c in mine[-1].outcome.changes), mine[-1].outcome.changes
    finally:
        w.stop()
        h.close()


def test_a_change_of_attributes_makes_the_file_read_again(demo_copy, tmp_path):
    """The new content is written through a hard link outside the estate (no event reaches the
    watcher), then only the file's mode is changed: the attribute change alone brings it in, as
    it does for a file made readable again."""
    w, h, _ = start_watcher(demo_copy, debounce_s=LONG_SETTLE_S)
    try:
        path = demo_copy / SHOWER
        outside = tmp_path / "elsewhere.yaml"
        os.link(path, outside)
        text = path.read_text(encoding="utf-8")
        with open(outside, "r+", encoding="utf-8") as fh:     # in place: the same inode
            fh.write(text.replace("power_kw: 7.5", "power_kw: 9.5", 1))
            fh.truncate()
        assert not w.wait_and_process(timeout=1.0)            # nothing seen yet (no event)
        os.chmod(path, 0o640)
        got = _until(w, {SHOWER})
        mine = [u for u in got if u.outcome.file == SHOWER]
        assert mine and mine[0].outcome.valid and any(c.field == "power_kw" for c in mine[0].outcome.changes)
    finally:
        w.stop()
        h.close()


def test_a_change_of_a_site_folder_s_attributes_reads_its_files_again(demo_copy, tmp_path):
    """As above for a site folder made listable again: its files are looked at after the (short)
    settle interval, not at the minute's scan."""
    w, h, _ = start_watcher(demo_copy, debounce_s=0.1)
    try:
        path = demo_copy / SHOWER
        outside = tmp_path / "elsewhere.yaml"
        os.link(path, outside)
        text = path.read_text(encoding="utf-8")
        with open(outside, "r+", encoding="utf-8") as fh:
            fh.write(text.replace("power_kw: 7.5", "power_kw: 9.5", 1))
            fh.truncate()
        assert not settle(w, seconds=2.0)                      # nothing seen yet (no event)
        os.chmod(path.parent, 0o750)
        got = _until(w, {SHOWER})
        mine = [u for u in got if u.outcome.file == SHOWER]
        assert mine and mine[0].outcome.valid and any(c.field == "power_kw" for c in mine[0].outcome.changes)
    finally:
        os.chmod(demo_copy / "quill-court-2", 0o755)
        w.stop()
        h.close()


@pytest.mark.skipif(os.geteuid() == 0, reason="root reads a file of mode 000 all the same")
def test_a_file_made_readable_again_is_read_at_once(demo_copy):
    w, h, _ = start_watcher(demo_copy, debounce_s=0.1)
    path = demo_copy / SHOWER
    try:
        os.chmod(path, 0)
        got = _until(w, {SHOWER})
        assert got and not got[-1].outcome.valid
        os.chmod(path, 0o644)
        got = _until(w, {SHOWER})
        assert got and got[-1].outcome.valid
    finally:
        os.chmod(path, 0o644)
        w.stop()
        h.close()
