"""Every warning `check` gives is shown by `watch` and the UI and recorded with the revision; a change
that comes only from a misspelt key is flagged.

Found in review: under `watch`, `grouped_wth: 3` (for `grouped_with`) dropped the grouping, the
ring showed "cleared" and the change was recorded as a real one; only `check` warned."""
from __future__ import annotations

import json

from tests.watch_helpers import settle, start_watcher
from tracker.cli import main
from tracker.commands.watch import emit_updates
from tracker.history.query import revisions
from tui.live import News
from tui.snapshot import build

SITE = "orchard-end/site.yaml"
RING = "orchard-end/CU1/1"     # its capacity fails while grouped with 3 (the demo's README)


def misspell(root):
    path = root / SITE
    text = path.read_text()
    assert text.count("      grouped_with: 3\n") == 1      # the ring's (the first circuit)
    path.write_text(text.replace("      grouped_with: 3\n", "      grouped_wth: 3\n"))


def test_a_misspelt_key_is_flagged_by_watch_the_ui_and_the_history(demo_copy, capsys, tmp_path):
    w, h, _ = start_watcher(demo_copy)
    try:
        misspell(demo_copy)
        got = settle(w, until=lambda g: g)
        o = got[0].outcome
        assert [(e["ref"], e["transition"]) for e in o.events] == [(RING, "cleared")]
        assert o.misspelt and "grouped_wth" in o.misspelt[0] and "environment.grouped_with 3 → 1" in o.misspelt[0]
        capsys.readouterr()
        emit_updates(got, as_json=False)
        out = capsys.readouterr().out
        assert "CHECK SPELLING  orchard-end/CU1/1 environment.grouped_with 3 → 1" in out
        assert "WARNING  orchard-end/site.yaml:" in out and "did you mean 'grouped_with'?" in out
        emit_updates(got, as_json=True)
        kinds = [json.loads(line)["transition"] for line in capsys.readouterr().out.splitlines()]
        assert kinds[:2] == ["check-spelling", "warning"] and "cleared" in kinds
        news = News.of(got[0])
        assert news.warnings and news.warnings[0].startswith("orchard-end/CU1/1 environment.grouped_with")
        assert build(w.state, h).warnings                  # the UI's notice shows it too
        note = revisions(h)[-1]["note"]
        assert note.startswith("check the spelling: orchard-end/CU1/1 environment.grouped_with 3 → 1")
        assert "warnings: circuits[0].environment.grouped_wth: unknown key" in note
    finally:
        w.stop()
        h.close()
    capsys.readouterr()
    assert main(["history", str(demo_copy), "--ref", RING]) == 0
    assert "check the spelling" in capsys.readouterr().out
    out = tmp_path / "r.json"
    assert main(["report", str(demo_copy), "--site", "orchard-end", "--format", "json", "-o", str(out)]) == 0
    doc = json.loads(out.read_text())
    assert any("check the spelling" in (r["note"] or "") for r in doc["history"]["revisions"])


def test_watch_prints_the_warnings_check_gives_at_start(demo_copy, capsys):
    misspell(demo_copy)
    main(["check", str(demo_copy)])
    check_err = [line for line in capsys.readouterr().err.splitlines() if "warning:" in line]
    assert check_err
    from tracker.commands.common import state_warnings
    w, h, _ = start_watcher(demo_copy)
    try:
        assert [str(x) for x in state_warnings(w.state)] == check_err
    finally:
        w.stop()
        h.close()
