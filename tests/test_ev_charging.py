"""`ev-charging` (BS 7671:2018+A2 Section 722): each requirement with its clause, on an invented
house with a 32 A charge point on the drive. Clause texts as quoted by public secondary sources
(tracker/data/ev_charging.yaml)."""
from __future__ import annotations

import pytest

from tests.upgrade_sites import charger, evaluate, house

REF = "test-house/CU1/3"


def ev(site_factory, text):
    sr = evaluate(site_factory, text)
    return sr.circuits[REF].check("ev-charging"), sr


def test_only_circuits_with_a_charge_point_get_the_check(site_factory):
    sr = evaluate(site_factory, house(charger()))
    assert sr.circuits["test-house/CU1/1"].check("ev-charging") is None
    assert sr.circuits[REF].check("ev-charging") is not None


# 722.411.4.1: outdoors on TN-C-S (PME), a permitted measure or no PME terminal.
@pytest.mark.parametrize("measure, status", [
    ("installation-electrode", "pass"),   # 722.411.4.1(ii): electrode limits the rise to 70 V rms
    ("open-pen-device", "pass"),          # 722.411.4.1(iii)/(iv): open-PEN disconnection within 5 s
    ("balanced-three-phase", "warn"),     # 722.411.4.1(i): permitted by +A2, balance hard to hold
    ("none", "fail"),                     # nothing in place: the open-PEN hazard remains
    (None, "not-assessed"),               # not recorded: never a pass
])
def test_outdoor_charge_point_on_pme_with_each_measure(site_factory, measure, status):
    check, _ = ev(site_factory, house(charger(measure=measure)))
    assert check.status == status, check.detail
    assert "722.411.4.1" in check.detail


def test_tt_electrode_needs_its_resistance_and_is_checked_as_tt(site_factory):
    text = house(charger(measure="tt-electrode") + "  electrode_ohm: 80\n")
    check, sr = ev(site_factory, text)
    assert check.status == "pass", check.detail
    fl = sr.circuits[REF].check("fault-loop")
    # 411.5.3: RA × IΔn = 80 Ω × 0.030 A = 2.4 V ≤ 50 V (the charge point's own electrode, TT)
    assert fl.unit == "V" and fl.value == pytest.approx(2.4) and fl.status == "pass"


def test_a_plain_30_ma_rcd_outdoors_on_pme_never_passes(site_factory):
    """The case of the issue: 32 A outdoor charge point, PME, a 30 mA RCD and nothing else recorded."""
    text = house(charger(measure=None).replace("  rcd_type: B\n", "").replace("  rcd_all_poles: true\n", ""))
    check, sr = ev(site_factory, text)
    assert check.status == "not-assessed"
    for key in ("earthing_measure", "rcd_type", "rcd_all_poles"):
        assert key in check.detail
    assert sr.circuits[REF].status != "pass"


def test_indoor_charge_point_needs_no_measure(site_factory):
    check, _ = ev(site_factory, house(charger(measure=None, location="garage")))
    assert check.status == "pass", check.detail


def test_tn_s_supply_has_no_pme_terminal(site_factory):
    check, _ = ev(site_factory, house(charger(measure=None), system="TN-S"))
    assert check.status == "pass", check.detail


# 722.531.3.101: type B, or type A/F with 6 mA DC fault detection; all live conductors broken.
@pytest.mark.parametrize("rcd_type, dc, status", [
    ("B", None, "pass"),
    ("A", "true", "pass"),
    ("F", "true", "pass"),
    ("A", "false", "fail"),
    ("A", None, "not-assessed"),
    ("AC", None, "fail"),
    ("AC", "true", "fail"),
])
def test_rcd_types(site_factory, rcd_type, dc, status):
    extra = f"  dc_fault_detection: {dc}\n" if dc else ""
    check, _ = ev(site_factory, house(charger(rcd_type=rcd_type) + extra))
    assert check.status == status, check.detail
    assert "722.531.3.101" in check.detail


def test_single_pole_rcd_fails(site_factory):
    check, _ = ev(site_factory, house(charger(all_poles="false")))
    assert check.status == "fail" and "every live conductor" in check.detail


def test_time_delayed_rcd_gives_no_protection_to_a_charge_point(site_factory):
    check, sr = ev(site_factory, house(charger() + "  rcd_delay: S\n"))
    assert check.status == "fail"
    assert sr.circuits[REF].check("rcd").status == "fail"   # 415.1.1: an S type is no additional protection


def test_shared_circuit_fails(site_factory):
    text = house(charger() + "    - {id: lamp, kind: lighting, power_kw: 0.1}\n")
    check, _ = ev(site_factory, text)
    assert check.status == "fail" and "dedicated" in check.detail


def test_full_load_no_diversity(site_factory):
    _, sr = ev(site_factory, house(charger()))
    board = sr.boards["test-house/CU1"]
    # 722.311: the 32 A charge point at 100 %
    assert dict((cat, allowed) for cat, _, allowed in board.demand.parts)["ev-charging"] == pytest.approx(32.0)


def test_load_control_is_what_the_board_counts(site_factory):
    text = house(charger().replace("current_a: 32,", "current_a: 32, load_control_a: 16,"))
    check, sr = ev(site_factory, text)
    board = sr.boards["test-house/CU1"]
    # 722.311: diversity allowed where a load control is fitted: 16 A counted, circuit still at 32 A
    assert dict((cat, allowed) for cat, _, allowed in board.demand.parts)["ev-charging"] == pytest.approx(16.0)
    assert sr.circuits[REF].ib_a == pytest.approx(32.0)
    assert check.status == "pass"


def test_failing_requirement_gives_a_fittable_remedy(site_factory):
    from tracker.checks import remedy
    _, sr = ev(site_factory, house(charger(rcd_type="A") + "  dc_fault_detection: false\n"))
    fix = remedy.find(sr.circuits[REF])
    assert "type B" in fix["text"]
