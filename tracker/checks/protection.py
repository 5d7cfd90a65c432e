"""The protective device's side of the checks: maximum Zs and disconnection-time bounds."""
from __future__ import annotations

from tracker.checks.context import Facts
from tracker.engine import disconnection

BREAKERS = ("mcb", "rcbo")


def _table_key(t_s: float) -> str:
    return f"{t_s:g}"


def instantaneous_ia_a(f: Facts) -> float | None:
    """Ia of an MCB/RCBO: the upper limit of its instantaneous band (5/10/20 × In)."""
    dev = f.circuit.device
    if dev.kind not in BREAKERS or f.device_info is None:
        return None
    multiple = f.device_info["instantaneous_multiple"].get(dev.curve)
    return multiple[0] * dev.rating_a if multiple else None


def max_zs_ohm(f: Facts, t_s: float | None = None) -> tuple[float | None, str, str]:
    """(maximum Zs for the overcurrent device, how it was found, data status) for time t."""
    t_s = f.t_req_s if t_s is None else t_s
    dev = f.circuit.device
    if dev.max_zs_ohm is not None:
        return dev.max_zs_ohm, f"max Zs {dev.max_zs_ohm:g} Ω from the maker's data (site file)", "site"
    ia = instantaneous_ia_a(f)
    if ia is not None:
        u0 = f.ctx.supply.u0_v
        value = disconnection.max_zs_from_ia_ohm(u0, ia)
        multiple = ia / dev.rating_a
        return value, (f"max Zs = Cmin·U0/Ia = 0.95 × {u0:g} / {ia:g} = {value:.2f} Ω "
                       f"(Ia = {multiple:g} In, type {dev.curve}; BS 7671 Table 41.3)"), "seen"
    tables = (f.device_info or {}).get("max_zs_ohm")
    if not tables:
        return None, (f"no maximum Zs held for a {f.label} (give device.max_zs_ohm from the maker's data)"), ""
    row = tables.get(_table_key(t_s))
    if row is None:
        return None, f"no maximum Zs held for a {f.label} at {t_s:g} s", ""
    entry = row.get(int(dev.rating_a)) if float(dev.rating_a).is_integer() else None
    if entry is None:
        return None, f"no maximum Zs held for a {f.label} at {t_s:g} s", ""
    value, status = float(entry[0]), entry[1]
    table = "41.2" if t_s < 1 else "41.4"
    note = " — derived value, confirm against the current table" if status != "seen" else ""
    return value, f"max Zs {value:g} Ω for {t_s:g} s (BS 7671 Table {table}{note})", status


def overcurrent_time_s(f: Facts, loop_ohm: float) -> tuple[float | None, str, bool]:
    """(time, how, conclusive) for the overcurrent device and a fault through `loop_ohm`.

    `conclusive`: the time is the one common practice takes as the device's (an MCB/RCBO in its
    instantaneous region: 0.1 s, the limit its product standard sets). A time read off a
    maximum-Zs table point (a fuse, or the maker's max Zs) is only an upper bound: a check that
    fails on it has not been shown to fail.
    """
    dev = f.circuit.device
    u0 = f.ctx.supply.u0_v
    ia = instantaneous_ia_a(f)
    if ia is not None:
        if disconnection.CMIN * u0 / loop_ohm >= ia:
            t = f.device_info["instantaneous_time_s"]
            return t, f"t ≤ {t:g} s ({f.label} in its instantaneous region; common practice)", True
    if dev.max_zs_ohm is not None and loop_ohm <= dev.max_zs_ohm:
        return f.t_req_s, f"t ≤ {f.t_req_s:g} s (loop within the maker's max Zs; an upper bound)", False
    if ia is not None:
        return None, (f"fault current {disconnection.CMIN * u0 / loop_ohm:.0f} A (at Cmin) is below Ia {ia:g} A "
                      f"of the {f.label}: time-current data needed"), False
    for t in (0.4, 5.0):
        limit, _, _ = max_zs_ohm(f, t)
        if limit is not None and loop_ohm <= limit:
            return t, f"t ≤ {t:g} s (loop within the {t:g} s maximum Zs of the {f.label}; an upper bound)", False
    if not (f.device_info or {}).get("max_zs_ohm"):
        return None, f"no time-current data held for a {f.label}", False
    return None, f"the {f.label} does not operate within 5 s at this current: time-current data needed", False


def rcd_time_s(f: Facts, current_a: float) -> tuple[float | None, str, bool]:
    """(maximum break time, how, conclusive) of the RCD for an earth fault current (general type)."""
    if f.rcd_ma is None:
        return None, "", False
    idn = f.rcd_ma / 1000.0
    if current_a >= 5 * idn:
        return 0.04, f"t ≤ 0.04 s ({f.rcd_ma:g} mA RCD at ≥ 5 IΔn; BS EN 61008/61009) [recalled]", True
    if current_a >= idn:
        return 0.3, f"t ≤ 0.3 s ({f.rcd_ma:g} mA RCD at ≥ IΔn; BS EN 61008/61009) [recalled]", True
    return None, "", False


def bound_only(check_id: str, working: str, what: str, value: float, limit: float):
    """The verdict where a check fails only on an upper bound of the disconnection time: not shown
    adequate, not shown inadequate either — not assessed."""
    from tracker.checks.result import not_assessed
    return not_assessed(check_id, "mm2", ">=", f"{working}; with only an upper bound of the disconnection time "
                                               f"{what} cannot be shown adequate or inadequate: the device's "
                                               "time-current or let-through data is needed",
                        value=value, limit=limit)


def fault_energy_a2s(f: Facts, current_a: float, t_s: float, by_overcurrent_device: bool) -> tuple[float, str]:
    """Energy I²t let through to the fault: I² × the time bound, or, for an MCB/RCBO in its
    instantaneous region, the maker's let-through energy where the site file gives it."""
    energy = current_a ** 2 * t_s
    lt = f.circuit.device.let_through_a2s
    if by_overcurrent_device and lt is not None and instantaneous_ia_a(f) is not None and lt < energy:
        return lt, f"I²t {lt:,.0f} A²s (maker's let-through energy, site file)"
    return energy, ""
