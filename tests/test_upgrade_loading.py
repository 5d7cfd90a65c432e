"""Site-file keys for RCD data, EV earthing measures, sources and heat pumps: what loads, and the
file:line:col errors of what does not."""
from __future__ import annotations

import pytest

from tests.upgrade_sites import charger, evaluate, house
from tracker.loading import load_estate


def errors(site_factory, text):
    estate = load_estate(site_factory(text, folder="test-house"))
    return [str(e) for e in estate.errors]


def test_all_new_keys_load(site_factory):
    text = house(charger() + "  dc_fault_detection: true\n" + """\
- id: "4"
  board: CU1
  name: "PV"
  device: {kind: mcb, curve: B, rating_a: 20, breaking_ka: 6, bidirectional: true}
  cable: {kind: twin-earth-70, csa_mm2: 4, cpc_mm2: 1.5, length_m: 15, method: C}
  sources:
    - {id: roof, kind: pv, inverter_a: 16, isolation: true, connected_on: 2026-11-20, notified_on: "2026-11-25"}
""")
    estate = load_estate(site_factory(text, folder="test-house"))
    assert not estate.errors, estate.errors
    c = {c.id: c for c in estate.sites["test-house"].circuits}
    assert c["3"].rcd.type == "B" and c["3"].rcd.all_poles is True and c["3"].rcd.dc_fault_detection is True
    assert c["3"].earthing_measure == "open-pen-device"
    src = c["4"].sources[0]
    assert (src.kind, src.inverter_a, src.connected_on, src.notified_on) == ("pv", 16.0, "2026-11-20", "2026-11-25")
    assert c["4"].device.bidirectional is True


@pytest.mark.parametrize("change, where, words", [
    (("rcd_type: B", "rcd_type: Q"), "circuits[2].rcd_type", "is not a known RCD type"),
    (("earthing_measure: open-pen-device", "earthing_measure: rod"), "circuits[2].earthing_measure",
     "is not a known earthing measure"),
    (("rcbo, curve: B, rating_a: 32, breaking_ka: 6}\n    rcd_ma: 30\n    rcd_type: B\n",
      "mcb, curve: B, rating_a: 32, breaking_ka: 6}\n    rcd_type: B\n"), "circuits[2].rcd_type", "there is no RCD here"),
    (("earthing_measure: open-pen-device", "earthing_measure: tt-electrode"), "circuits[2].earthing_measure",
     "give electrode_ohm"),
    (("current_a: 32,", "current_a: 32, connected_on: 2026-13-40,"), "site.yaml:", "not a date"),
    (("current_a: 32,", "current_a: 32, connected_on: soon,"), "circuits[2].loads[0].connected_on", "not a date"),
    (("current_a: 32,", "current_a: 32, load_control_a: 0,"), "circuits[2].loads[0].load_control_a",
     "must be more than 0"),
])
def test_bad_keys_name_file_line_col(site_factory, change, where, words):
    old, new = change
    text = house(charger())
    assert old in text
    errs = errors(site_factory, text.replace(old, new))
    assert any(where in e and words in e for e in errs), errs
    assert all(e.startswith("test-house/site.yaml:") and e.split(":")[1].isdigit() for e in errs)


def test_source_kind_and_id_clash(site_factory):
    text = house(charger() + "  sources:\n    - {id: car, kind: wind, inverter_a: 10}\n")
    errs = errors(site_factory, text)
    assert any("circuits[2].sources[0].kind" in e and "not a known source kind" in e for e in errs), errs
    text = house(charger() + "  sources:\n    - {id: car, kind: battery, inverter_a: 10}\n")
    errs = errors(site_factory, text)
    assert any("circuits[2].sources[0].id" in e and "already used" in e for e in errs), errs


def test_heat_pump_at_full_rating_no_diversity(site_factory):
    """A heat pump: its maker's rated current is Ib, and the board counts it at 100 % (no
    diversity for a continuous load, common practice; tracker/data/diversity.yaml)."""
    text = house("""\
- id: "5"
  board: CU1
  name: "Heat pump"
  device: {kind: mcb, curve: C, rating_a: 20, breaking_ka: 6}
  cable: {kind: twin-earth-70, csa_mm2: 4, cpc_mm2: 1.5, length_m: 10, method: C}
  loads:
    - {id: hp, kind: heat-pump, power_kw: 3.0, rated_current_a: 17.5}
""")
    sr = evaluate(site_factory, text)
    r = sr.circuits["test-house/CU1/5"]
    assert r.ib_a == pytest.approx(17.5)      # the maker's rated current, not 3.0 kW / 230 V = 13.0 A
    allowed = {cat: a for cat, _, a in sr.boards["test-house/CU1"].demand.parts}
    assert allowed["heat-pumps"] == pytest.approx(17.5)


def test_storage_heater_kind_loads(site_factory):
    text = house("""\
- id: "6"
  board: CU1
  device: {kind: mcb, curve: B, rating_a: 16, breaking_ka: 6}
  cable: {kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 10, method: C}
  loads:
    - {id: st, kind: storage-heater, power_kw: 3.4}
""")
    sr = evaluate(site_factory, text)
    allowed = {cat: a for cat, _, a in sr.boards["test-house/CU1"].demand.parts}
    # 3400 W / 230 V = 14.783 A at 100 % (common UK practice)
    assert allowed["storage-heating"] == pytest.approx(14.783, abs=0.0005)


def test_heat_pump_starting_current_against_the_instantaneous_band(site_factory):
    """BS EN 60898-1 Table 7: a type B device may trip instantaneously from 3 In; a C from 5 In."""
    hp = """\
- id: "5"
  board: CU1
  name: "Heat pump"
  device: {{kind: mcb, curve: {curve}, rating_a: 20, breaking_ka: 6}}
  cable: {{kind: twin-earth-70, csa_mm2: 4, cpc_mm2: 1.5, length_m: 10, method: C}}
  loads:
    - {{id: hp, kind: heat-pump, rated_current_a: 17.5, starting_current_a: 65}}
"""
    sr = evaluate(site_factory, house(hp.format(curve="B")))
    dc = sr.circuits["test-house/CU1/5"].check("design-current")
    assert dc.status == "warn" and "60 A" in dc.detail      # 65 A ≥ 3 × 20 A = 60 A
    sr = evaluate(site_factory, house(hp.format(curve="C")))
    assert sr.circuits["test-house/CU1/5"].check("design-current").status == "pass"   # 65 A < 5 × 20 A
