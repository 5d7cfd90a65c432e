"""Rating factors against BS 7671:2018 Tables 4B1, 4C1 and 52.2 (values as quoted in public
secondary sources; see tracker/data/factors.yaml for each value's status)."""
from __future__ import annotations

import pytest

from tracker import catalogue
from tracker.engine import factors as F

# BS 7671:2018 Table 4B1, ambient temperature factors (status "seen").
TABLE_4B1 = {
    70: {35: 0.94, 40: 0.87, 45: 0.79, 50: 0.71, 55: 0.61, 60: 0.50},
    90: {35: 0.96, 40: 0.91, 45: 0.87, 50: 0.82, 55: 0.76, 60: 0.71},
}


@pytest.mark.parametrize("theta_p", [70, 90])
def test_formula_reproduces_table_4b1_above_30(theta_p):
    for theta_a, tabulated in TABLE_4B1[theta_p].items():
        assert F.ambient_factor_formula(theta_a, theta_p) == pytest.approx(tabulated, abs=0.005), theta_a


def test_reference_and_limits_of_the_formula():
    assert F.ambient_factor_formula(30, 70) == 1.0               # the tables' reference ambient
    assert F.ambient_factor_formula(70, 70) == 0.0               # at the conductor limit nothing is left
    assert F.ambient_factor_formula(20, 90, reference_c=20) == 1.0   # ground: method D reference 20 °C


def test_disagreement_below_30_is_settled_by_the_table():
    """IEC 60364-5-52 B.52.14 (the formula) gives 1.06 at 25 °C for 70 °C insulation; BS 7671
    Table 4B1 gives 1.03. The bs7671 rule set takes the table value (tracker/data/factors.yaml)."""
    assert F.ambient_factor_formula(25, 70) == pytest.approx(1.06, abs=0.005)
    table70 = {float(t): v[0] for t, v in catalogue.factors()["ambient"]["table"][70].items()}
    table90 = {float(t): v[0] for t, v in catalogue.factors()["ambient"]["table"][90].items()}
    assert F.ambient_factor_bs7671(25, 70, table70) == 1.03
    assert F.ambient_factor_bs7671(25, 90, table90) == 1.02
    assert F.ambient_factor_bs7671(10, 70, table70) == 1.03    # below the table: its lowest row
    assert F.ambient_factor_bs7671(27, 70, table70) == 1.0     # between rows: the next row up (conservative)
    assert F.ambient_factor_bs7671(42, 70, table70) == pytest.approx(0.837, abs=0.001)  # formula above 30


def _grouping(name):
    return {int(n): v[0] for n, v in catalogue.factors()["grouping"][name].items()}


def test_grouping_bunched_table_4c1():
    rows = _grouping("bunched")
    # Published values (seen): 2 → 0.80, 5 → 0.60, 20 → 0.38.
    assert F.grouping_factor(1, rows) == 1.0
    assert F.grouping_factor(2, rows) == 0.80
    assert F.grouping_factor(5, rows) == 0.60
    assert F.grouping_factor(20, rows) == 0.38
    assert F.grouping_factor(10, rows) == rows[12]   # between rows: the 12-circuit factor
    assert F.grouping_factor(21, rows) is None       # beyond the table: not assessed


def test_grouping_single_layer_is_open_ended():
    rows = _grouping("single-layer-wall")
    assert F.grouping_factor(2, rows, open_ended=True) == 0.85   # seen
    assert F.grouping_factor(40, rows, open_ended=True) == 0.70  # "9 and more"


def test_grouping_factors_fall_with_more_circuits():
    """Physics: more neighbours, more heat, never a higher factor."""
    for name in ("bunched", "single-layer-wall"):
        rows = _grouping(name)
        values = [rows[n] for n in sorted(rows)]
        assert values == sorted(values, reverse=True)


def test_insulation_table_52_2():
    table = {float(k): v[0] for k, v in catalogue.factors()["insulation"]["table"].items()}
    assert F.insulation_factor(0, table) == 1.0
    assert F.insulation_factor(100, table) == 0.78      # seen
    assert F.insulation_factor(500, table) == 0.50      # seen
    assert F.insulation_factor(2000, table) == 0.50     # 523.9: over 0.5 m, 0.5
    assert F.insulation_factor(75, table) == 0.78       # between rows: the longer length's factor
    assert F.insulation_factor(10, table) == table[50.0]
