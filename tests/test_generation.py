"""`generation` (551.7, Section 712, 530.3.201) on circuits with PV inverters or batteries, and
RCD data (types, delays) in the existing checks."""
from __future__ import annotations

import pytest

from tests.upgrade_sites import evaluate, house

REF = "test-house/CU1/4"


def pv_circuit(inverter_a=16.0, rating_a=20, device_bi="true", rcd="", isolation="true", loads="") -> str:
    text = f"""\
- id: "4"
  board: CU1
  name: "PV inverter"
  device: {{kind: mcb, curve: B, rating_a: {rating_a}, breaking_ka: 6, bidirectional: {device_bi}}}
{rcd}  cable: {{kind: twin-earth-70, csa_mm2: 4, cpc_mm2: 1.5, length_m: 15, method: C}}
  sources:
    - {{id: roof, kind: pv, inverter_a: {inverter_a}, isolation: {isolation}}}
"""
    return text + loads


def gen(site_factory, text):
    sr = evaluate(site_factory, text)
    return sr.circuits[REF].check("generation"), sr


def test_dedicated_circuit_rated_for_the_inverter(site_factory):
    check, sr = gen(site_factory, house(pv_circuit()))
    assert check.status == "pass", check.detail
    # 551.7.2: 16 A inverter output ≤ In 20 A; Ib of the circuit is the inverter's output
    assert (check.value, check.limit) == (16.0, 20.0)
    assert sr.circuits[REF].ib_a == pytest.approx(16.0)


def test_device_smaller_than_the_inverter_output_fails(site_factory):
    # 551.7.2: a 21.7 A (5 kW / 230 V) inverter on a 16 A device
    check, _ = gen(site_factory, house(pv_circuit(inverter_a=21.7, rating_a=16)))
    assert check.status == "fail" and "551.7.2" in check.detail


def test_source_on_a_circuit_with_loads_needs_iz_for_in_plus_source(site_factory):
    # 551.7.2(i): a 20 A radial in 4 mm² method C (Iz 37 A, BS 7671 Table 4D5, REFERENCE-NOTES
    # "code" status) with a 16 A inverter: 20 + 16 = 36 A ≤ 37 A passes; with a 32 A device
    # 32 + 16 = 48 A > 37 A fails.
    loads = "  loads:\n    - {id: heater, kind: space-heater, power_kw: 2}\n"
    check, _ = gen(site_factory, house(pv_circuit(loads=loads)))
    assert check.status == "pass" and check.value == pytest.approx(36.0) and check.limit == pytest.approx(37.0)
    check, _ = gen(site_factory, house(pv_circuit(rating_a=32, loads=loads)))
    assert check.status == "fail" and check.value == pytest.approx(48.0)


def test_unidirectional_device_with_a_source_on_its_load_side_fails(site_factory):
    check, _ = gen(site_factory, house(pv_circuit(device_bi="false")))
    assert check.status == "fail" and "530.3.201" in check.detail


def test_unidirectional_rcd_upstream_fails_and_unknown_is_not_assessed(site_factory):
    rcd = "  rcd_ma: 30\n  rcd_type: A\n  rcd_bidirectional: false\n"
    check, _ = gen(site_factory, house(pv_circuit(rcd=rcd)))
    assert check.status == "fail" and "RCD" in check.detail
    check, _ = gen(site_factory, house(pv_circuit(rcd="  rcd_ma: 30\n")))
    assert check.status == "not-assessed" and "rcd_bidirectional" in check.detail


def test_isolation(site_factory):
    check, _ = gen(site_factory, house(pv_circuit(isolation="false")))
    assert check.status == "fail" and "isolat" in check.detail
    text = house(pv_circuit()).replace(", isolation: true", "")
    check, _ = gen(site_factory, text)
    assert check.status == "not-assessed" and "isolation" in check.detail


def test_battery_counts_in_demand_pv_does_not(site_factory):
    _, sr = gen(site_factory, house(pv_circuit()))
    parts = {cat for cat, _, _ in sr.boards["test-house/CU1"].demand.parts}
    assert "storage-charging" not in parts
    _, sr = gen(site_factory, house(pv_circuit().replace("kind: pv", "kind: battery")))
    allowed = {cat: a for cat, _, a in sr.boards["test-house/CU1"].demand.parts}
    assert allowed["storage-charging"] == pytest.approx(16.0)


# RCD data in the existing checks -----------------------------------------------------------

def test_type_ac_rcd_on_sockets_draws_a_caution(site_factory):
    # 531.3.3 (+A2): type AC only for fixed equipment known to draw no DC component
    sr = evaluate(site_factory, house().replace("rcd_type: A", "rcd_type: AC"))
    rcd = sr.circuits["test-house/CU1/1"].check("rcd")
    assert rcd.status == "warn" and "type AC" in rcd.detail


def test_time_delayed_rcd_times_in_the_adiabatic_check(site_factory):
    """A 100 mA type S RCD at the board is the only RCD of a cooker circuit on a 32 A BS 88-3
    fuse. Earth fault current: Zs = 0.35 + (3.08 + 7.41) mΩ/m × 8 m × 1.20 = 0.4507 Ω (IEC 60228
    R20), I = 230 / 0.4507 = 510 A ≥ 5 IΔn. The fuse's time is only bounded by its 0.4 s table
    point; the RCD decides: a type S at 5 IΔn within 150 ms, a general one within 40 ms (BS EN
    61008-1). S ≥ √(510² × 0.15)/115 = 1.72 mm² and √(510² × 0.04)/115 = 0.89 mm² (k 115, Table 54.3)."""
    fuse = ("device: {kind: mcb, curve: B, rating_a: 32, breaking_ka: 6}", "device: {kind: fuse-domestic-cartridge, rating_a: 32}")
    base = house().replace(*fuse)
    for extra, t, s_min in (("    rcd_ma: 100\n    rcd_delay: S\n", 0.15, 1.72), ("    rcd_ma: 100\n", 0.04, 0.89)):
        sr = evaluate(site_factory, base.replace("    main_switch_a: 100\n", "    main_switch_a: 100\n" + extra))
        r = sr.circuits["test-house/CU1/2"]
        assert r.working["t_disconnect_s"] == pytest.approx(t)
        assert r.check("cpc-adiabatic").limit == pytest.approx(s_min, abs=0.01)


def test_rcd_break_times_from_the_product_standard():
    from tracker.checks.protection import rcd_break_time_s
    # BS EN 61008-1 / 61009-1: general 300 / 150 / 40 ms, type S 500 / 200 / 150 ms at 1 / 2 / 5 IΔn
    assert rcd_break_time_s(30, False, 0.030)[:3:2] == (0.3, 1.0)
    assert rcd_break_time_s(30, False, 0.060)[0] == 0.15
    assert rcd_break_time_s(30, False, 0.150)[0] == 0.04
    assert rcd_break_time_s(100, True, 0.100)[0] == 0.5
    assert rcd_break_time_s(100, True, 0.200)[0] == 0.2
    assert rcd_break_time_s(100, True, 0.500)[0] == 0.15
    assert rcd_break_time_s(30, False, 0.010)[0] is None   # below IΔn it need not trip


def test_measured_rcd_time_against_the_recorded_delay(site_factory):
    """rcd-operation reads rcd_delay from the RCD data: 400 ms at IΔn is within a type S's 130–500 ms
    but beyond a general RCD's 300 ms (BS EN 61008-1 / 61009-1)."""
    inspection = """\
inspections:
  - date: 2026-03-11
    by: "A. Tester"
    kind: periodic
    results:
      - {ref: CU1/1, rcd_ms: 400}
"""
    for delay, status in (("S", "pass"), ("general", "fail")):
        text = house().replace("    rcd_type: A\n", f"    rcd_type: A\n    rcd_delay: {delay}\n", 1) + inspection
        sr = evaluate(site_factory, text)
        assert sr.circuits["test-house/CU1/1"].check("rcd-operation").status == status
