"""The four checks on measurements (SPEC §7): measured-zs, insulation-resistance, rcd-operation,
continuity — through the whole evaluation of a site, each expected figure with its source."""
from __future__ import annotations

import json

import pytest

from tests.conftest import MINIMAL
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, WARN
from tracker.checks.site import evaluate_site, explain_circuit
from tracker.cli import main
from tracker.loading import load_estate

MEASURED = ("measured-zs", "insulation-resistance", "rcd-operation", "continuity")


def _result(site_factory, reading: str, site_text: str = MINIMAL, ref: str = "CU1/1", extra: str = ""):
    text = site_text + f"""\
inspections:
  - date: 2026-03-11
    by: "A. Tester"
    kind: periodic
{extra}    results:
      - {{ref: {ref}, {reading}}}
"""
    estate = load_estate(site_factory(text))
    assert estate.errors == [], estate.errors
    sr = evaluate_site(estate.sites["flat-1"])
    return sr, explain_circuit(sr.circuits[f"flat-1/{ref}"])


def _check(site_factory, reading, check_id, **kw):
    _, r = _result(site_factory, reading, **kw)
    return r.check(check_id)


MCB = MINIMAL.replace("{kind: rcbo, curve: B, rating_a: 20, breaking_ka: 6}\n    rcd_ma: 30",
                      "{kind: mcb, curve: B, rating_a: 20, breaking_ka: 6}")


# -- nothing measured ---------------------------------------------------------------------

def test_nothing_measured_is_not_assessed_and_leaves_the_circuit_as_designed(site_factory):
    estate = load_estate(site_factory(MINIMAL))
    r = evaluate_site(estate.sites["flat-1"]).circuits["flat-1/CU1/1"]
    for check_id in MEASURED:
        c = r.check(check_id)
        assert c.status == NOT_ASSESSED and c.value is None
    assert r.status == PASS   # the design checks all pass on MINIMAL


# -- measured-zs ------------------------------------------------------------------------

def test_measured_zs_within_0_8_of_the_table(site_factory):
    # B20, Table 41.3: 2.19 Ω (0.95 × 230 / 100 A = 2.185 Ω); 0.8 × 2.185 = 1.748 Ω (the 0.8 rule,
    # common practice)
    c = _check(site_factory, "zs_ohm: 0.80", "measured-zs", site_text=MCB)
    assert c.status == PASS and c.limit == pytest.approx(1.748, abs=0.005)
    assert "0.8 rule" in c.detail


def test_measured_zs_over_the_table_fails(site_factory):
    # 2.30 Ω > 2.19 Ω (Table 41.3, B20) already at the test temperature: certain
    c = _check(site_factory, "zs_ohm: 2.30", "measured-zs", site_text=MCB)
    assert c.status == FAIL and "411.4.4" in c.detail


def test_measured_zs_over_the_table_with_an_rcd_relies_on_it(site_factory):
    # 50 V / 30 mA = 1667 Ω (Table 41.5)
    c = _check(site_factory, "zs_ohm: 2.30", "measured-zs")
    assert c.status == WARN and c.limit == pytest.approx(1666.7, abs=0.1)


def test_between_0_8_and_the_table_the_appendix_3_correction_decides(site_factory):
    # Ze 0.35 Ω stays; the circuit's part warms from 20 to 70 °C by 1.2 (1 + 0.004 × 50, common
    # practice): 1.85 → 0.35 + 1.50 × 1.2 = 2.15 Ω ≤ 2.19 Ω; 2.00 → 0.35 + 1.65 × 1.2 = 2.33 Ω > 2.19 Ω
    ok = _check(site_factory, "zs_ohm: 1.85", "measured-zs", site_text=MCB)
    assert ok.status == PASS and "Appendix 3" in ok.detail
    bad = _check(site_factory, "zs_ohm: 2.00", "measured-zs", site_text=MCB)
    assert bad.status == FAIL and "Appendix 3" in bad.detail


def test_between_without_ze_is_not_assessed(site_factory):
    no_ze = MCB.replace("  ze_ohm: 0.35\n", "")
    c = _check(site_factory, "zs_ohm: 1.85", "measured-zs", site_text=no_ze)
    assert c.status == NOT_ASSESSED and "Ze is needed" in c.detail


def test_zs_below_ze_is_an_implausible_record(site_factory):
    c = _check(site_factory, "zs_ohm: 0.30", "measured-zs", site_text=MCB, extra="    ze_ohm: 0.35\n")
    assert c.status == NOT_ASSESSED and "implausible" in c.detail


# -- insulation-resistance -------------------------------------------------------------------

@pytest.mark.parametrize("reading, status", [
    ("ir_mohm: 200, ir_test_v: 500", PASS),     # Table 64: ≥ 1.0 MΩ at 500 V
    ("ir_mohm: 1.0, ir_test_v: 500", PASS),     # the minimum itself
    ("ir_mohm: 0.8, ir_test_v: 500", FAIL),     # below 1.0 MΩ
    ("ir_mohm: 50", PASS),                      # test voltage not recorded: the row's 500 V taken
    ("ir_mohm: 5, ir_test_v: 250", WARN),       # 643.3.3's reduced 250 V: the minimum stays 1.0 MΩ
    ("ir_mohm: 0.7, ir_test_v: 250", FAIL),
    ("ir_mohm: 5, ir_test_v: 100", NOT_ASSESSED),   # not a Table 64 test voltage
])
def test_insulation_resistance_against_table_64(site_factory, reading, status):
    c = _check(site_factory, reading, "insulation-resistance")
    assert c.status == status
    assert c.limit == 1.0 and c.unit == "Mohm" and c.compare == ">="


# -- rcd-operation ---------------------------------------------------------------------------

@pytest.mark.parametrize("ms, status", [(24, PASS), (300, PASS), (310, FAIL)])
def test_rcd_time_against_300_ms(site_factory, ms, status):
    # BS EN 61008-1 / 61009-1 general type: ≤ 300 ms at IΔn
    c = _check(site_factory, f"rcd_ms: {ms}", "rcd-operation")
    assert c.status == status and c.limit == 300


def test_rcd_time_without_an_rcd_in_the_model(site_factory):
    c = _check(site_factory, "rcd_ms: 24", "rcd-operation", site_text=MCB)
    assert c.status == NOT_ASSESSED and "rcd_ma" in c.detail


# -- continuity ------------------------------------------------------------------------------

def test_r1_r2_reconciles_with_the_model(site_factory):
    # MINIMAL: 20 m of 2.5/1.5 mm²: 19.51 mΩ/m × 20 m = 0.390 Ω at 20 °C (IEC 60228)
    c = _check(site_factory, "r1_r2_ohm: 0.40", "continuity")
    assert c.status == PASS and "implies 21 m" in c.detail


def test_r1_r2_well_above_the_model_fails_with_both_lengths(site_factory):
    # 0.62 Ω implies 0.62 / 0.01951 = 32 m against the 20 m modelled
    c = _check(site_factory, "r1_r2_ohm: 0.62", "continuity")
    assert c.status == FAIL and "implies 32 m" in c.detail and "20 m modelled" in c.detail


def test_r1_r2_well_below_the_model_warns(site_factory):
    c = _check(site_factory, "r1_r2_ohm: 0.20", "continuity")
    assert c.status == WARN and "implies 10 m" in c.detail


RING = MINIMAL.replace("    name: \"Sockets\"\n", "    name: \"Sockets\"\n    topology: ring\n").replace(
    "{kind: rcbo, curve: B, rating_a: 20, breaking_ka: 6}", "{kind: rcbo, curve: B, rating_a: 32, breaking_ka: 6}"
).replace("length_m: 20", "length_m: 46")


def test_a_consistent_ring(site_factory):
    # 46 m of 2.5/1.5 ring: r1 7.41 × 46 = 0.34 Ω, r2 12.1 × 46 = 0.56 Ω end to end (IEC 60228);
    # (0.34 + 0.56) / 4 = 0.225 Ω
    c = _check(site_factory, "r1_r2_ohm: 0.23, ring: {r1_ohm: 0.34, rn_ohm: 0.35, r2_ohm: 0.56}", "continuity",
               site_text=RING)
    assert c.status == PASS, c.detail


def test_ring_ends_that_disagree(site_factory):
    # r1 0.34 against rn 0.41: 0.07 Ω apart, more than the 0.05 Ω of the ring test
    c = _check(site_factory, "r1_r2_ohm: 0.23, ring: {r1_ohm: 0.34, rn_ohm: 0.41, r2_ohm: 0.56}", "continuity",
               site_text=RING)
    assert c.status == FAIL and "differ by 0.070 Ω" in c.detail


def test_ring_r1_r2_not_a_quarter_of_the_ends(site_factory):
    # (0.34 + 0.56) / 4 = 0.225 Ω, but 0.31 Ω measured: a spur or a break
    c = _check(site_factory, "r1_r2_ohm: 0.31, ring: {r1_ohm: 0.34, rn_ohm: 0.34, r2_ohm: 0.56}", "continuity",
               site_text=RING)
    assert c.status == FAIL and "(r1 + r2)/4 = 0.225 Ω" in c.detail


THREE = MINIMAL + """\
  - id: "2"
    board: CU1
    device: {kind: rcbo, curve: B, rating_a: 16, breaking_ka: 6}
    rcd_ma: 30
    cable: {kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 25, method: C}
    loads: [{id: h, kind: fixed, power_kw: 2}]
  - id: "3"
    board: CU1
    device: {kind: rcbo, curve: B, rating_a: 6, breaking_ka: 6}
    rcd_ma: 30
    cable: {kind: twin-earth-70, csa_mm2: 1.5, cpc_mm2: 1, length_m: 15, method: C}
    loads: [{id: l, kind: lighting, power_kw: 0.3}]
"""


def test_identical_readings_on_many_circuits_are_flagged(site_factory):
    text = THREE + """\
inspections:
  - date: 2026-03-11
    by: "A. Tester"
    kind: periodic
    results:
      - {ref: CU1/1, r1_r2_ohm: 0.45, zs_ohm: 0.80}
      - {ref: CU1/2, r1_r2_ohm: 0.45, zs_ohm: 0.80}
      - {ref: CU1/3, r1_r2_ohm: 0.45, zs_ohm: 0.80}
"""
    sr = evaluate_site(load_estate(site_factory(text)).sites["flat-1"])
    c = explain_circuit(sr.circuits["flat-1/CU1/2"]).check("continuity")
    assert c.status in (WARN, FAIL) and "copied record" in c.detail and "CU1/1, CU1/3" in c.detail


def test_the_latest_inspection_that_measured_a_circuit_counts(site_factory):
    text = MINIMAL + """\
inspections:
  - date: 2021-03-11
    by: "A. Tester"
    kind: periodic
    results: [{ref: CU1/1, ir_mohm: 0.5, ir_test_v: 500}]
  - date: 2026-03-11
    by: "B. Tester"
    kind: periodic
    results: [{ref: CU1/1, ir_mohm: 120, ir_test_v: 500}]
"""
    sr = evaluate_site(load_estate(site_factory(text)).sites["flat-1"])
    c = explain_circuit(sr.circuits["flat-1/CU1/1"]).check("insulation-resistance")
    assert c.status == PASS and "2026-03-11" in c.detail


# -- through the command line ----------------------------------------------------------------

def test_a_failing_reading_fails_the_circuit_with_a_suggested_code(site_factory, capsys):
    text = MCB + """\
inspections:
  - date: 2026-03-11
    by: "A. Tester"
    kind: periodic
    results: [{ref: CU1/1, zs_ohm: 2.30, ir_mohm: 0.4, ir_test_v: 500}]
"""
    code = main(["check", str(site_factory(text)), "--json"])
    doc = json.loads(capsys.readouterr().out)
    (circuit,) = doc["circuits"]
    assert code == 1 and circuit["status"] == FAIL
    by_id = {c["id"]: c["status"] for c in circuit["checks"]}
    assert by_id["measured-zs"] == FAIL and by_id["insulation-resistance"] == FAIL
    assert [(s["check"], s["code"]) for s in circuit["suggested_codes"]] == [
        ("measured-zs", "C2"), ("insulation-resistance", "C2")]
    assert all("suggestion" in s["status"] for s in circuit["suggested_codes"])
