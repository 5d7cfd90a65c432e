"""Voltage drop, resistance, loop impedance and disconnection against published tables and physics."""
from __future__ import annotations

import pytest

from tracker import catalogue
from tracker.engine import adiabatic, disconnection, impedance, voltage_drop


def test_tabulated_mv_per_a_m_agrees_with_conductor_resistance():
    """Physics check: up to 16 mm² the tabulated voltage drop of a two-core circuit (BS 7671
    Table 4D5) equals 2 × R20 × 1.20 of the IEC 60228 conductor (line + neutral at 70 °C),
    within the table's rounding (3 %)."""
    kind = catalogue.cable_kind("twin-earth-70")
    for csa, mv in kind.mv_per_a_m.items():
        r20 = catalogue.conductor_resistance(csa).value
        assert voltage_drop.mv_per_a_m_from_resistance(r20, 1.20) == pytest.approx(mv.value, rel=0.03), csa


def test_armoured_voltage_drop_agrees_with_resistance_at_90c():
    """The recalled Table 4E4B values, up to 50 mm² (where reactance is small), against
    2 × R20 × 1.28 (90 °C): a physics check on values held as 'recalled'."""
    kind = catalogue.cable_kind("swa-90")
    for csa, mv in kind.mv_per_a_m.items():
        if csa > 50:
            continue
        r20 = catalogue.conductor_resistance(csa).value
        assert voltage_drop.mv_per_a_m_from_resistance(r20, 1.28) == pytest.approx(mv.value, rel=0.035), csa


def test_published_ring_voltage_drop_example():
    # Common practice worked example: 40 m of 2.5 mm² ring at 32 A drops 40 × 18 × 32 / 1000 / 4 = 5.76 V.
    assert voltage_drop.voltage_drop_v(18, 32, 40, ring=True) == pytest.approx(5.76)
    assert voltage_drop.voltage_drop_v(18, 32, 40) == pytest.approx(23.04)


def test_voltage_drop_limits_appendix_4():
    # BS 7671 Appendix 4 Table 4Ab: public supply 3 % lighting / 5 % other (6.9 V / 11.5 V at 230 V);
    # private supply 6 % / 8 %.
    assert voltage_drop.voltage_drop_limit_pct(True) == 3.0
    assert voltage_drop.voltage_drop_limit_pct(False) == 5.0
    assert voltage_drop.voltage_drop_limit_pct(True, private_supply=True) == 6.0
    assert voltage_drop.voltage_drop_limit_pct(False, private_supply=True) == 8.0
    assert 230 * voltage_drop.voltage_drop_limit_pct(True) / 100 == pytest.approx(6.9)


def test_resistance_multipliers():
    # Common practice: 1 + 0.004 (θ − 20) → 1.20 at 70 °C, 1.28 at 90 °C. Physics: R70/R20 =
    # (234.5 + 70)/(234.5 + 20) = 1.196 for copper (β = 234.5 °C, IEC 60228), i.e. α20 = 1/254.5.
    assert impedance.resistance_multiplier(70) == pytest.approx(1.20)
    assert impedance.resistance_multiplier(90) == pytest.approx(1.28)
    assert impedance.resistance_multiplier(70, alpha_per_c=1 / 254.5) == pytest.approx(1.196, abs=0.001)


def test_r1_plus_r2_of_twin_and_earth():
    """R1 + R2 at 20 °C of 2.5/1.5 mm² flat twin and cpc: 19.51 mΩ/m, the published figure (seen in
    guidance on testing; see REFERENCE-NOTES), from the catalogue's IEC 60228 conductors."""
    kind = catalogue.cable_kind("twin-earth-70")
    assert kind.default_cpc_mm2(2.5) == 1.5     # the standard construction's cpc (common practice)
    total = catalogue.conductor_resistance(2.5).value + catalogue.conductor_resistance(1.5).value
    assert total == pytest.approx(19.51, abs=0.005)


def test_conductor_resistances_are_those_of_iec_60228():
    """IEC 60228 maximum DC resistance of class 1/2 plain copper at 20 °C, Ω/km = mΩ/m (seen)."""
    iec_60228 = {1: 18.1, 1.5: 12.1, 2.5: 7.41, 4: 4.61, 6: 3.08, 10: 1.83, 16: 1.15, 25: 0.727, 35: 0.524,
                 50: 0.387, 70: 0.268, 95: 0.193, 120: 0.153, 150: 0.124, 185: 0.0991, 240: 0.0754, 300: 0.0601}
    for csa, ohm_per_km in iec_60228.items():
        held = catalogue.conductor_resistance(csa)
        assert held.value == ohm_per_km and held.status == "seen", csa


def test_flat_twin_and_cpc_constructions():
    # The cpc of each flat twin-and-cpc size (BS 6004 construction; common practice).
    kind = catalogue.cable_kind("twin-earth-70")
    for csa, cpc in {1: 1, 1.5: 1, 2.5: 1.5, 4: 1.5, 6: 2.5, 10: 4, 16: 6}.items():
        assert kind.default_cpc_mm2(csa) == cpc


def test_loop_resistance_radial_and_ring():
    # 20 m of 2.5/1.5 at 70 °C: 19.51 × 20 × 1.2 / 1000 = 0.468 Ω; as a ring of 20 m: a quarter.
    assert impedance.loop_resistance_ohm(7.41, 12.1, 20, 1.2) == pytest.approx(0.46824)
    assert impedance.loop_resistance_ohm(7.41, 12.1, 20, 1.2, ring=True) == pytest.approx(0.11706)
    assert impedance.zs_ohm(0.35, 0.2, 0.1) == pytest.approx(0.65)


# BS 7671:2018 Table 41.3, maximum Zs at 230 V, Cmin 0.95 (values as quoted, "seen").
TABLE_41_3 = {
    "B": {6: 7.28, 10: 4.37, 16: 2.73, 20: 2.19, 32: 1.37, 40: 1.09, 45: 0.97, 50: 0.87},
    "C": {6: 3.64, 10: 2.19, 16: 1.37, 20: 1.09, 32: 0.68, 40: 0.55, 50: 0.44},
    "D": {6: 1.82, 10: 1.09, 16: 0.68, 20: 0.55, 32: 0.34, 40: 0.27, 50: 0.22},
}
MULTIPLE = {"B": 5, "C": 10, "D": 20}


@pytest.mark.parametrize("curve", sorted(TABLE_41_3))
def test_max_zs_reproduces_table_41_3(curve):
    for rating, published in TABLE_41_3[curve].items():
        computed = disconnection.max_zs_from_ia_ohm(230, MULTIPLE[curve] * rating)
        assert computed == pytest.approx(published, abs=0.006), (curve, rating)


def test_device_catalogue_multiples_match():
    info = catalogue.device_info("mcb")["instantaneous_multiple"]
    assert {k: v[0] for k, v in info.items()} == MULTIPLE


def test_rcd_max_zs_table_41_5():
    # BS 7671:2018 Table 41.5: 50 V / IΔn → 1667 Ω (30 mA), 500 (100 mA), 167 (300 mA), 100 (500 mA).
    for ma, published in {30: 1667, 100: 500, 300: 167, 500: 100}.items():
        assert disconnection.max_zs_rcd_ohm(ma) == pytest.approx(published, abs=0.5)
    assert disconnection.touch_voltage_v(62, 30) == pytest.approx(1.86)


def test_disconnection_times_table_41_1():
    t = disconnection.required_disconnection_s
    assert t("TN-C-S", False, 32, socket_outlets=True) == 0.4     # socket circuit up to 63 A
    assert t("TN-C-S", False, 63, socket_outlets=True) == 0.4
    assert t("TN-C-S", False, 40, socket_outlets=False) == 5.0    # fixed equipment over 32 A
    assert t("TN-S", False, 32, socket_outlets=False) == 0.4
    assert t("TN-S", True, 32, socket_outlets=False) == 5.0       # distribution circuit
    assert t("TT", False, 32, socket_outlets=True) == 0.2
    assert t("TT", True, 63, socket_outlets=False) == 1.0


@pytest.mark.parametrize("initial,final,published", [(70, 160, 115), (30, 160, 143), (90, 250, 143),
                                                     (30, 250, 176)])
def test_k_formula_iec_60364_5_54_annex_a(initial, final, published):
    """The Annex A formula reproduces BS 7671 Tables 43.1 / 54.2 / 54.3: 115 and 143 for
    thermoplastic, 143 and 176 for thermosetting copper."""
    assert round(adiabatic.k_factor(initial, final)) == published


@pytest.mark.parametrize("initial,final,value", [(70, 160, 115.0), (30, 160, 142.9), (90, 250, 143.1),
                                                 (30, 250, 175.8)])
def test_k_formula_to_one_decimal(initial, final, value):
    # 226 · sqrt(ln((β + θf)/(β + θi))), β = 234.5 (IEC 60364-5-54 Annex A, Table A.1)
    assert adiabatic.k_factor(initial, final) == pytest.approx(value, abs=0.05)


def test_k_constant_from_the_material_constants():
    """sqrt(Qc (β + 20) / ρ20) from Table A.1's copper constants is 225.7, tabulated as 226."""
    import math
    constant = math.sqrt(adiabatic.COPPER_QC_J_PER_C_MM3 * (adiabatic.COPPER_BETA_C + 20) / adiabatic.COPPER_RHO20_OHM_MM)
    assert constant == pytest.approx(225.67, abs=0.01)
    assert round(constant) == adiabatic.COPPER_K_CONSTANT


def test_adiabatic_minimum_size():
    # S = sqrt(I²t)/k: 1000 A for 0.1 s with k 115 → sqrt(100 000) / 115 = 316.23 / 115 = 2.7498 mm².
    assert adiabatic.min_csa_mm2(1000, 0.1, 115) == pytest.approx(2.7498, abs=1e-4)
    assert adiabatic.min_csa_from_energy_mm2(1000 ** 2 * 0.1, 115) == pytest.approx(2.7498, abs=1e-4)
