"""Prospective fault current along the installation."""
from __future__ import annotations

# Prospective fault current assumed at the origin of a public single-phase supply where none is
# declared: 16 kA (common UK practice: the figure distributors declare as a maximum).
ASSUMED_PUBLIC_PFC_KA = 16.0


def downstream_pfc_ka(u0_v: float, pfc_upstream_ka: float, added_loop_ohm: float) -> float:
    """Prospective fault current after a cable of (cold) loop resistance `added_loop_ohm`.

    The source is taken as an impedance U0 / Ipf in series with the cable (common practice,
    the cable's resistance at 20 °C so as not to understate the fault current).
    """
    source_ohm = u0_v / (pfc_upstream_ka * 1000.0)
    return u0_v / (source_ohm + added_loop_ohm) / 1000.0
