"""Three-phase: the published three-phase table values held in the catalogue, the engine's
three-phase methods against worked examples and physics, and the loader's phase errors."""
from __future__ import annotations

import cmath
import math

import pytest

from tracker import catalogue
from tracker.engine import three_phase as tp
from tracker.loading import load_estate
from tests.conftest import MINIMAL


# -- published table values -----------------------------------------------------------------

# BS 7671:2018 Table 4E4A, one three-core or four-core cable, three-phase a.c., columns 3 (C),
# 5 (D), 7 (E); seen in two public reproductions of the table that agree.
TABLE_4E4A_THREE_PHASE = {
    1.5: (23, 21, 25), 2.5: (31, 28, 33), 4: (42, 36, 44), 6: (53, 44, 56), 10: (73, 58, 78),
    16: (94, 75, 99), 25: (124, 96, 131), 35: (154, 115, 162), 50: (187, 135, 197),
    70: (238, 167, 251), 95: (289, 197, 304), 120: (335, 223, 353),
}
# BS 7671:2018 Table 4E4B column 4, three- or four-core cable, three-phase a.c., mV/A/m (z from
# 25 mm²); seen in two public reproductions.
TABLE_4E4B_THREE_PHASE = {1.5: 27, 2.5: 16, 4: 10, 6: 6.8, 10: 4.0, 16: 2.5, 25: 1.65, 35: 1.15,
                          50: 0.87, 70: 0.60, 95: 0.45, 120: 0.37}
# BS 7671:2018 Table 4D1A, 3 or 4 single-core cables, three-phase a.c.: column 3 (method A) and
# column 5 (method B), seen in public reproductions; method C from IEC 60364-5-52:2009 Table B.52.4
# column C, three loaded conductors (seen; the catalogue keeps the lower IEC column).
TABLE_4D1A_THREE_PHASE = {
    1.5: (13.5, 15.5, 17.5), 2.5: (18, 21, 24), 4: (24, 28, 32), 6: (31, 36, 41), 10: (42, 50, 57),
    16: (56, 68, 76), 25: (73, 89, 96), 35: (89, 110, 119),
}
# BS 7671:2018 Table 4E4A two-core, single-phase columns 2, 4, 6 (seen in the same reproductions).
TABLE_4E4A_TWO_CORE = {1.5: (27, 25, 29), 16: (110, 91, 115), 120: (392, 271, 410)}


@pytest.mark.parametrize("csa", sorted(TABLE_4E4A_THREE_PHASE))
def test_swa_three_phase_ratings(csa):
    kind = catalogue.cable_kind("swa-90")
    for method, expected in zip("CDE", TABLE_4E4A_THREE_PHASE[csa]):
        value = kind.rating(csa, method, phases=3)
        assert value.value == expected and value.status == "seen"


def test_swa_two_core_ratings_unchanged_and_confirmed():
    kind = catalogue.cable_kind("swa-90")
    for csa, row in TABLE_4E4A_TWO_CORE.items():
        for method, expected in zip("CDE", row):
            assert kind.rating(csa, method) == catalogue.Value(expected, "seen")


@pytest.mark.parametrize("csa", sorted(TABLE_4E4B_THREE_PHASE))
def test_swa_three_phase_voltage_drop(csa):
    value = catalogue.cable_kind("swa-90").voltage_drop(csa, phases=3)
    assert value.value == TABLE_4E4B_THREE_PHASE[csa] and value.status == "seen"


@pytest.mark.parametrize("csa", sorted(TABLE_4D1A_THREE_PHASE))
def test_singles_three_phase_ratings(csa):
    kind = catalogue.cable_kind("singles-70")
    for method, expected in zip("ABC", TABLE_4D1A_THREE_PHASE[csa]):
        assert kind.rating(csa, method, phases=3).value == expected


@pytest.mark.parametrize("kind_name,multiplier", [("swa-90", 1.28), ("singles-70", 1.20)])
def test_three_phase_mv_per_a_m_is_root3_r20_up_to_16(kind_name, multiplier):
    """Physics check on the three-phase columns: for a balanced load the line-to-line drop per
    ampere per metre is √3 × R (resistance at the operating temperature; reactance negligible up
    to 16 mm²). R20 from IEC 60228 (seen); multiplier 1 + 0.004 (θ − 20) (common practice)."""
    kind = catalogue.cable_kind(kind_name)
    for csa in (1.5, 2.5, 4, 6, 10, 16):
        r20 = catalogue.conductor_resistance(csa).value
        held = kind.voltage_drop(csa, phases=3).value
        assert held == pytest.approx(math.sqrt(3) * r20 * multiplier, rel=0.05)


def test_flat_twin_has_no_three_phase_columns():
    # A flat twin-and-cpc cable has two cores (BS 7671 Table 4D5 is single-phase only).
    kind = catalogue.cable_kind("twin-earth-70")
    assert not kind.three_phase and kind.rating(2.5, "C", phases=3) is None


def test_table_4aa_rows():
    # BS 7671:2018 Appendix 4 Table 4Aa (seen in public reproductions): 0–15 % 1.0 on line current;
    # >15–33 % 0.86 on line; >33–45 % 0.86 on neutral; >45 % 1.0 on neutral.
    rows = tuple((up, v.value, on) for up, v, on in catalogue.triplen_harmonic_rows())
    assert rows == ((15, 1.0, "line"), (33, 0.86, "line"), (45, 0.86, "neutral"), (None, 1.0, "neutral"))
    assert all(v.status == "seen" for _, v, _ in catalogue.triplen_harmonic_rows())


# -- engine --------------------------------------------------------------------------------

def _rows():
    return tuple((up, v.value, on) for up, v, on in catalogue.triplen_harmonic_rows())


def test_balanced_400v_motor_design_current():
    # Common practice: a balanced three-phase load at 400 V and unity power factor draws about
    # 1.44 A per kW (1000 / (√3 × 400) = 1.443).
    assert tp.balanced_line_current_a(1.0, 400.0) == pytest.approx(1.443, abs=0.001)
    # A 7.5 kW motor at 400 V, pf 0.85 (input power): physics, star per phase — a third of the
    # power at U0 = 400 / √3 in each line: (7500 / 3) / (230.94 × 0.85) = 12.74 A.
    per_phase = (7500 / 3) / (400 / math.sqrt(3) * 0.85)
    assert tp.balanced_line_current_a(7.5, 400.0, 0.85) == pytest.approx(per_phase, rel=1e-9)
    assert per_phase == pytest.approx(12.74, abs=0.01)


def test_three_phase_voltage_drop_worked_example():
    # Worked example published by a cable distributor (public technical page on voltage drop):
    # 100 A per phase over a 150 m route in cable of 1.1 mV/A/m (three-phase) drops
    # 1.1 × 100 × 150 / 1000 = 16.5 V, against 2.5 % of 415 V = 10.5 V in that example.
    drop = tp.voltage_drop_three_phase_v(1.1, 100.0, 150.0)
    assert drop == pytest.approx(16.5)
    assert tp.voltage_drop_pct(drop, 415.0) == pytest.approx(3.976, abs=0.001)


def test_phase_share_of_a_balanced_sub_main_equals_its_line_percentage():
    # Physics: with balanced currents (no neutral current) the line-to-neutral drop is the
    # line-to-line drop / √3, so the percentages of U0 and of U_L agree.
    line = tp.voltage_drop_three_phase_v(2.5, 60.0, 40.0)
    phase = tp.phase_drop_v(2.5, 60.0, 0.0, 40.0)
    assert tp.voltage_drop_pct(phase, 230.94) == pytest.approx(tp.voltage_drop_pct(line, 400.0), rel=1e-4)


def _phasor_neutral(i1, i2, i3):
    """Physics: the neutral carries the phasor sum of three currents 120° apart."""
    a = cmath.exp(2j * math.pi / 3)
    return abs(i1 + i2 * a ** 2 + i3 * a)


@pytest.mark.parametrize("currents", [(10, 10, 10), (10, 0, 0), (40, 30, 20), (63, 12.5, 0), (5, 80, 33)])
def test_neutral_current_of_an_unbalanced_set(currents):
    assert tp.neutral_current_a(*currents) == pytest.approx(_phasor_neutral(*currents), abs=1e-9)


def test_neutral_current_limits():
    # Physics: a balanced set sums to zero; a single loaded line returns all its current.
    assert tp.neutral_current_a(32, 32, 32) == pytest.approx(0.0, abs=1e-9)
    assert tp.neutral_current_a(25, 0, 0) == pytest.approx(25.0)


def test_imbalance():
    # Common practice (largest deviation from the mean, % of the mean): 40/30/20 A → 10/30 = 33.3 %.
    assert tp.imbalance_pct([40, 30, 20]) == pytest.approx(33.33, abs=0.01)
    assert tp.imbalance_pct([16, 16, 16]) == 0.0
    assert tp.imbalance_pct([0, 0, 0]) == 0.0


def test_three_phase_fault_current_by_the_x2_rule():
    # UK guidance (On-Site Guide rule, seen in secondary sources): three-phase PFC ≈ 2 × the
    # measured line-neutral PFC. 8 kA line-neutral → 16 kA three-phase.
    assert tp.three_phase_pfc_from_single_ka(8.0) == pytest.approx(16.0)
    # Physics behind it: Z_line = Z_neutral = Z; line-neutral I = U0 / 2Z, three-phase I = U0 / Z.
    z = 0.02
    assert (230 / z) / (230 / (2 * z)) == pytest.approx(tp.THREE_PHASE_FROM_SINGLE_PHASE_FACTOR)


def test_line_to_line_fault_is_root3_over_2_of_three_phase():
    # Physics: two lines in series across U_L = √3 U0 through 2 Z, against U0 / Z: ratio √3 / 2.
    assert tp.line_to_line_pfc_ka(10.0) == pytest.approx(10.0 * math.sqrt(3) / 2)


def test_harmonic_rating_iec_annex_e_example():
    # IEC 60364-5-52:2009 Annex E worked example (recalled; consistent with Table B.52.4 column C,
    # seen): a 39 A three-phase circuit in four-core PVC cable.
    rows = _rows()
    # 20 % third harmonic: factor 0.86 on the line current → 39 / 0.86 = 45.3 A.
    factor, on = tp.harmonic_rating(20, rows)
    assert (factor, on) == (0.86, "line") and 39 / factor == pytest.approx(45.3, abs=0.1)
    # 40 %: the neutral decides, 39 × 0.4 × 3 = 46.8 A, / 0.86 = 54.4 A.
    factor, on = tp.harmonic_rating(40, rows)
    neutral = tp.triplen_neutral_current_a(39, 40)
    assert on == "neutral" and neutral == pytest.approx(46.8) and neutral / factor == pytest.approx(54.4, abs=0.1)
    # 50 %: 39 × 0.5 × 3 = 58.5 A, factor 1.0.
    factor, on = tp.harmonic_rating(50, rows)
    assert (factor, on) == (1.0, "neutral") and tp.triplen_neutral_current_a(39, 50) == pytest.approx(58.5)
    # Up to 15 %: no reduction (Table 4Aa first row).
    assert tp.harmonic_rating(15, rows) == (1.0, "line")


# -- loading -------------------------------------------------------------------------------

THREE_PHASE_SITE = """\
site:
  name: "Test block"
supply:
  system: TN-C-S
  phases: 3
  u_line_v: 400
  ze_ohm: 0.2
  pfc_ka: 10
  service_fuse_a: 100
boards:
  - id: DB1
    fed_by: supply
    phases: 3
    main_switch_a: 100
  - id: CU1
    fed_by: DB1/2
    main_switch_a: 63
circuits:
  - id: "1"
    board: DB1
    name: "Lift motor"
    phases: 3
    device: {kind: mcb, curve: C, rating_a: 20, breaking_ka: 10}
    cable: {kind: swa-90, csa_mm2: 4, length_m: 25, method: C}
    loads:
      - {id: lift, kind: motor, power_kw: 7.5, power_factor: 0.85}
  - id: "2"
    board: DB1
    name: "Flat 1"
    phase: L1
    feeds: CU1
    device: {kind: mcb, curve: B, rating_a: 63, breaking_ka: 10}
    cable: {kind: swa-90, csa_mm2: 16, length_m: 15, method: C}
  - id: "1"
    board: CU1
    name: "Sockets"
    device: {kind: rcbo, curve: B, rating_a: 32, breaking_ka: 6}
    rcd_ma: 30
    cable: {kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 20, method: C}
    loads:
      - {id: sockets, kind: socket-outlets}
"""


def _errors(root):
    return [str(e) for e in load_estate(root).errors]


def test_three_phase_site_loads(site_factory):
    estate = load_estate(site_factory(THREE_PHASE_SITE))
    assert estate.errors == []
    site = estate.sites["flat-1"]
    assert site.supply.three_phase and site.supply.line_v == 400
    assert site.board("DB1").three_phase and not site.board("CU1").three_phase
    lift, flat = site.circuits[0], site.circuits[1]
    assert lift.three_phase and lift.phase is None
    assert not flat.three_phase and flat.phase == "L1"


def test_line_voltage_defaults_to_root3_u0(site_factory):
    site = load_estate(site_factory(THREE_PHASE_SITE.replace("  u_line_v: 400\n", ""))).sites["flat-1"]
    assert site.supply.line_v == pytest.approx(math.sqrt(3) * 230)  # physics: U_L = √3 U0


def test_phase_errors(site_factory):
    text = (THREE_PHASE_SITE
            .replace("  u_line_v: 400", "  u_line_v: 230")
            .replace("    phase: L1\n", "")
            .replace("    rcd_ma: 30\n", "    rcd_ma: 30\n    phase: L2\n"))
    errs = _errors(site_factory(text))
    assert errs == [
        "flat-1/site.yaml:6:3: supply.u_line_v: 230 V does not match the voltage to earth: "
        "√3 × u0_v 230 V = 398 V",
        "flat-1/site.yaml:27:5: circuits[1]: a single-phase circuit on three-phase board DB1 names the line it "
        "takes: give phase: L1, L2 or L3",
        "flat-1/site.yaml:38:5: circuits[2].phase: board CU1 is single-phase: remove 'phase' (or give the "
        "board phases: 3)",
    ]


def test_three_phase_circuit_on_single_phase_board(site_factory):
    text = MINIMAL.replace('    name: "Sockets"\n', '    name: "Sockets"\n    phases: 3\n')
    errs = _errors(site_factory(text))
    assert errs == [
        "flat-1/site.yaml:16:5: circuits[0].phases: a three-phase circuit on single-phase board CU1 "
        "(give board CU1 phases: 3, or make the circuit single-phase)",
        "flat-1/site.yaml:19:13: circuits[0].cable.kind: twin-earth-70 has no three-phase ratings in the "
        "catalogue (three-phase cable kinds: singles-70, swa-90)",
    ]


def test_three_phase_board_on_single_phase_supply_and_feed(site_factory):
    text = (THREE_PHASE_SITE.replace("  phases: 3\n  u_line_v: 400\n", "")
            .replace("    phases: 3\n    device: {kind: mcb, curve: C", "    device: {kind: mcb, curve: C"))
    text = text.replace("  - id: CU1\n    fed_by: DB1/2\n", "  - id: CU1\n    fed_by: DB1/2\n    phases: 3\n")
    errs = _errors(site_factory(text))
    assert errs == [
        "flat-1/site.yaml:11:5: boards[0].phases: board DB1 is three-phase but the supply is single-phase "
        "(give supply.phases: 3, or make the board single-phase)",
        "flat-1/site.yaml:15:5: boards[1].phases: board CU1 is three-phase but its sub-main DB1/2 is "
        "single-phase (give DB1/2 phases: 3, or make the board single-phase)",
        "flat-1/site.yaml:18:5: circuits[0]: a single-phase circuit on three-phase board DB1 names the line it "
        "takes: give phase: L1, L2 or L3",
        "flat-1/site.yaml:32:5: circuits[2]: a single-phase circuit on three-phase board CU1 names the line it "
        "takes: give phase: L1, L2 or L3",
    ]


def test_schema_rejects_a_fourth_phase(site_factory):
    errs = _errors(site_factory(THREE_PHASE_SITE.replace("phase: L1", "phase: L4")))
    assert errs == ["flat-1/site.yaml:30:5: circuits[1].phase: 'L4' is not a phase (L1, L2, L3)"]


def test_unbalanced_load_needs_a_three_phase_circuit(site_factory):
    text = MINIMAL.replace("      - {id: sockets, kind: socket-outlets}",
                           "      - {id: rig, kind: fixed, phase_currents_a: {L1: 5, L2: 6, L3: 7}}")
    errs = _errors(site_factory(text))
    assert errs == ["flat-1/site.yaml:20:32: circuits[0].loads[0].phase_currents_a: currents per line are for a "
                    "load on a three-phase circuit; this circuit is single-phase (give current_a)"]
