"""Three-phase circuits: line currents, the neutral current, voltage drop and fault level.

Pure functions of plain numbers. "Line" voltage U_L is between two lines (400 V); U0 is a line to
earth (230 V); currents are r.m.s. line currents. Phases are L1, L2, L3, 120° apart.
"""
from __future__ import annotations

import math

SQRT3 = math.sqrt(3.0)
PHASES = ("L1", "L2", "L3")

# Ratio of the three-phase symmetrical fault current to the single-phase line-neutral value at
# the same point where only the single-phase figure is known: 2. The rule of UK guidance (IET
# On-Site Guide, section 10 on prospective fault current; seen in secondary sources quoting it,
# clause number not confirmed). The reasoning: a line-neutral fault drives U0 through line and
# neutral, 2 Z; a symmetrical three-phase fault drives U0 through the line alone, Z, with
# Z_line = Z_neutral. The ratio √3 sometimes quoted understates it.
THREE_PHASE_FROM_SINGLE_PHASE_FACTOR = 2.0

# A line-to-line fault carries √3/2 of the symmetrical three-phase fault current (IEC 60909-0:
# I"k2 = (√3/2) I"k3 far from generators, where the negative-sequence impedance equals the
# positive-sequence one; equation number recalled, not cited).
LINE_TO_LINE_OVER_THREE_PHASE = SQRT3 / 2.0


def line_voltage_v(u0_v: float) -> float:
    """Line-to-line voltage of a three-phase star supply: U_L = √3 · U0 (230 V → 398 V; the
    declared nominal 400 V is 230 × 1.739, within rounding)."""
    return SQRT3 * u0_v


def balanced_line_current_a(power_kw: float, u_line_v: float, power_factor: float = 1.0) -> float:
    """Line current of a balanced three-phase load.

    Parameters
    ----------
    power_kw : total active power of the three phases, kW
    u_line_v : line-to-line voltage U_L, V
    power_factor : displacement power factor, 0 < pf <= 1

    Returns
    -------
    I_L = P / (√3 · U_L · cos φ), A

    Notes
    -----
    Three-phase a.c. power P = √3 U_L I_L cos φ (any text on a.c. circuits; BS 7671:2018
    Appendix 4 uses the line current of a balanced load as Ib).
    """
    return power_kw * 1000.0 / (SQRT3 * u_line_v * power_factor)


def neutral_current_a(i_l1_a: float, i_l2_a: float, i_l3_a: float) -> float:
    """Fundamental-frequency neutral current of an unbalanced set of line currents.

    The three currents are taken at the same angle to their own phase voltage (the same power
    factor), so they lie 120° apart and the neutral carries their phasor sum:

        I_N = √(I1² + I2² + I3² − I1·I2 − I2·I3 − I3·I1)

    (the magnitude of I1 + I2·a + I3·a², a = e^(j120°); any text on three-phase circuits).
    Balanced currents give 0; one loaded phase gives its own current. Loads of different power
    factors give a different (not always smaller) figure; harmonic currents add separately
    (:func:`triplen_neutral_current_a`).
    """
    value = i_l1_a ** 2 + i_l2_a ** 2 + i_l3_a ** 2 - i_l1_a * i_l2_a - i_l2_a * i_l3_a - i_l3_a * i_l1_a
    return math.sqrt(max(0.0, value))


def imbalance_pct(currents_a: list[float] | tuple[float, ...]) -> float:
    """Current imbalance of a set of phases: the largest deviation from their mean, as % of the
    mean (common practice; the same definition as the unbalance of IEC 60034-26 / NEMA MG 1 for
    voltages). 0 for equal currents; 0 where nothing is drawn."""
    mean = sum(currents_a) / len(currents_a)
    if mean <= 0:
        return 0.0
    return max(abs(i - mean) for i in currents_a) / mean * 100.0


def triplen_neutral_current_a(line_current_a: float, third_harmonic_pct: float) -> float:
    """Neutral current of a balanced three-phase circuit from its third-harmonic content.

    I_N = 3 · (h / 100) · I_line: the third-harmonic currents of the three lines are in phase and
    add in the neutral (BS 7671:2018 Appendix 4 section 5.5; IEC 60364-5-52:2009 Annex E, whose
    worked example takes 39 A with 40 % third harmonic as 39 × 0.4 × 3 = 46.8 A in the neutral).
    """
    return 3.0 * third_harmonic_pct / 100.0 * line_current_a


def harmonic_rating(third_harmonic_pct: float,
                    rows: tuple[tuple[float | None, float, str], ...]) -> tuple[float, str]:
    """(rating factor, 'line' | 'neutral') of BS 7671 Appendix 4 Table 4Aa for a third-harmonic
    content of the line current, from the table's rows (up to %, factor, size on) in order; a
    content on a row boundary takes that row (the table's '>15–33' reads 15 % as the first row)."""
    for up_to, factor, size_on in rows:
        if up_to is None or third_harmonic_pct <= up_to:
            return factor, size_on
    raise ValueError("the last row of the table must be open-ended")


def voltage_drop_three_phase_v(mv_per_a_m_3ph: float, line_current_a: float, length_m: float) -> float:
    """Line-to-line voltage drop of a balanced three-phase circuit from the tabulated
    three-phase mV/A/m: (mV/A/m) × I_L × L / 1000 (BS 7671:2018 Appendix 4 section 6; the
    three-phase column is √3/2 of the single-phase one for the same conductors)."""
    return mv_per_a_m_3ph * line_current_a * length_m / 1000.0


def voltage_drop_pct(drop_v: float, nominal_v: float) -> float:
    """A drop as % of the nominal voltage it is measured against (U_L for a line-to-line drop,
    U0 for a line-to-neutral drop): the same figure for a balanced three-phase circuit."""
    return drop_v / nominal_v * 100.0


def phase_drop_v(mv_per_a_m_3ph: float, phase_current_a: float, neutral_current_a: float,
                 length_m: float) -> float:
    """Line-to-neutral drop along a three-phase sub-main seen by one phase, V.

    Per conductor the three-phase column gives (mV/A/m) / √3 per ampere (the line-to-line figure
    over √3). The phase's own conductor carries its current, the neutral the set's neutral
    current; their drops are added as magnitudes (an upper bound of the phasor sum):

        v = (mV/A/m / √3) × (I_phase + I_N) × L / 1000

    With a balanced load (I_N = 0) this is the three-phase drop / √3, so as % of U0 it equals the
    three-phase drop as % of U_L. Common practice for the share of a single-phase circuit.
    """
    return mv_per_a_m_3ph / SQRT3 * (phase_current_a + neutral_current_a) * length_m / 1000.0


def three_phase_pfc_from_single_ka(single_phase_pfc_ka: float,
                                   factor: float = THREE_PHASE_FROM_SINGLE_PHASE_FACTOR) -> float:
    """Three-phase prospective fault current from the single-phase (line-neutral) value: × 2,
    the rule of UK guidance (see THREE_PHASE_FROM_SINGLE_PHASE_FACTOR)."""
    return single_phase_pfc_ka * factor


def line_to_line_pfc_ka(three_phase_pfc_ka: float) -> float:
    """Line-to-line fault current from the symmetrical three-phase one: × √3/2 (IEC 60909-0,
    see LINE_TO_LINE_OVER_THREE_PHASE)."""
    return three_phase_pfc_ka * LINE_TO_LINE_OVER_THREE_PHASE


def downstream_three_phase_pfc_ka(u0_v: float, pfc_upstream_ka: float, line_ohm: float) -> float:
    """Symmetrical three-phase fault current after a cable whose (cold) line conductor has
    resistance `line_ohm`: the source per phase is U0 / Ipf3, in series with one line conductor
    (a symmetrical fault has no neutral current). Common practice, as for single-phase."""
    source_ohm = u0_v / (pfc_upstream_ka * 1000.0)
    return u0_v / (source_ohm + line_ohm) / 1000.0
