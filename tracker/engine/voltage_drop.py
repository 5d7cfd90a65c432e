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


def conductor_temperature_factor(max_conductor_c: float, ca: float, cg: float, ib_a: float, it_a: float,
                                 reference_ambient_c: float = 30.0) -> float:
    """Correction Ct of the tabulated voltage drop for a conductor running below its maximum
    operating temperature.

    Ct = (230 + tp − (Ca² Cg² − Ib² / It²)(tp − 30)) / (230 + tp)

    Parameters
    ----------
    max_conductor_c : tp, the conductor's maximum operating temperature, °C (70 thermoplastic,
        90 thermosetting)
    ca, cg : the ambient and grouping factors applied to the cable's rating
    ib_a : design current Ib, A
    it_a : tabulated current-carrying capacity It of the cable for its installation method, A
    reference_ambient_c : the ambient of the tabulated ratings, °C (30 in air)

    Returns
    -------
    Ct: 1 for a cable carrying its full rating It × Ca × Cg (conductor at tp); less for a
    lighter load. Above the full rating it exceeds 1 (the conductor runs hotter than tp).

    Notes
    -----
    BS 7671:2018 Appendix 4, section 6.1 (seen in secondary sources quoting the formula). The
    tabulated mV/A/m are at tp; the conductor's temperature rise is taken as proportional to
    the square of the current, and 230 stands for the reciprocal of copper's temperature
    coefficient of resistance, in °C, as the formula gives it. Appendix 4 applies it to the
    resistive part of the voltage drop, all of it for conductors up to 16 mm².
    """
    tp = max_conductor_c
    return (230.0 + tp - (ca ** 2 * cg ** 2 - ib_a ** 2 / it_a ** 2) * (tp - reference_ambient_c)) / (230.0 + tp)
