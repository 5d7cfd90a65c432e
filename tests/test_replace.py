"""`izwatch replace`: the edit keeps the file as it was but for the one value, records who and
why, shows before → after for the circuit and upstream, and exits 1 when something fails."""
from __future__ import annotations

import json
import re

from tracker.cli import main

REF = "quill-court-2/CU1/3/shower"
FILE = "quill-court-2/site.yaml"


def comments(text: str) -> list[str]:
    return [line[line.index("#"):] for line in text.splitlines() if "#" in line]


def test_replace_keeps_every_comment_and_byte(demo_copy, capsys):
    path = demo_copy / FILE
    before = path.read_text()
    code = main(["replace", str(demo_copy), REF, "--power-kw", "8.5", "--by", "Ruth Ashdown-Pike",
                 "--note", "tenant fitted an 8.5 kW shower"])
    out = capsys.readouterr().out
    after = path.read_text()
    assert code == 1                                # the capacity check now fails
    assert comments(after) == comments(before) and len(comments(before)) > 10
    changed = [(a, b) for a, b in zip(before.splitlines(), after.splitlines()) if a != b]
    assert changed == [('      - {id: shower, kind: shower, name: "Electric shower", power_kw: 7.5, location: bathroom}',
                        '      - {id: shower, kind: shower, name: "Electric shower", power_kw: 8.5, location: bathroom}')]
    assert len(before.splitlines()) == len(after.splitlines())
    assert re.search(r"capacity .*pass .*→ .*fail .*NEWLY FAILING", out)
    assert "headroom: +0.55 kW → -0.45 kW" in out
    assert "remedy: smallest change that passes every check of the circuit: cable 6 → 10 mm²" in out
    assert "board quill-court-2/CU1" in out and "origin quill-court-2" in out


def test_history_shows_who_why_and_the_field(demo_copy, capsys):
    main(["replace", str(demo_copy), REF, "--power-kw", "8.5", "--by", "Ruth", "--note", "job 2231"])
    capsys.readouterr()
    assert main(["history", str(demo_copy), "--json", "--ref", "quill-court-2/CU1/3"]) == 0
    revs = json.loads(capsys.readouterr().out)
    last = revs[-1]
    assert last["author"] == "Ruth" and last["note"] == "job 2231" and last["source"] == "replace"
    assert last["changes"] == [{"ref": REF, "field": "power_kw", "old": 7.5, "new": 8.5, "change": "modified"}]
    assert {"ref": "quill-court-2/CU1/3", "check": "capacity", "transition": "newly-failing"}.items() <= \
        last["events"][0].items()
    assert set(last) >= {"at", "author", "note", "changes", "events"}
    assert main(["verify", str(demo_copy)]) == 0


def test_dry_run_writes_nothing(demo_copy, capsys):
    before = (demo_copy / FILE).read_bytes()
    code = main(["replace", str(demo_copy), REF, "--power-kw", "9.5", "--by", "R", "--dry-run"])
    out = capsys.readouterr().out
    assert code == 1 and "dry run: nothing written" in out and "NEWLY FAILING" in out
    assert (demo_copy / FILE).read_bytes() == before
    assert not (demo_copy / ".izwatch").exists()


def test_a_smaller_appliance_exits_0(demo_copy, capsys):
    assert main(["replace", str(demo_copy), REF, "--power-kw", "7", "--by", "R"]) == 0
    assert "power_kw 7.5 → power_kw 7" in capsys.readouterr().out


def test_power_to_current_renames_the_key_in_place(demo_copy, capsys):
    main(["replace", str(demo_copy), REF, "--current-a", "30", "--by", "R"])
    text = (demo_copy / FILE).read_text()
    assert '{id: shower, kind: shower, name: "Electric shower", current_a: 30, location: bathroom}' in text


def test_block_style_with_trailing_comment(site_factory, capsys):
    root = site_factory("""\
        supply: {system: TN-C-S, ze_ohm: 0.3, pfc_ka: 1.5}
        boards:
          - {id: CU1, fed_by: supply, main_switch_a: 100}
        circuits:
          - id: "2"
            board: CU1
            device: {kind: rcbo, curve: B, rating_a: 16, breaking_ka: 6}
            rcd_ma: 30
            cable: {kind: twin-earth-70, csa_mm2: 2.5, length_m: 10, method: C}
            loads:
              - id: heater
                kind: water-heater
                power_kw: 3.0     # nameplate, checked 2026-01
        """)
    assert main(["replace", str(root), "flat-1/CU1/2/heater", "--power-kw", "2.75", "--by", "R"]) == 0
    assert "        power_kw: 2.75     # nameplate, checked 2026-01\n" in (root / "flat-1/site.yaml").read_text()


def test_bad_requests_exit_2_and_touch_nothing(demo_copy, capsys):
    before = (demo_copy / FILE).read_bytes()
    assert main(["replace", str(demo_copy), REF, "--power-kw", "-3", "--by", "R"]) == 2
    assert main(["replace", str(demo_copy), REF, "--power-kw", "nan", "--by", "R"]) == 2
    assert main(["replace", str(demo_copy), "quill-court-2/CU1/3/kettle", "--power-kw", "3", "--by", "R"]) == 2
    assert main(["replace", str(demo_copy), "quill-court-2/CU1/3", "--power-kw", "3", "--by", "R"]) == 2
    assert main(["replace", str(demo_copy), "no-such-site/CU1/3/x", "--power-kw", "3", "--by", "R"]) == 2
    err = capsys.readouterr().err
    assert "not a load ref" in err and "no load quill-court-2/CU1/3/kettle" in err and "no site 'no-such-site'" in err
    assert (demo_copy / FILE).read_bytes() == before


def test_replace_records_offline_changes_first(demo_copy, capsys):
    main(["replace", str(demo_copy), REF, "--power-kw", "8", "--by", "Ruth"])
    path = demo_copy / FILE
    path.write_text(path.read_text().replace("power_kw: 6}", "power_kw: 5.5}"))   # the cooker, by hand
    main(["replace", str(demo_copy), REF, "--power-kw", "8.5", "--by", "Ruth"])
    capsys.readouterr()
    main(["history", str(demo_copy), "--json", "--ref", "quill-court-2"])
    revs = json.loads(capsys.readouterr().out)
    kinds = [(r["source"], [c["field"] for c in r["changes"] if c["change"] == "modified"]) for r in revs]
    assert kinds == [("startup", []), ("replace", ["power_kw"]), ("startup", ["power_kw"]), ("replace", ["power_kw"])]
    assert revs[2]["changes"][0]["ref"] == "quill-court-2/CU1/4/cooker" and revs[2]["author"] != "Ruth"


def test_ack(demo_copy, capsys):
    assert main(["ack", str(demo_copy), "tansy-walk-9a/FB1/1", "--by", "Tomas", "--note", "RCD board booked"]) == 0
    assert "acknowledged (cpc-adiabatic, rcd)" in capsys.readouterr().out
    assert main(["ack", str(demo_copy), "quill-court-2/CU1/3", "--by", "T", "--note", "x"]) == 2
    assert "passes every check: nothing to acknowledge" in capsys.readouterr().err
    main(["history", str(demo_copy), "--json", "--ref", "tansy-walk-9a/FB1/1"])
    revs = json.loads(capsys.readouterr().out)
    assert revs[-1]["source"] == "ack" and revs[-1]["ack"]["ref"] == "tansy-walk-9a/FB1/1"
    assert main(["verify", str(demo_copy)]) == 0


def test_history_filters(demo_copy, capsys):
    main(["replace", str(demo_copy), REF, "--power-kw", "8.5", "--by", "R"])
    capsys.readouterr()
    main(["history", str(demo_copy), "--json", "--since", "2999-01-01"])
    assert json.loads(capsys.readouterr().out) == []
    assert main(["history", str(demo_copy), "--since", "last tuesday"]) == 2
    main(["history", str(demo_copy), "--json", "--ref", "quill-court-2/CU1/1"])
    revs = json.loads(capsys.readouterr().out)
    assert len(revs) == 1 and revs[0]["source"] == "startup"     # the first record, not the shower's
    assert {c["ref"] for c in revs[0]["changes"]} == {"quill-court-2/CU1/1", "quill-court-2/CU1/1/sockets"}


def test_verify_exit_codes(demo_copy, capsys):
    assert main(["verify", str(demo_copy)]) == 0                   # nothing recorded yet
    main(["replace", str(demo_copy), REF, "--power-kw", "8.5", "--by", "R"])
    assert main(["verify", str(demo_copy)]) == 0
    import sqlite3
    conn = sqlite3.connect(demo_copy / ".izwatch" / "history.sqlite")
    conn.execute("DROP TRIGGER revisions_append_only_u")
    conn.execute("UPDATE revisions SET note = 'nothing to see' WHERE source = 'replace'")
    conn.commit()
    conn.close()
    capsys.readouterr()
    assert main(["verify", str(demo_copy)]) == 1
    out = capsys.readouterr().out
    assert "FAILED" in out and "first revision that does not match" in out


def test_ack_a_board_and_an_origin(demo_copy, capsys):
    assert main(["ack", str(demo_copy), "orchard-end/CU1", "--by", "T", "--note", "load survey booked"]) == 0
    assert main(["ack", str(demo_copy), "orchard-end", "--by", "T", "--note", "supply upgrade applied for"]) == 0
    assert main(["ack", str(demo_copy), "quill-court-2/CU1", "--by", "T", "--note", "x"]) == 2   # it passes
    assert main(["ack", str(demo_copy), "orchard-end/CU9", "--by", "T", "--note", "x"]) == 2
    out = capsys.readouterr()
    assert "orchard-end/CU1: acknowledged (demand)" in out.out and "no board orchard-end/CU9" in out.err
