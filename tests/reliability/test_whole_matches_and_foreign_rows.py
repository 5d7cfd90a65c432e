"""Ids matched whole in every file izwatch validates (a change file for `propose` too), and a
history whose stored file contents izwatch did not write: each a clear message, never exit 3."""
from __future__ import annotations

import sqlite3

import pytest

from tests.conftest import MINIMAL
from tests.reliability.conftest import record
from tests.watch_helpers import start_watcher
from tracker.cli import main


@pytest.mark.parametrize("change, where", [
    ('sources:\n  - {circuit: CU1/1, id: "roof\\n", kind: pv, inverter_a: 10}\n', ":2:22: sources[0].id"),
    ('circuits:\n  - id: "9\\n"\n    board: CU1\n    device: {kind: mcb, curve: B, rating_a: 16, breaking_ka: 6}\n'
     '    cable: {kind: twin-earth-70, csa_mm2: 2.5, length_m: 5, method: C}\n', ":2:5: circuits[0].id"),
])
def test_a_change_file_id_with_a_trailing_newline_is_refused(site_factory, tmp_path, capsys, change, where):
    """Found in review: `propose` validated its change file with Python's `$`, which matches
    before a final newline, so an id "roof\\n" was taken."""
    root = site_factory(MINIMAL)
    path = tmp_path / "change.yaml"
    path.write_text(change, encoding="utf-8")
    code = main(["propose", str(root), str(path), "--on", "2026-12-03"])
    err = capsys.readouterr().err
    assert code == 2 and where in err and "not a valid id" in err, err
    record("ids with a trailing newline accepted (site files, change files)", 0)


def test_stored_content_that_is_not_zlib_data_is_said_plainly_by_every_command(demo_copy, capsys):
    """Found in review: a blob that is not zlib data made the commands that read recorded contents
    (a start catching up with files changed meanwhile: ack, replace, watch, the UI) exit 3."""
    w, h, _ = start_watcher(demo_copy)        # the first record of every file
    w.stop()
    h.close()
    db = demo_copy / ".izwatch" / "history.sqlite"
    conn = sqlite3.connect(db)
    for (name,) in conn.execute("SELECT name FROM sqlite_master WHERE type = 'trigger'").fetchall():
        conn.execute(f"DROP TRIGGER [{name}]")          # what someone with the file would do first
    conn.execute("UPDATE blobs SET content = X'00010203'")
    conn.commit()
    conn.close()
    site = demo_copy / "quill-court-2" / "site.yaml"
    site.write_text(site.read_text().replace("power_kw: 7.5", "power_kw: 8.5", 1))   # changed meanwhile
    capsys.readouterr()
    for argv in (["ack", str(demo_copy), "quill-court-2/CU1/3", "--by", "T", "--note", "booked"],
                 ["replace", str(demo_copy), "quill-court-2/CU1/3/shower", "--power-kw", "8", "--by", "R"]):
        code = main(argv)
        err = capsys.readouterr().err
        assert code == 2 and "not zlib data" in err and "izwatch verify" in err, err
        assert "internal error" not in err
    assert main(["verify", str(demo_copy)]) == 1
    record("recorded file contents that are not zlib data", "ack and replace exit 2 naming it (before: exit 3); "
                                                              "verify fails")
