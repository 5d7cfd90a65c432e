"""Measured test results against their limits: insulation resistance (BS 7671 Table 64), measured
earth fault loop impedance against a tabulated maximum, and the R1+R2 a modelled cable should
measure. (RCD operating times are data: tracker/data/devices.yaml, `catalogue.rcd_time_limits_ms`.)

Pure functions of plain numbers. A published figure's status is given beside it (seen: confirmed
in a public secondary source quoting the table; common practice: a fact of the trade).
"""
from __future__ import annotations

from tracker.engine.impedance import resistance_multiplier

# BS 7671:2018 Table 64, minimum values of insulation resistance (seen):
# (highest circuit nominal voltage in the row, test voltage d.c., minimum insulation resistance)
#   SELV and PELV                                   250 V  0.5 MΩ
#   up to and including 500 V (not SELV/PELV)       500 V  1.0 MΩ
#   above 500 V                                    1000 V  1.0 MΩ
TABLE_64 = (
    ("SELV and PELV", 50.0, 250.0, 0.5),
    ("up to and including 500 V", 500.0, 500.0, 1.0),
    ("above 500 V", float("inf"), 1000.0, 1.0),
)

# Measured Zs at the conductors' test temperature against a maximum tabulated for their operating
# temperature: the rule of thumb of 0.8 (common practice; IET Guidance Note 3 and the On-Site
# Guide tabulate 80 % of the BS 7671 Table 41.2–41.4 values for comparison with measurements).
MEASURED_ZS_FACTOR = 0.8

# Ring final circuit end-to-end tests (common practice, IET Guidance Note 3 ring test): the line
# and neutral end-to-end resistances agree within 0.05 Ω, and the R1+R2 measured at each point
# after cross-connecting is (r1 + r2) / 4 within 0.05 Ω.
RING_TOLERANCE_OHM = 0.05


def table64_row(circuit_v: float) -> tuple[str, float, float]:
    """(row, test voltage V d.c., minimum MΩ) of BS 7671 Table 64 for a circuit's nominal voltage."""
    for row, top_v, test_v, min_mohm in TABLE_64:
        if circuit_v <= top_v:
            return row, test_v, min_mohm
    raise ValueError(circuit_v)   # pragma: no cover - the last row is unbounded


def min_insulation_mohm(test_v: float) -> float | None:
    """Minimum insulation resistance of the Table 64 row tested at `test_v` (250, 500 or 1000 V);
    None for a test voltage the table does not name."""
    for _row, _top, row_test_v, min_mohm in TABLE_64:
        if test_v == row_test_v:
            return min_mohm
    return None


def measured_zs_limit_ohm(max_zs_ohm: float, factor: float = MEASURED_ZS_FACTOR) -> float:
    """The most a Zs measured at ambient may read for a tabulated maximum: 0.8 × max Zs
    (e.g. B32, Table 41.3 1.37 Ω → 1.10 Ω)."""
    return factor * max_zs_ohm


def zs_at_operating_ohm(zs_measured_ohm: float, ze_ohm: float, operating_c: float, test_c: float = 20.0) -> float:
    """A measured Zs corrected to the conductors' operating temperature: only the installation's
    own part (Zs − Ze) warms, by the ratio of copper's resistance at the two temperatures:
    Ze + (Zs − Ze) × (1 + α(θop − 20)) / (1 + α(θtest − 20)) (BS 7671 Appendix 3; α as in
    `tracker.engine.impedance`)."""
    ratio = resistance_multiplier(operating_c) / resistance_multiplier(test_c)
    return ze_ohm + (zs_measured_ohm - ze_ohm) * ratio


def max_measured_zs_ohm(max_zs_ohm: float, ze_ohm: float, operating_c: float, test_c: float = 20.0) -> float:
    """The most a Zs measured at `test_c` may read for a maximum `max_zs_ohm` at the operating
    temperature: the inverse of :func:`zs_at_operating_ohm` (BS 7671 Appendix 3)."""
    ratio = resistance_multiplier(test_c) / resistance_multiplier(operating_c)
    return ze_ohm + (max_zs_ohm - ze_ohm) * ratio


def temperature_ratio(operating_c: float, test_c: float = 20.0) -> float:
    """Copper's resistance at `operating_c` over that at `test_c`."""
    return resistance_multiplier(operating_c) / resistance_multiplier(test_c)


def expected_r1_r2_ohm(r1_mohm_per_m: float, r2_mohm_per_m: float, length_m: float, test_c: float = 20.0,
                       ring: bool = False) -> float:
    """R1+R2 that a cable of route length `length_m` should measure at `test_c`, from its
    conductors' resistance at 20 °C (IEC 60228, mΩ/m): (r1 + r2) × L / 1000 × (1 + α(θ − 20)),
    and a quarter of that for a ring (its far point is the midpoint). 22 m of 2.5/1.5 mm² at
    20 °C: (7.41 + 12.1) × 22 / 1000 = 0.429 Ω."""
    value = (r1_mohm_per_m + r2_mohm_per_m) * length_m / 1000.0 * resistance_multiplier(test_c)
    return value / 4.0 if ring else value


def implied_length_m(r1_r2_ohm: float, r1_mohm_per_m: float, r2_mohm_per_m: float, test_c: float = 20.0,
                     ring: bool = False) -> float:
    """The route length a measured R1+R2 implies (the inverse of :func:`expected_r1_r2_ohm`)."""
    per_m = (r1_mohm_per_m + r2_mohm_per_m) / 1000.0 * resistance_multiplier(test_c)
    return (4.0 if ring else 1.0) * r1_r2_ohm / per_m


def ring_r1_r2_ohm(r1_end_ohm: float, r2_end_ohm: float) -> float:
    """R1+R2 at any point of a ring after cross-connecting line and cpc: (r1 + r2) / 4."""
    return (r1_end_ohm + r2_end_ohm) / 4.0


def ring_ends_agree(r1_end_ohm: float, rn_end_ohm: float, tolerance_ohm: float = RING_TOLERANCE_OHM) -> bool:
    """Line and neutral end-to-end resistances of a ring agree within the tolerance."""
    return abs(r1_end_ohm - rn_end_ohm) <= tolerance_ohm + 1e-9
