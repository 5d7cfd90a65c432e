"""`izwatch propose`: a proposed alteration checked before the work (BS 7671 132.16), writing
nothing; demand before → after, the network operator's route, and the remedy."""
from __future__ import annotations

import json
import os

import pytest

from tests.upgrade_sites import house
from tracker.cli import main

CHARGE_POINT = """\
connect_on: 2026-12-10
circuits:
  - id: "3"
    board: CU1
    name: "Charge point, drive"
    device: {kind: rcbo, curve: B, rating_a: 32, breaking_ka: 6}
    rcd_ma: 30
    rcd_type: A
    dc_fault_detection: true
    rcd_all_poles: true
    earthing_measure: open-pen-device
    cable: {kind: twin-earth-70, csa_mm2: 6, cpc_mm2: 2.5, length_m: 12, method: C}
    loads:
      - {id: car, kind: ev-charger, current_a: 32, location: outdoor%s}
"""


@pytest.fixture
def estate(site_factory):
    return site_factory(house(fuse=60), folder="test-house")


def snapshot(root):
    return {p: (p.stat().st_mtime_ns, p.read_bytes()) for p in root.rglob("*") if p.is_file()}


def run(capsys, root, change_text, tmp_path, *extra):
    change = tmp_path / "change.yaml"
    change.write_text(change_text, encoding="utf-8")
    code = main(["propose", str(root), str(change), "--on", "2026-12-03", *extra])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_charge_point_that_overloads_the_supplier_fuse(capsys, estate, tmp_path):
    """52.04 A before (ring 32 A; 10 kW cooker 10 A + 30 % of 33.48 A; common UK practice
    allowances) + a 32 A charge point at 100 % (722.311) = 84.04 A > the 60 A fuse: the
    network operator first (their connect-and-notify process)."""
    before = snapshot(estate)
    code, out, _ = run(capsys, estate, CHARGE_POINT % "", tmp_path, "--json")
    assert code == 1
    doc = json.loads(out)
    origin = next(d for d in doc["demand"] if d["ref"] == "test-house")
    assert (origin["before_a"], origin["after_a"], origin["limit_a"]) == (52.04, 84.04, 60)
    assert doc["notification"]["route"] == "apply-before"
    assert {(b["ref"], b["check"]) for b in doc["broken"]} == {("test-house/CU1", "demand"), ("test-house", "demand")}
    assert any("larger supply" in r["text"] for r in doc["remedies"])
    assert snapshot(estate) == before and not (estate / ".izwatch").exists()   # nothing written


def test_charge_point_that_fits_is_notified_after_with_its_deadline(capsys, estate, tmp_path):
    """With a load control at 6 A: 52.04 + 6 = 58.04 A ≤ 60 A: connect, notify within 28 days of
    2026-12-10, i.e. by 2027-01-07."""
    code, out, _ = run(capsys, estate, CHARGE_POINT % ", load_control_a: 6", tmp_path)
    assert code == 0
    assert "breaks nothing" in out
    assert "52.0 A → 58.0 A" in out
    assert "notify by 2027-01-07" in out


def test_replaced_load_and_added_source(capsys, estate, tmp_path):
    """The cooker's circuit reused for a heat pump of 40 A rated current (Ib 40 A > In 32 A fails
    design-current, 433.1.1) and a 5 kW inverter (5000 / 230 = 21.74 A > 16 A per phase: EREC
    G99, apply first) added to that circuit."""
    change = """\
replace:
  - {load: CU1/2/cooker, kind: heat-pump, rated_current_a: 40}
sources:
  - {circuit: CU1/2, id: roof, kind: pv, inverter_a: 21.74, isolation: true}
"""
    code, out, _ = run(capsys, estate, change, tmp_path, "--json")
    doc = json.loads(out)
    assert code == 1
    broken = {(b["ref"], b["check"]) for b in doc["broken"]}
    assert ("test-house/CU1/2", "design-current") in broken
    assert ("test-house/CU1/2", "generation") in broken
    assert doc["notification"]["generation_route"] == "apply-before"


@pytest.mark.parametrize("change, where", [
    ("circuits:\n  - id: \"9\"\n    board: CU7\n    device: {kind: mcb, curve: B, rating_a: 16}\n"
     "    cable: {kind: twin-earth-70, csa_mm2: 2.5, length_m: 5, method: C}\n", ":3:5: circuits[0].board"),
    ("replace:\n  - {load: CU1/2/hob, power_kw: 3}\n", ":2:6: replace[0].load"),
    ("sources:\n  - {circuit: CU1/2, id: roof, kind: wind, inverter_a: 10}\n", ":2:32: sources[0].kind"),
    ("circuits:\n  - id: \"9\"\n    board: CU1\n    device: {kind: mcb, curve: B, rating_a: 17}\n"
     "    cable: {kind: twin-earth-70, csa_mm2: 2.5, length_m: 5, method: C}\n", ":4:35: circuits[0].device.rating_a"),
    ("circuits: [\n", ":2:1: YAML"),
    ("replaec: []\n", ":1:1: has a key a change file does not know"),
])
def test_errors_in_the_change_file_name_line_and_column(capsys, estate, tmp_path, change, where):
    code, out, err = run(capsys, estate, change, tmp_path)
    assert code == 2 and out == ""
    assert err.startswith(str(tmp_path / "change.yaml") + ":") and where in err, err
    assert "Traceback" not in err


def test_the_demo_alteration(capsys):
    """demo_changes/: Bracken Cottage (TT, 80 A supplier's fuse) gets a heat pump and a 32 A charge
    point: the origin's demand goes past the fuse (the operators' process: apply first), and only
    what the alteration breaks is listed (the outbuilding circuit's older fault is not)."""
    from tests.conftest import DEMO, ROOT
    code = main(["propose", str(DEMO), str(ROOT / "demo_changes" / "bracken-cottage-charge-point-and-heat-pump.yaml"),
                 "--on", "2026-12-03", "--json"])
    doc = json.loads(capsys.readouterr().out)
    assert code == 1 and doc["notification"]["route"] == "apply-before"
    assert {(b["ref"], b["check"]) for b in doc["broken"]} == {("bracken-cottage/CU1", "demand"),
                                                               ("bracken-cottage", "demand")}
    assert [r["ref"] for r in doc["remedies"]] == ["bracken-cottage"]
