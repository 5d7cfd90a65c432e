"""Design current of a load."""
from __future__ import annotations


def design_current_a(power_kw: float, u0_v: float, power_factor: float = 1.0) -> float:
    """Current drawn by a single-phase load.

    Parameters
    ----------
    power_kw : rated active power, kW
    u0_v : nominal voltage to earth (line to neutral), V
    power_factor : displacement power factor, 0 < pf <= 1

    Returns
    -------
    current in A: I = P / (U0 · cos φ)

    Notes
    -----
    Single-phase a.c. power, P = U I cos φ (e.g. BS 7671:2018 Appendix 4; any text on a.c.
    circuits). izwatch v1 treats every circuit as single-phase at U0.
    """
    return power_kw * 1000.0 / (u0_v * power_factor)
