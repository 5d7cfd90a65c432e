"""tracker/engine/measured.py against published tables and worked figures."""
from __future__ import annotations

import pytest

from tracker.engine import measured
from tracker.engine.disconnection import max_zs_from_ia_ohm


def assert_allclose(actual, expected, rtol=0.0, atol=0.0):
    assert actual == pytest.approx(expected, rel=rtol, abs=atol)


@pytest.mark.parametrize("circuit_v, test_v, min_mohm", [
    (24, 250, 0.5),      # BS 7671:2018 Table 64: SELV and PELV — 250 V d.c., 0.5 MΩ
    (230, 500, 1.0),     # Table 64: up to and including 500 V — 500 V d.c., 1.0 MΩ
    (400, 500, 1.0),     # (a 400 V three-phase circuit is in the same row)
    (690, 1000, 1.0),    # Table 64: above 500 V — 1000 V d.c., 1.0 MΩ
])
def test_table_64_rows(circuit_v, test_v, min_mohm):
    _row, row_test_v, row_min = measured.table64_row(circuit_v)
    assert (row_test_v, row_min) == (test_v, min_mohm)
    assert measured.min_insulation_mohm(test_v) == min_mohm


def test_table_64_names_only_its_test_voltages():
    assert measured.min_insulation_mohm(100) is None


@pytest.mark.parametrize("ia_multiple, rating_a, table_ohm, measured_ohm", [
    # BS 7671:2018 Table 41.3 (0.4 s, 230 V, Cmin 0.95), and 80 % of the tabulated figure as the
    # most a reading at ambient may show (the 0.8 rule, common practice):
    (5, 32, 1.37, 1.096),    # B32
    (5, 16, 2.73, 2.184),    # B16
    (5, 6, 7.28, 5.824),     # B6
    (10, 20, 1.09, 0.872),   # C20
    (20, 16, 0.68, 0.544),   # D16
])
def test_the_0_8_rule_on_table_41_3_values(ia_multiple, rating_a, table_ohm, measured_ohm):
    # the engine's maximum is the table's to its printed precision ...
    assert_allclose(max_zs_from_ia_ohm(230, ia_multiple * rating_a), table_ohm, atol=0.005)
    # ... and the rule applied to the printed figure gives 80 % of it
    assert_allclose(measured.measured_zs_limit_ohm(table_ohm), measured_ohm, atol=0.0005)


def test_appendix_3_correction_warms_only_the_installations_part():
    # Ze 0.35 Ω does not change with the installation's temperature; the circuit's 0.50 Ω at 20 °C
    # reads 0.50 × 1.2 = 0.60 Ω at 70 °C (1 + 0.004 × 50, common practice): Zs 0.95 Ω.
    assert_allclose(measured.zs_at_operating_ohm(0.85, 0.35, 70.0, 20.0), 0.95, rtol=1e-9)


def test_expected_r1_r2_of_22_m_of_2_5_1_5():
    # IEC 60228: 2.5 mm² 7.41 mΩ/m, 1.5 mm² 12.1 mΩ/m at 20 °C: 19.51 mΩ/m × 22 m = 0.429 Ω.
    assert_allclose(measured.expected_r1_r2_ohm(7.41, 12.1, 22.0), 0.429, atol=0.0005)
    assert_allclose(measured.implied_length_m(0.429, 7.41, 12.1), 22.0, atol=0.05)


def test_expected_r1_r2_of_a_ring_is_a_quarter_of_end_to_end():
    # a 2.5/1.5 ring of 60 m end to end: r1 0.445 + r2 0.726 = 1.171 Ω; (r1 + r2) / 4 = 0.293 Ω
    # (IEC 60228 resistances; the ring's far point is its midpoint, common practice)
    assert_allclose(measured.expected_r1_r2_ohm(7.41, 12.1, 60.0, ring=True), 0.293, atol=0.0005)
    assert_allclose(measured.ring_r1_r2_ohm(0.445, 0.726), 0.293, atol=0.0005)


def test_ring_consistency_within_0_05_ohm():
    # GN3 ring test (common practice): r1 and rn end to end within 0.05 Ω
    assert measured.ring_ends_agree(0.34, 0.38)
    assert measured.ring_ends_agree(0.34, 0.39)
    assert not measured.ring_ends_agree(0.34, 0.40)
