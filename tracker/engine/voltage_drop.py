"""Voltage drop in a circuit."""
from __future__ import annotations


def voltage_drop_v(mv_per_a_m: float, current_a: float, length_m: float, ring: bool = False) -> float:
    """Voltage drop from tabulated mV/A/m.

    Parameters
    ----------
    mv_per_a_m : tabulated voltage drop per ampere per metre, mV/A/m (single-phase)
    current_a : design current Ib, A
    length_m : route length, m; for a ring, the whole ring end to end
    ring : load taken at the midpoint of a ring

    Returns
    -------
    volts: mV/A/m × Ib × L / 1000; for a ring × 1/4 (two parallel paths of L/2 each carrying
    Ib/2 to a load at the midpoint; common practice).

    Notes
    -----
    BS 7671:2018 Appendix 4 section 6; IEC 60364-5-52:2009 Annex G.
    """
    effective = length_m / 4.0 if ring else length_m
    return mv_per_a_m * current_a * effective / 1000.0


def voltage_drop_limit_pct(lighting: bool, private_supply: bool = False) -> float:
    """Maximum voltage drop from the origin, % of nominal voltage.

    BS 7671:2018 Appendix 4 Table 4Ab (IEC 60364-5-52:2009 Table G.52.1): supplied from a
    public low-voltage network, 3 % for lighting and 5 % for other uses; from a private
    supply, 6 % and 8 %.
    """
    if private_supply:
        return 6.0 if lighting else 8.0
    return 3.0 if lighting else 5.0


def mv_per_a_m_from_resistance(resistance_20c_mohm_per_m: float, resistance_multiplier: float) -> float:
    """Single-phase voltage drop per ampere per metre of a two-conductor circuit (resistive part).

    2 × R20 × (R at operating temperature / R20): line and neutral in series. For conductors up
    to 16 mm² the reactance is negligible and this reproduces the tabulated mV/A/m (physics
    check on the catalogue).
    """
    return 2.0 * resistance_20c_mohm_per_m * resistance_multiplier
