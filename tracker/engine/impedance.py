"""Conductor resistance and earth fault loop impedance."""
from __future__ import annotations

# Temperature coefficient of resistance of copper used for the operating-temperature multiplier
# (common practice: 1 + 0.004 (θ − 20) gives 1.20 at 70 °C and 1.28 at 90 °C; the exact copper
# ratio (234.5 + θ)/(234.5 + 20), i.e. α20 = 1/254.5 per °C, gives 1.196 and 1.275).
ALPHA_PER_C = 0.004


def resistance_multiplier(conductor_c: float, alpha_per_c: float = ALPHA_PER_C) -> float:
    """Ratio of conductor resistance at `conductor_c` to that at 20 °C: 1 + α (θ − 20)."""
    return 1.0 + alpha_per_c * (conductor_c - 20.0)


def loop_resistance_ohm(r_a_mohm_per_m: float, r_b_mohm_per_m: float, length_m: float,
                        multiplier: float, ring: bool = False) -> float:
    """Resistance of a go-and-return path of two conductors (R1 + R2, or R1 + Rn).

    Parameters
    ----------
    r_a_mohm_per_m, r_b_mohm_per_m : resistances of the two conductors at 20 °C, mΩ/m
    length_m : route length, m; for a ring, the whole ring end to end
    multiplier : operating-temperature multiplier (see :func:`resistance_multiplier`)
    ring : the far point of a ring is its midpoint: (r1 + r2) / 4 of the end-to-end values

    Returns
    -------
    ohms: (Ra + Rb) × L × multiplier / 1000 (÷ 4 for a ring).

    Notes
    -----
    BS 7671:2018 Appendix 3 and Regulation 411.4.4 (Zs = Ze + R1 + R2); ring value (r1+r2)/4
    from the end-to-end ring test (common practice).
    """
    value = (r_a_mohm_per_m + r_b_mohm_per_m) * length_m * multiplier / 1000.0
    return value / 4.0 if ring else value


def zs_ohm(ze_ohm: float, *loops_ohm: float) -> float:
    """Earth fault loop impedance: Zs = Ze + Σ(R1 + R2) along the path (BS 7671 411.4.4)."""
    return ze_ohm + sum(loops_ohm)
