"""`izwatch replace` under pressure: another edit of the same file at the same moment, a full disk,
CRLF line ends and a byte-order mark. The file and the history must always agree."""
from __future__ import annotations

import errno
import json
import sqlite3

import pytest

from tests.reliability.conftest import FIGURES, record
from tracker.cli import main
from tracker.history import History
from tracker.history.verify import verify
from tracker.loading.estate import sha256_hex

SHOWER = "quill-court-2/CU1/3/shower"
COOKER = "quill-court-2/CU1/4/cooker"
FILE = "quill-court-2/site.yaml"


def first_record(root):
    from tracker.tracking.authors import Authors
    from tracker.tracking.startup import start
    h = History.open(root / ".izwatch" / "history.sqlite")
    start(root, h, Authors(root), jobs=1)
    h.close()


def latest_hash(root, rel):
    h = History.open(root / ".izwatch" / "history.sqlite")
    try:
        return h.latest_by_file()[rel][1]
    finally:
        h.close()


def test_two_replacements_of_one_file_at_once_keep_both(demo_copy, monkeypatch, capsys):
    """Found in review: the second replacement was computed from the file as it was before the
    first one, and wrote over it (both exited 0, one edit lost). Now the file is re-read under
    the history's write lock, and a replacement computed from an older file is worked out again."""
    assert main(["replace", str(demo_copy), COOKER, "--power-kw", "5", "--by", "A", "--dry-run"]) == 0
    original = History.record_after
    calls = []

    def meanwhile(self, rev, action, undo=None):
        if not calls:   # the first try of the outer replacement: another one lands first
            calls.append("inner")
            assert main(["replace", str(demo_copy), COOKER, "--power-kw", "5", "--by", "Inner"]) == 0
        calls.append(rev.author)
        return original(self, rev, action, undo)

    monkeypatch.setattr(History, "record_after", meanwhile)
    code = main(["replace", str(demo_copy), SHOWER, "--power-kw", "8", "--by", "Outer"])
    assert code == 0 and calls == ["inner", "Inner", "Outer", "Outer"]   # the outer one tried again once
    text = (demo_copy / FILE).read_text()
    assert "power_kw: 8," in text and "power_kw: 5}" in text          # both values are in the file
    assert latest_hash(demo_copy, FILE) == sha256_hex((demo_copy / FILE).read_bytes())
    capsys.readouterr()
    assert main(["history", str(demo_copy), "--json", "--ref", "quill-court-2/CU1"]) == 0
    revs = [r for r in json.loads(capsys.readouterr().out) if r["source"] == "replace"]
    assert [(r["author"], r["changes"][0]["ref"]) for r in revs] == [("Inner", COOKER), ("Outer", SHOWER)]
    assert verify(History.open(demo_copy / ".izwatch" / "history.sqlite")).ok
    record("two replacements of one file at once", "both edits in the file and recorded, in order")


def test_a_file_that_keeps_changing_is_refused_not_overwritten(demo_copy, monkeypatch, capsys):
    path = demo_copy / FILE
    original = History.record_after
    n = [0]

    def always_meanwhile(self, rev, action, undo=None):
        n[0] += 1
        path.write_bytes(path.read_bytes() + f"# touched {n[0]}\n".encode())
        return original(self, rev, action, undo)

    monkeypatch.setattr(History, "record_after", always_meanwhile)
    code = main(["replace", str(demo_copy), SHOWER, "--power-kw", "8", "--by", "R"])
    err = capsys.readouterr().err
    assert code == 2 and "kept changing" in err and "nothing was written" in err
    assert "power_kw: 7.5" in path.read_text()          # the replacement was not made
    record("a file that keeps changing under replace", f"refused after {n[0]} tries, nothing written")


@pytest.mark.parametrize("where", ["temporary file", "revision", "commit"])
def test_disk_full_leaves_file_and_history_in_step(demo_copy, monkeypatch, capsys, where):
    """Found in review: with the disk full the site file was rewritten and its revision not
    recorded (exit 3: the who and the why were lost). Now the revision is written first, and a
    commit that fails puts the file back; the message says "disk full"."""
    first_record(demo_copy)
    path = demo_copy / FILE
    before = path.read_bytes()
    full = OSError(errno.ENOSPC, "No space left on device")
    if where == "temporary file":
        import tracker.commands.replace as replace_module

        def no_space(*a, **k):
            raise full
        monkeypatch.setattr(replace_module, "_write_temp", no_space)
    else:
        import tracker.history.store as store_module
        real_connect = sqlite3.connect

        class FullConnection(sqlite3.Connection):
            def execute(self, sql, *args):
                if (where == "commit" and sql == "COMMIT") or \
                        (where == "revision" and sql.startswith("INSERT INTO") and "revisions" in sql):
                    raise sqlite3.OperationalError("database or disk is full")
                return super().execute(sql, *args)

        monkeypatch.setattr(store_module.sqlite3, "connect",
                            lambda *a, **k: real_connect(*a, **{**k, "factory": FullConnection}))
    capsys.readouterr()
    code = main(["replace", str(demo_copy), SHOWER, "--power-kw", "8.5", "--by", "R", "--note", "job 7"])
    err = capsys.readouterr().err
    assert code == 2, err
    assert "disk full" in err and "Traceback" not in err and "damaged" not in err
    assert path.read_bytes() == before                              # the file is as it was
    assert latest_hash(demo_copy, FILE) == sha256_hex(before)       # and the history says so
    assert not [p for p in path.parent.iterdir() if p.name.startswith(".izwatch-")]   # no leftovers
    FIGURES["disk full cases: file and history agree, \"disk full\" said"] = \
        FIGURES.get("disk full cases: file and history agree, \"disk full\" said", 0) + 1


def test_disk_full_while_recording_what_changed_meanwhile(demo_copy, monkeypatch, capsys):
    """Any command that records (here: replace's first record of the site) says "disk full"."""
    import tracker.history.store as store_module
    real_connect = sqlite3.connect

    class FullConnection(sqlite3.Connection):
        def execute(self, sql, *args):
            if sql.startswith("INSERT INTO") and "revisions" in sql:
                raise sqlite3.OperationalError("database or disk is full")
            return super().execute(sql, *args)

    monkeypatch.setattr(store_module.sqlite3, "connect",
                        lambda *a, **k: real_connect(*a, **{**k, "factory": FullConnection}))
    before = (demo_copy / FILE).read_bytes()
    code = main(["replace", str(demo_copy), SHOWER, "--power-kw", "8.5", "--by", "R"])
    err = capsys.readouterr().err
    assert code == 2 and "disk full" in err and "internal error" not in err
    assert (demo_copy / FILE).read_bytes() == before
    FIGURES["disk full cases: file and history agree, \"disk full\" said"] = \
        FIGURES.get("disk full cases: file and history agree, \"disk full\" said", 0) + 1


def test_crlf_line_ends_are_kept(demo_copy):
    """Found in review: replace turned every CRLF into LF (every line changed)."""
    path = demo_copy / FILE
    crlf = path.read_bytes().replace(b"\n", b"\r\n")
    path.write_bytes(crlf)
    assert main(["replace", str(demo_copy), SHOWER, "--power-kw", "8", "--by", "R"]) == 0
    after = path.read_bytes()
    assert after == crlf.replace(b"power_kw: 7.5, location: bathroom", b"power_kw: 8, location: bathroom")


def test_a_byte_order_mark_is_kept(demo_copy, capsys):
    """Found in review: a file beginning with a byte-order mark was refused ("changed more than
    the one value": libyaml does not count the mark in its positions)."""
    path = demo_copy / FILE
    with_bom = b"\xef\xbb\xbf" + path.read_bytes()
    path.write_bytes(with_bom)
    assert main(["replace", str(demo_copy), SHOWER, "--power-kw", "8", "--by", "R"]) == 0, capsys.readouterr()
    assert path.read_bytes() == with_bom.replace(b"power_kw: 7.5,", b"power_kw: 8,")
