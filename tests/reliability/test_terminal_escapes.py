"""Text from site files and users never reaches a terminal raw: a carriage return, an escape
sequence or a bidirectional override in a name, `--by` or `--note` is shown as a visible escape
by every command and the terminal UI (tracker/output/terminal_text.py)."""
from __future__ import annotations

import json

import pytest

from tests.watch_helpers import settle, start_watcher
from tests.reliability.conftest import FIGURES
from tracker.cli import main
from tracker.commands.common import event_line
from tracker.output.terminal_text import clean, first_unsafe, is_unsafe

SITE = "quill-court-2/site.yaml"
# A carriage return that would let "ok" overwrite the start of a failing line, an OSC sequence
# that retitles the terminal, a CSI that clears the screen, a right-to-left override.
HOSTILE = "Shower\\rok    \\x1b]0;owned\\x07\\x1b[2J\\u202eevil"
SHOWN = "Shower\\rok    \\x1b]0;owned\\x07\\x1b[2J\\u202eevil"


def is_clean(text: str) -> bool:
    FIGURES["text outputs with hostile names, notes or authors checked"] = \
        FIGURES.get("text outputs with hostile names, notes or authors checked", 0) + 1
    ok = not any(is_unsafe(ch) for ch in text.replace("\n", ""))
    FIGURES["… of them with a raw control or direction character"] = \
        FIGURES.get("… of them with a raw control or direction character", 0) + (not ok)
    return ok


def hostile_copy(root):
    path = root / SITE
    text = path.read_text()
    assert 'name: "Shower, bathroom"' in text
    path.write_text(text.replace('name: "Shower, bathroom"', f'name: "{HOSTILE}"'))
    return root


def test_clean_shows_every_unsafe_character_and_leaves_the_rest():
    assert clean("Cooker, kitchen (2×) — 7.5 kW Ω") == "Cooker, kitchen (2×) — 7.5 kW Ω"
    assert clean("a\rb\nc\td\x1b[2J\x7f\x9b\u202e\u2066\u200f\u2028") == \
        "a\\rb\\nc\\td\\x1b[2J\\x7f\\x9b\\u202e\\u2066\\u200f\\u2028"
    assert clean(None) == "" and clean(7.5) == "7.5"
    assert first_unsafe("CU1") is None and first_unsafe("CU1\n") == 3 and first_unsafe("a\u202eb") == 1


def test_check_shows_a_hostile_name_escaped(demo_copy, capsys):
    hostile_copy(demo_copy)
    assert main(["check", str(demo_copy)]) == 1
    out = capsys.readouterr().out
    assert is_clean(out) and SHOWN[:34] in out          # (the table shows 34 characters of a name)
    assert main(["check", str(demo_copy), "--json"]) == 1
    out = capsys.readouterr().out
    assert is_clean(out)
    names = [c["name"] for c in json.loads(out)["circuits"] if c["ref"] == "quill-court-2/CU1/3"]
    assert names == ["Shower\rok    \x1b]0;owned\x07\x1b[2J\u202eevil"]     # the JSON value itself is intact


def test_replace_ack_and_history_escape_names_by_and_note(demo_copy, capsys):
    hostile_copy(demo_copy)
    note = "job 7\r\x1b[2Jall fine\u202e"
    main(["replace", str(demo_copy), "quill-court-2/CU1/3/shower", "--power-kw", "9", "--by", "R", "--note", note])
    out, err = capsys.readouterr()
    assert is_clean(out + err) and SHOWN in out and "job 7\\r\\x1b[2Jall fine\\u202e" in out
    assert main(["ack", str(demo_copy), "quill-court-2/CU1/3", "--by", "T", "--note", note]) == 0
    out, err = capsys.readouterr()
    assert is_clean(out + err) and "\\x1b[2J" in out
    assert main(["history", str(demo_copy)]) == 0
    out = capsys.readouterr().out
    assert is_clean(out) and "\\x1b[2J" in out
    assert main(["history", str(demo_copy), "--json"]) == 0
    out = capsys.readouterr().out
    assert is_clean(out) and json.loads(out)[-1]["note"] == note


@pytest.mark.parametrize("by", ["R\rroot", "\x1b]0;x\x07", "A\u202eB", "  "])
def test_a_name_with_control_characters_is_refused(demo_copy, capsys, by):
    code = main(["replace", str(demo_copy), "quill-court-2/CU1/3/shower", "--power-kw", "8", "--by", by])
    out, err = capsys.readouterr()
    assert code == 2 and is_clean(out + err) and "--by" in err
    assert main(["ack", str(demo_copy), "quill-court-2/CU1/3", "--by", by, "--note", "n"]) == 2
    capsys.readouterr()


def test_watch_lines_are_escaped(demo_copy):
    w, h, _ = start_watcher(demo_copy)
    try:
        hostile_copy(demo_copy)
        path = demo_copy / SITE
        path.write_text(path.read_text().replace("power_kw: 7.5", "power_kw: 9.5"))
        got = settle(w, until=lambda g: any(u.outcome.events for u in g))
        lines = [event_line(e, u.outcome, u.recorded, as_json) for u in got for e in u.outcome.events
                 for as_json in (False, True)]
        assert lines and all(is_clean(line) or line.startswith("{") for line in lines)
        text = [line for line in lines if not line.startswith("{")]
        assert all(is_clean(line) for line in text)
    finally:
        w.stop()
        h.close()


def test_the_ui_rows_and_timeline_hold_no_raw_control_character(demo_copy):
    from tracker.history import History
    from tracker.history.query import revisions
    from tracker.tracking.authors import Authors
    from tracker.tracking.startup import start
    from tui.snapshot import build
    from tui.timeline import timeline
    hostile_copy(demo_copy)
    path = demo_copy / SITE
    path.write_text(path.read_text().replace("power_kw: 7.5", "power_kw: 9.5"))
    h = History.open(demo_copy / ".izwatch" / "history.sqlite")
    state, _ = start(demo_copy, h, Authors(demo_copy, by="Ed\x1b[2J"), jobs=1)
    snap = build(state, h)
    row = snap.by_ref["quill-court-2/CU1/3"]
    assert row.name == SHOWN and is_clean(row.cause.author) and is_clean(row.haystack)
    entries = timeline(revisions(h, ref="quill-court-2/CU1/3", newest_first=True), "quill-court-2/CU1/3")
    assert all(is_clean(e.author) and all(is_clean(i.text) for i in e.items) for e in entries)
    h.close()
