"""Branches of the checks that the demo estate does not reach, each on a small invented site,
against the published table value or rule it applies (cited beside each expected figure)."""
from __future__ import annotations

import pytest

from tracker.checks.capacity import CapacityWorking
from tracker.checks.cpc_adiabatic import CpcAdiabaticWorking
from tracker.checks.site import evaluate_site
from tracker.loading import load_estate


def _site(supply: str, circuit: str, board_extra: str = ""):
    return f"""\
site:
  name: "Branch test"
supply:
{supply}
boards:
  - id: CU1
    fed_by: supply
    main_switch_a: 100
{board_extra}
circuits:
  - id: "1"
    board: CU1
    name: "Under test"
{circuit}
"""


TN = """\
  system: TN-C-S
  ze_ohm: 0.35
  pfc_ka: 1.6
"""


def _result(site_factory, text: str):
    root = site_factory(text)
    site = next(iter(load_estate(root).sites.values()))
    return next(iter(evaluate_site(site).circuits.values()))


def _radial(device: str, cable: str, environment: str = "", loads: str = "{id: heater, kind: fixed, current_a: 10}",
            rcd: str = "rcd_ma: 30") -> str:
    return f"""\
    device: {device}
    {rcd}
    cable: {cable}
    environment: {{{environment}}}
    loads:
      - {loads}
"""


# -- capacity: thermal insulation (BS 7671:2018 523.9 and Table 52.2) ---------------------------

def test_insulation_under_half_a_metre_takes_table_52_2(site_factory):
    # 2.5 mm² flat twin and cpc clipped direct (method C): It 27 A (Table 4D5, seen); 100 mm
    # totally surrounded: Ci 0.78 (Table 52.2, seen): Iz = 27 × 0.78 = 21.06 A ≥ In 20 A.
    r = _result(site_factory, _site(TN, _radial("{kind: mcb, curve: B, rating_a: 20, breaking_ka: 6}",
                                                "{kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 10, "
                                                "method: C}", "insulation_mm: 100")))
    cap = r.check("capacity")
    assert cap.status == "pass"
    assert cap.value == pytest.approx(21.06)
    assert r.working.of(CapacityWorking).ci == 0.78
    assert "Table 52.2" in cap.detail


def test_insulation_over_half_a_metre_halves_the_clipped_rating(site_factory):
    # 523.9: surrounded over more than 0.5 m, 0.5 × the clipped-direct rating: 27 A × 0.5 = 13.5 A
    # (Table 4D5 method C, seen), below In 16 A: fails.
    r = _result(site_factory, _site(TN, _radial("{kind: mcb, curve: B, rating_a: 16, breaking_ka: 6}",
                                                "{kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 10, "
                                                "method: C}", "insulation_mm: 800")))
    cap = r.check("capacity")
    assert cap.status == "fail"
    assert cap.value == pytest.approx(13.5) and cap.limit == 16
    assert r.working.of(CapacityWorking).ci == 0.5


def test_insulation_of_a_conductor_over_10_mm2_takes_half(site_factory):
    # Table 52.2 covers conductors up to 10 mm²; beyond, 523.9's 0.5 (conservative): 16 mm² clipped
    # direct 85 A (Table 4D5, seen) × 0.5 = 42.5 A, even over 100 mm.
    r = _result(site_factory, _site(TN, _radial("{kind: mcb, curve: B, rating_a: 40, breaking_ka: 6}",
                                                "{kind: twin-earth-70, csa_mm2: 16, cpc_mm2: 6, length_m: 10, "
                                                "method: C}", "insulation_mm: 100")))
    cap = r.check("capacity")
    assert cap.value == pytest.approx(42.5) and cap.status == "pass"
    assert "523.9" in cap.detail


# -- capacity: ambient and grouping beyond what the tables give ----------------------------------

def test_ambient_at_the_conductor_limit_leaves_no_capacity(site_factory):
    # At 70 °C ambient a 70 °C conductor has no temperature rise left: Ca = √((70 − 70)/(70 − 30)) = 0
    # (IEC 60364-5-52 B.52.14 formula, which reproduces Table 4B1 above 30 °C).
    r = _result(site_factory, _site(TN, _radial("{kind: mcb, curve: B, rating_a: 16, breaking_ka: 6}",
                                                "{kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 10, "
                                                "method: C}", "ambient_c: 70")))
    cap = r.check("capacity")
    assert cap.status == "fail" and cap.value == 0.0
    assert "at or above the conductor limit" in cap.detail
    assert r.working.of(CapacityWorking).ca == 0.0


def test_buried_cables_grouped_are_not_assessed(site_factory):
    # Grouping of cables in the ground is Tables 4B4/4B5, which the catalogue does not hold: not
    # assessed (never passed on the single-cable rating).
    r = _result(site_factory, _site(TN, _radial("{kind: mcb, curve: C, rating_a: 32, breaking_ka: 10}",
                                                "{kind: swa-90, csa_mm2: 6, cpc_mm2: 6, length_m: 30, method: D}",
                                                "grouped_with: 2")))
    cap = r.check("capacity")
    assert cap.status == "not-assessed"
    assert "4B4" in cap.detail
    assert r.iz_a is None


def test_more_circuits_than_the_grouping_table_are_not_assessed(site_factory):
    # Table 4C1 (bunched) ends at 20 circuits: 21 is beyond it, so no factor is read.
    r = _result(site_factory, _site(TN, _radial("{kind: mcb, curve: B, rating_a: 16, breaking_ka: 6}",
                                                "{kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 10, "
                                                "method: C}", "grouped_with: 21, arrangement: bunched")))
    cap = r.check("capacity")
    assert cap.status == "not-assessed"
    assert "beyond Table 4C1 (up to 20)" in cap.detail


# -- fault-loop on TT (BS 7671:2018 411.5) --------------------------------------------------------

def test_tt_with_an_electrode_over_200_ohm_warns(site_factory):
    # 411.5.3: RA × IΔn ≤ 50 V: 250 Ω × 0.03 A = 7.5 V passes, but RA over 200 Ω may not be stable
    # (Table 41.5, note 2): a warning.
    supply = "  system: TT\n  ze_ohm: 250\n  electrode_ohm: 250\n  pfc_ka: 1\n"
    r = _result(site_factory, _site(supply, _radial("{kind: rcbo, curve: B, rating_a: 16, breaking_ka: 6}",
                                                    "{kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 10, "
                                                    "method: C}")))
    fl = r.check("fault-loop")
    assert fl.status == "warn"
    assert fl.value == pytest.approx(7.5) and fl.limit == 50 and fl.unit == "V"
    assert "200 Ω" in fl.detail


def test_tt_without_an_rcd_relies_on_the_device_alone(site_factory):
    # 411.5.4: with no RCD the overcurrent device must disconnect: a B16's maximum Zs is 2.73 Ω
    # (Table 41.3, seen); Ze 21 Ω alone is far over it: fails.
    supply = "  system: TT\n  ze_ohm: 21\n  pfc_ka: 1\n"
    r = _result(site_factory, _site(supply, _radial("{kind: mcb, curve: B, rating_a: 16, breaking_ka: 6}",
                                                    "{kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 10, "
                                                    "method: C}", rcd="")))
    fl = r.check("fault-loop")
    assert fl.status == "fail"
    assert fl.limit == pytest.approx(2.73, abs=0.005)
    assert fl.value > 21
    assert "TT system with no RCD" in fl.detail


# -- cpc-adiabatic: the RCD's time at IΔn (BS EN 61008/61009) --------------------------------------

def test_an_earth_fault_between_idn_and_5_idn_takes_the_rcds_300_ms(site_factory):
    # TT, Ze 400 Ω: an earth fault current of about 230 / 400 = 0.57 A is below every breaker's
    # instantaneous band, and between IΔn 0.3 A and 2 IΔn 0.6 A of a 300 mA RCD: the RCD's maximum
    # break time at IΔn, 300 ms (BS EN 61008-1 / 61009-1; from 2 IΔn it is 150 ms) is the
    # disconnection time.
    supply = "  system: TT\n  ze_ohm: 400\n  electrode_ohm: 150\n  pfc_ka: 1\n"
    r = _result(site_factory, _site(supply, _radial("{kind: mcb, curve: B, rating_a: 16, breaking_ka: 6}",
                                                    "{kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 10, "
                                                    "method: C}", rcd="rcd_ma: 300")))
    rec = r.working.of(CpcAdiabaticWorking)
    assert rec.t_disconnect_s == 0.3
    cpc = r.check("cpc-adiabatic")
    assert cpc.status == "pass"
    assert "0.3 s" in cpc.detail
