"""Automatic disconnection: maximum loop impedance and disconnection times."""
from __future__ import annotations

# Minimum voltage factor Cmin accounting for supply voltage variation (BS 7671:2018 Appendix 3,
# note to Tables 41.2–41.4; CENELEC CLC/TR 50480).
CMIN = 0.95
# Conventional touch-voltage limit for automatic disconnection (BS 7671:2018 411.5.3, Table 41.5).
TOUCH_VOLTAGE_V = 50.0


def max_zs_from_ia_ohm(u0_v: float, ia_a: float, cmin: float = CMIN) -> float:
    """Maximum earth fault loop impedance for a device that disconnects in time at Ia.

    Zs ≤ Cmin · U0 / Ia (BS 7671:2018 411.4.4 and Appendix 3). For an MCB or RCBO, Ia is the
    upper limit of its instantaneous band (5, 10, 20 × In for types B, C, D), which gives
    BS 7671:2018 Table 41.3: e.g. B32 at 230 V: 0.95 × 230 / 160 = 1.37 Ω.
    """
    return cmin * u0_v / ia_a


def max_zs_rcd_ohm(idn_ma: float, touch_voltage_v: float = TOUCH_VOLTAGE_V) -> float:
    """Maximum Zs where an RCD provides fault protection: 50 V / IΔn (BS 7671:2018 Table 41.5)."""
    return touch_voltage_v / (idn_ma / 1000.0)


def touch_voltage_v(ra_ohm: float, idn_ma: float) -> float:
    """RA · IΔn, the touch voltage on a TT system at the RCD's operating current (411.5.3)."""
    return ra_ohm * idn_ma / 1000.0


def required_disconnection_s(system: str, distribution: bool, rating_a: float, socket_outlets: bool) -> float:
    """Maximum disconnection time for fault protection.

    BS 7671:2018 411.3.2.2 and Table 41.1 (U0 230 V): final circuits up to 63 A with
    socket-outlets, or up to 32 A supplying only fixed equipment — TN 0.4 s, TT 0.2 s.
    411.3.2.3 / 411.3.2.4: distribution circuits and other final circuits — TN 5 s, TT 1 s.
    """
    final_limited = (not distribution) and (rating_a <= 63 if socket_outlets else rating_a <= 32)
    if system == "TT":
        return 0.2 if final_limited else 1.0
    return 0.4 if final_limited else 5.0


def ia_from_max_zs_a(u0_v: float, max_zs_ohm: float, cmin: float = CMIN) -> float:
    """The current Ia behind a tabulated maximum Zs: Ia = Cmin · U0 / Zs.

    The inverse of :func:`max_zs_from_ia_ohm`: BS 7671:2018 Tables 41.2–41.4 are Cmin U0 / Ia with
    Ia read off the device's time-current characteristic (Appendix 3), so a table gives back the
    current that operates the device within the table's time (e.g. a 32 A BS 88-2 fuse, 0.99 Ω
    at 0.4 s: Ia = 0.95 × 230 / 0.99 = 221 A).
    """
    return cmin * u0_v / max_zs_ohm


def operating_time_bound_s(current_a: float, points: list[tuple[float, float]]) -> float | None:
    """The shortest time the device is known to operate within at a current, from its
    time-current points [(Ia, t)]: each point says 'at Ia or more, within t' (the operating time
    falls as the current rises). None where the current is below every point.

    BS 7671:2018 411.4.4 and Appendix 3; BS EN 60898-1 Table 7 for circuit-breakers.
    """
    times = [t for ia, t in points if current_a >= ia]
    return min(times) if times else None
