"""Loading the estate: the demo round-trips, and every kind of bad input gives the exact
file:line:col of the key at fault, all problems at once, sorted, never a traceback."""
from __future__ import annotations

import yaml

from tracker.loading import load_estate
from tracker.loading.estate import read_file
from tests.conftest import DEMO, MINIMAL


def test_demo_loads_completely():
    estate = load_estate(DEMO)
    assert estate.errors == []
    assert len(estate.sites) >= 4
    assert sum(len(s.circuits) for s in estate.sites.values()) >= 20


def test_every_demo_file_round_trips():
    """Each circuit of each demo file becomes a model circuit with the file's values."""
    estate = load_estate(DEMO)
    for site in estate.sites.values():
        for rel in site.files:
            raw = yaml.safe_load((DEMO / rel).read_text(encoding="utf-8"))
            in_file = [c for c in site.circuits if c.src.file == rel]
            assert len(in_file) == len(raw.get("circuits") or [])
            for c, d in zip(in_file, raw.get("circuits") or []):
                assert c.id == str(d["id"]) and c.board == str(d["board"])
                assert c.cable.length_m == d["cable"]["length_m"]
                assert c.device.rating_a == d["device"]["rating_a"]
                assert [ld.id for ld in c.loads] == [ld["id"] for ld in d.get("loads", [])]


def test_defaults_of_the_spec(site_factory):
    root = site_factory(MINIMAL)
    site = load_estate(root).sites["flat-1"]
    c = site.circuits[0]
    assert site.supply.u0_v == 230 and site.supply.private is False
    assert site.rules == "bs7671"
    assert c.topology == "radial" and c.overload_exempt is False
    assert c.environment.grouped_with == 1 and c.environment.arrangement == "bunched"
    assert c.environment.insulation_mm == 0
    assert c.loads[0].power_factor == 1.0


def test_site_id_from_folder_or_key(site_factory):
    root = site_factory(MINIMAL, folder="flat-7")
    assert "flat-7" in load_estate(root).sites
    root = site_factory(MINIMAL.replace('name: "Test flat"', 'id: other-id\n  name: "Test flat"'), folder="flat-8")
    assert "other-id" in load_estate(root).sites


def test_single_site_folder(site_factory):
    root = site_factory(MINIMAL)
    estate = load_estate(root / "flat-1")
    assert estate.single_site and list(estate.sites) == ["flat-1"]
    assert estate.sites["flat-1"].files == ("site.yaml",)


def test_board_files_contribute(site_factory):
    root = site_factory({"site.yaml": MINIMAL, "garage.yaml": """\
        boards:
          - {id: G1, fed_by: CU1/9}
        circuits:
          - id: "9"
            board: CU1
            feeds: G1
            device: {kind: mcb, curve: B, rating_a: 32, breaking_ka: 6}
            cable: {kind: swa-90, csa_mm2: 6, length_m: 20, method: D}
          - id: "1"
            board: G1
            device: {kind: rcbo, curve: B, rating_a: 16, breaking_ka: 6}
            rcd_ma: 30
            cable: {kind: twin-earth-70, csa_mm2: 2.5, length_m: 5, method: C}
            loads: [{id: s, kind: socket-outlets}]
        """})
    estate = load_estate(root)
    assert estate.errors == []
    site = estate.sites["flat-1"]
    assert {b.id for b in site.boards} == {"CU1", "G1"}
    assert {c.src.file for c in site.circuits} == {"flat-1/site.yaml", "flat-1/garage.yaml"}


def _errors(root):
    return [str(e) for e in load_estate(root).errors]


def test_empty_file(site_factory):
    root = site_factory("")
    assert _errors(root) == ["flat-1/site.yaml:1:1: file is empty; a site file is a YAML mapping "
                             "(site, supply, boards, circuits)"]


def test_comments_only(site_factory):
    assert _errors(site_factory("# nothing yet\n"))[0].startswith("flat-1/site.yaml:1:1: file holds only comments")


def test_not_utf8(site_factory, tmp_path):
    root = site_factory(MINIMAL)
    (root / "flat-1" / "site.yaml").write_bytes(MINIMAL.encode() + b"    name: caf\xe9\n")
    errs = _errors(root)
    assert len(errs) == 1
    line = MINIMAL.count("\n") + 1
    assert errs[0].startswith(f"flat-1/site.yaml:{line}:14: not valid UTF-8 (byte 0xe9)")


def test_binary_file(site_factory):
    root = site_factory(MINIMAL)
    (root / "flat-1" / "site.yaml").write_bytes(b"site:\n  name: x\x00y\n")
    assert _errors(root)[0].startswith("flat-1/site.yaml:2:10: binary content")


def test_non_mapping_document(site_factory):
    assert _errors(site_factory("- a\n- b\n"))[0] == (
        "flat-1/site.yaml:1:1: the top level is a list; a site file is a mapping with the keys "
        "site, supply, boards, circuits")
    assert "a single text value" in _errors(site_factory("just words\n"))[0]


def test_yaml_syntax_error_location(site_factory):
    bad = MINIMAL.replace("    main_switch_a: 100", "    main_switch_a: [100")
    errs = _errors(site_factory(bad))
    assert len(errs) == 1 and errs[0].startswith("flat-1/site.yaml:")
    line = int(errs[0].split(":")[1])
    assert 10 <= line <= 12  # libyaml reports where the flow sequence breaks off


def test_duplicate_key_is_an_error(site_factory):
    bad = MINIMAL.replace("  ze_ohm: 0.35\n", "  ze_ohm: 0.35\n  ze_ohm: 0.8\n")
    assert _errors(site_factory(bad)) == [
        "flat-1/site.yaml:6:3: duplicate key 'ze_ohm' (the later one would silently win)"]


def test_python_tag_refused_and_not_run(site_factory, tmp_path):
    marker = tmp_path / "ran"
    bad = MINIMAL + f"extra: !!python/object/apply:os.system ['touch {marker}']\n"
    errs = _errors(site_factory(bad))
    assert len(errs) == 1 and "is not allowed" in errs[0]
    assert not marker.exists()


def test_schema_error_exact_key_location(site_factory):
    bad = MINIMAL.replace("csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 20", "csa_mm2: 7, cpc_mm2: 1.5, length_m: 20")
    errs = _errors(site_factory(bad))
    # line 18 is '    cable: {kind: twin-earth-70, csa_mm2: 7, ...}': the key csa_mm2 starts at column 34
    assert errs == ["flat-1/site.yaml:18:34: circuits[0].cable.csa_mm2: 7 is not a standard conductor size "
                    "(1, 1.5, 2.5, 4, 6, 10, 16, 25, 35, …)"]


def test_block_style_key_location(site_factory):
    text = MINIMAL.replace("    cable: {kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 20, method: C}\n",
                           "    cable:\n      kind: twin-earth-70\n      csa_mm2: 2.5\n      length_m: -4\n"
                           "      method: C\n")
    errs = _errors(site_factory(text))
    assert errs == ["flat-1/site.yaml:21:7: circuits[0].cable.length_m: -4 must be more than 0"]  # '      length_m: -4' 


def test_missing_required_key_points_at_parent(site_factory):
    text = MINIMAL.replace("    device: {kind: rcbo, curve: B, rating_a: 20, breaking_ka: 6}\n", "")
    errs = _errors(site_factory(text))
    assert errs == ["flat-1/site.yaml:13:5: circuits[0]: missing required key 'device'"]  # the item '  - id: "1"' 


def test_all_problems_at_once_sorted(site_factory):
    text = MINIMAL.replace("system: TN-C-S", "system: TN-X").replace("rating_a: 20", "rating_a: 21") \
        .replace("board: CU1\n    name", "board: CU9\n    name")
    errs = _errors(site_factory(text))
    assert errs == [
        "flat-1/site.yaml:4:3: supply.system: 'TN-X' is not a known earthing system (TN-S, TN-C-S, TT)",
        "flat-1/site.yaml:14:5: circuits[0].board: board 'CU9' is not defined in this site (boards: CU1)",
        "flat-1/site.yaml:16:36: circuits[0].device.rating_a: 21 A is not a standard rating (RCBO: 1, 2, 3, 4, "
        "5, 6, 10, 13, 16, 20, 25, 32, 40, 45, 50, 63, 80, 100, 125)",
    ]


def test_semantic_references(site_factory):
    root = site_factory({"site.yaml": MINIMAL, "b.yaml": """\
        boards:
          - {id: CU2, fed_by: CU1/7}
          - {id: CU1, fed_by: supply}
        circuits:
          - id: "7"
            board: CU1
            feeds: CU3
            device: {kind: mcb, curve: B, rating_a: 32}
            cable: {kind: swa-90, csa_mm2: 6, length_m: 10, method: X}
        """})
    errs = _errors(root)
    assert errs == [
        "flat-1/b.yaml:2:15: boards[0].fed_by: circuit CU1/7 says it feeds 'CU3'; fed_by and feeds must agree",
        "flat-1/b.yaml:3:6: boards[1].id: board id 'CU1' is already used (flat-1/site.yaml, boards[0])",
        "flat-1/b.yaml:7:5: circuits[0].feeds: board 'CU3' is not defined in this site",
        "flat-1/b.yaml:9:53: circuits[0].cable.method: 'X' is not an installation method of swa-90 (C, D, E)",
    ]


def test_cycle_is_reported(site_factory):
    root = site_factory({"site.yaml": MINIMAL, "loop.yaml": """\
        boards:
          - {id: A, fed_by: B/1}
          - {id: B, fed_by: A/1}
        circuits:
          - {id: "1", board: A, feeds: B, device: {kind: mcb, curve: B, rating_a: 32}, cable: {kind: swa-90, csa_mm2: 6, length_m: 10, method: C}}
          - {id: "1", board: B, feeds: A, device: {kind: mcb, curve: B, rating_a: 32}, cable: {kind: swa-90, csa_mm2: 6, length_m: 10, method: C}}
        """})
    errs = _errors(root)
    assert "flat-1/loop.yaml:2:13: boards[0].fed_by: boards feed each other in a loop (A → B → A); every board " \
           "needs one path to the supply" in errs
    assert len([e for e in errs if "loop" in e]) == 2


def test_non_finite_numbers(site_factory):
    errs = _errors(site_factory(MINIMAL.replace("ze_ohm: 0.35", "ze_ohm: .nan")))
    assert errs == ["flat-1/site.yaml:5:3: supply.ze_ohm: nan is not a finite number"]


def test_misspelt_key_warns_but_loads(site_factory):
    estate = load_estate(site_factory(MINIMAL.replace("main_switch_a: 100", "main_switch: 100")))
    assert estate.errors == []
    assert [str(w) for w in estate.warnings] == [
        "flat-1/site.yaml:11:5: warning: boards[0].main_switch: unknown key, ignored (did you mean 'main_switch_a'?)"]


def test_unreadable_file_is_an_error(site_factory, monkeypatch):
    root = site_factory(MINIMAL)
    import os
    real_open = os.open

    def refuse(path, *args, **kwargs):      # what mode 000 does to anyone but root
        if str(path).endswith("site.yaml"):
            raise PermissionError(13, "Permission denied")
        return real_open(path, *args, **kwargs)
    monkeypatch.setattr(os, "open", refuse)
    result = read_file(root / "flat-1" / "site.yaml", "flat-1/site.yaml")
    assert [str(e) for e in result.errors] == ["flat-1/site.yaml:1:1: cannot be read (Permission denied)"]


def test_folder_without_site_yaml_is_named(site_factory):
    root = site_factory(MINIMAL)
    (root / "stray").mkdir()
    (root / "stray" / "board.yaml").write_text("boards: []\n")
    warnings = [str(w) for w in load_estate(root).warnings]
    assert warnings == ["stray/board.yaml:1:1: warning: not read: folder stray/ has no site.yaml, so it is not a site"]


def test_duplicate_site_ids(site_factory):
    text = MINIMAL.replace('name: "Test flat"', 'id: same\n  name: "Test flat"')
    site_factory(text, folder="a")
    root = site_factory(text, folder="b")
    assert _errors(root) == ["b/site.yaml:1:1: site id 'same' is already used by a/site.yaml; site ids must be unique"]


def test_site_id_of_the_wrong_type(site_factory):
    """Found by the structural fuzzer: a non-text site.id once reached the id check."""
    errs = _errors(site_factory(MINIMAL.replace('name: "Test flat"', 'id: true\n  name: "Test flat"')))
    assert errs == ["flat-1/site.yaml:2:3: site.id: expected text, got true"]


def test_a_site_is_found_by_its_id_through_the_safe_reader(site_factory):
    """The commands that name a site (report --site, replace, ack) find its folder by reading
    site.yaml files through the safe reader: a declared id wins over a folder name, an alias bomb
    in another folder is refused rather than expanded, and a folder named like the id whose
    site.yaml does not load is still that site's (so its errors can be listed)."""
    from tracker.loading.estate import site_folder_of
    root = site_factory(MINIMAL.replace('name: "Test flat"', 'id: other-id\n  name: "Test flat"'), folder="flat-8")
    site_factory("a: &a [1, 1, 1, 1, 1, 1, 1, 1, 1]\n" + "".join(
        f"{n}: &{n} [*{p}, *{p}, *{p}, *{p}, *{p}, *{p}, *{p}, *{p}, *{p}]\n"
        for p, n in zip("abcdefg", "bcdefgh")), folder="bomb")
    site_factory("site: [unclosed\n", folder="broken")
    assert site_folder_of(root, "other-id") == "flat-8"
    assert site_folder_of(root, "flat-8") is None
    assert site_folder_of(root, "broken") == "broken"
    assert site_folder_of(root, "bomb") == "bomb"
    assert site_folder_of(root, "no-such-site") is None
