"""Numbers YAML 1.1 reads otherwise than people do, numbers too long for Python, ids with a
trailing newline, a file made of a huge list, too many worker processes, and history rows izwatch
did not write: each a clear message (exit 2, or `verify` failing), never a traceback, and a
watcher that goes on."""
from __future__ import annotations

import json
import sqlite3
import time

import pytest

from tests.reliability.conftest import FIGURES, record
from tests.watch_helpers import settle, start_watcher
from tracker.cli import main
from tracker.parallel import max_jobs

SITE = "quill-court-2/site.yaml"


def _count(key: str, ok: bool) -> None:
    FIGURES[key] = FIGURES.get(key, 0) + 1
    FIGURES[key + ": refused as asked"] = FIGURES.get(key + ": refused as asked", 0) + bool(ok)


@pytest.mark.parametrize("written, meant", [
    ("csa_mm2: 010", "octal"),            # YAML 1.1: 8
    ("csa_mm2: 0x10", "hexadecimal"),     # 16
    ("csa_mm2: 0b110", "binary"),         # 6
    ("length_m: 1:30", "base-60"),        # 90
    ("length_m: 1_5", "drops '_'"),       # 15
])
def test_yaml_11_number_forms_are_refused(demo_copy, capsys, written, meant):
    """Found in review: these were taken silently (020 → 16, 1:30 → 90, an id 010 → "8")."""
    path = demo_copy / SITE
    text = path.read_text()
    key = written.split(":")[0]
    line = next(x for x in text.splitlines() if f"{key}: " in x)
    old = line[line.index(f"{key}: "):].split(",")[0].split("}")[0]
    path.write_text(text.replace(old, written, 1))
    code = main(["check", str(demo_copy)])
    err = capsys.readouterr().err
    ok = code == 2 and meant in err and f"{SITE}:" in err and "Traceback" not in err
    _count("YAML 1.1 number forms (010, 0x10, 0b110, 1:30, 1_5)", ok)
    assert ok, err


def test_an_id_with_a_trailing_newline_is_refused(demo_copy, capsys):
    """Found in review: `$` in Python's re matches before a final newline, so "CU1\\n" passed."""
    path = demo_copy / SITE
    path.write_text(path.read_text().replace("- id: CU1", '- id: "CU1\\n"', 1))
    code = main(["check", str(demo_copy)])
    err = capsys.readouterr().err
    assert code == 2 and "boards[0].id" in err and "not a valid id" in err
    record("ids with a trailing newline accepted", 0)


def test_a_huge_integer_under_an_ignored_key_is_an_input_error_and_the_watcher_goes_on(demo_copy, capsys):
    """Found in review: an integer of more than 4,300 digits anywhere (Python's limit) exited 3 and
    stopped the watcher until the file was fixed."""
    path = demo_copy / SITE
    good = path.read_text()
    path.write_text(good + "x_note: " + "9" * 5000 + "\n")
    assert main(["check", str(demo_copy)]) == 2
    assert "a number of 5,000 digits" in capsys.readouterr().err
    path.write_text(good)
    w, h, _ = start_watcher(demo_copy)
    try:
        path.write_text(good + "x_note: " + "9" * 5000 + "\n")
        got = settle(w, until=lambda g: g)
        assert not got[0].outcome.valid and "5,000 digits" in str(got[0].outcome.errors)
        path.write_text(good.replace("power_kw: 7.5", "power_kw: 9.5"))   # and the next save is taken
        got = settle(w, until=lambda g: g)
        assert got[0].outcome.valid and got[0].outcome.events
    finally:
        w.stop()
        h.close()
    record("a number too long for Python: watcher stopped", "no (an input error; the next save is taken)")


def test_a_file_made_of_a_huge_list_is_refused_before_it_is_built(demo_copy, capsys):
    """Found in review: a 2 MB file holding a one-million-element list took 80 s and 760 MB."""
    path = demo_copy / "quill-court-2" / "big.yaml"
    path.write_text("circuits: [" + "1," * 1_000_000 + "1]\n")
    started = time.perf_counter()
    code = main(["check", str(demo_copy)])
    elapsed = time.perf_counter() - started
    err = capsys.readouterr().err
    assert code == 2 and "big.yaml:1:1:" in err and "split the site" in err
    path.write_text("circuits:\n" + "  - 1\n" * 6_000)
    assert main(["check", str(demo_copy)]) == 2
    assert "a list of 6,000 items" in capsys.readouterr().err
    record("a 2 MB file of a one-million-element list", f"refused (exit 2) in {elapsed:.2f} s, the whole check "
                                                         "of the demo included")


def test_jobs_has_an_upper_bound(demo_copy, capsys):
    """Found in review: --jobs 5000 started 1,100 processes."""
    with pytest.raises(SystemExit) as caught:
        main(["check", str(demo_copy), "--jobs", "5000"])
    assert caught.value.code == 2
    err = capsys.readouterr().err
    assert f"at most {max_jobs()} worker processes" in err   # 4 per core available (README, limits)


def test_history_rows_izwatch_did_not_write_are_said_plainly(demo_copy, capsys, tmp_path):
    """Found in review: a blob that is not zlib data made `verify` exit 3; a change row that is
    not JSON made `history` and `report` exit 3."""
    assert main(["ack", str(demo_copy), "orchard-end/CU1/5", "--by", "T", "--note", "booked"]) == 0
    db = demo_copy / ".izwatch" / "history.sqlite"
    conn = sqlite3.connect(db)
    names = [r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'trigger'")]
    for name in names:                        # what an attacker with the file would do first
        conn.execute(f"DROP TRIGGER [{name}]")
    conn.execute("UPDATE blobs SET content = X'00010203' WHERE rowid = (SELECT min(rowid) FROM blobs)")
    conn.execute("UPDATE changes SET new = 'not json' WHERE rowid = (SELECT min(rowid) FROM changes)")
    conn.commit()
    conn.close()
    capsys.readouterr()
    assert main(["verify", str(demo_copy)]) == 1
    out, err = capsys.readouterr()
    assert "internal error" not in out + err
    assert main(["history", str(demo_copy)]) == 2
    err = capsys.readouterr().err
    assert "not JSON" in err and "izwatch verify" in err and "internal error" not in err
    out_file = tmp_path / "r.json"
    assert main(["report", str(demo_copy), "--site", "orchard-end", "--format", "json", "-o", str(out_file)]) == 0
    doc = json.loads(out_file.read_text())
    assert doc["history"]["state"] == "unreadable" and "not JSON" in doc["history"]["reason"]
    record("history rows not written by izwatch (a blob not zlib, a value not JSON)",
           "verify fails, history exit 2 and the report says so; no internal error")
