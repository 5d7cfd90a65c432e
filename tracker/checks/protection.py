"""The protective device's side of the checks: maximum Zs, disconnection-time bounds and the
energy let through to a fault.

One meaning for a bound (BS 7671:2018 434.5.2, 543.1.3): a time or energy known only as an upper
bound shows a conductor adequate when the conductor withstands it; when it does not, nothing is
shown either way (`not-assessed`, naming the data that would settle it). A conductor is shown
inadequate only where the published let-through energy of the device (its energy-limiting class
at a prospective current at or below the fault's, or the maker's figure) already exceeds k²S².
"""
from __future__ import annotations

import math
from collections.abc import Callable
from functools import lru_cache
from typing import NamedTuple

from tracker import catalogue
from tracker.checks.context import Facts
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS
from tracker.engine import disconnection, let_through

BREAKERS = ("mcb", "rcbo")
# U0 of the maximum-Zs tables of BS 7671:2018 Tables 41.2–41.4.
TABLE_U0_V = 230.0
_WEAK = {"recalled": 3, "derived": 2, "code": 1, "seen": 0, "site": 0, "": 0}


def _table_key(t_s: float) -> str:
    return f"{t_s:g}"


def _note(status: str) -> str:
    return f" [{status}]" if status in ("recalled", "derived", "code") else ""


def _weakest(*statuses: str) -> str:
    return max(statuses, key=lambda s: _WEAK.get(s, 0)) if statuses else ""


def instantaneous_ia_a(f: Facts) -> float | None:
    """Ia of an MCB/RCBO: the upper limit of its instantaneous band (5/10/20 × In)."""
    dev = f.circuit.device
    if dev.kind not in BREAKERS or f.device_info is None:
        return None
    multiple = f.device_info["instantaneous_multiple"].get(dev.curve)
    return multiple[0] * dev.rating_a if multiple else None


def _breaker_multiple(f: Facts, t_s: float) -> tuple[float, str] | None:
    """(multiple of In giving disconnection within t, status) for an MCB/RCBO: the instantaneous
    multiple for t under 5 s, the 5 s multiple of Table 41.3 (type D: 10 In) for 5 s."""
    dev = f.circuit.device
    table = "five_s_multiple" if t_s >= 5.0 else "instantaneous_multiple"
    entry = (f.device_info or {}).get(table, {}).get(dev.curve)
    return (float(entry[0]), str(entry[1])) if entry else None


def _fuse_row(f: Facts, t_s: float) -> tuple[float, str] | None:
    """(tabulated max Zs at 230 V, status) of the fuse's rating for time t, or None."""
    tables = (f.device_info or {}).get("max_zs_ohm") or {}
    row = tables.get(_table_key(t_s)) or {}
    rating = f.circuit.device.rating_a
    entry = row.get(int(rating)) if float(rating).is_integer() else None
    return (float(entry[0]), str(entry[1])) if entry else None


def max_zs_ohm(f: Facts, t_s: float | None = None) -> tuple[float | None, str, str]:
    """(maximum Zs for the overcurrent device, how it was found, data status) for time t."""
    t_s = f.t_req_s if t_s is None else t_s
    dev = f.circuit.device
    u0 = f.ctx.supply.u0_v
    if dev.max_zs_ohm is not None:
        return dev.max_zs_ohm, f"max Zs {dev.max_zs_ohm:g} Ω from the maker's data (site file)", "site"
    if dev.kind in BREAKERS:
        found = _breaker_multiple(f, t_s)
        if found is None:
            return None, f"no tripping multiple held for a {f.label}", ""
        multiple, status = found
        ia = multiple * dev.rating_a
        value = disconnection.max_zs_from_ia_ohm(u0, ia)
        within = f"within {t_s:g} s" if t_s >= 5.0 else "instantaneous"
        return value, (f"max Zs = Cmin·U0/Ia = {disconnection.CMIN:g} × {u0:g} / {ia:g} = {value:.2f} Ω "
                       f"(Ia = {multiple:g} In, type {dev.curve} {within}; BS 7671 Table 41.3){_note(status)}"), status
    row = _fuse_row(f, t_s)
    if row is None:
        return None, (f"no maximum Zs held for a {f.label} at {t_s:g} s (give device.max_zs_ohm from the "
                      "maker's data)"), ""
    tabulated, status = row
    value = tabulated * u0 / TABLE_U0_V
    table = "41.2" if t_s < 1 else "41.4"
    return value, f"max Zs {value:.2f} Ω for {t_s:g} s (BS 7671 Table {table}){_note(status)}", status


def time_points(f: Facts) -> tuple[tuple[float, float, str, str], ...]:
    """The device's time-current points [(Ia A, t s, status, source)]: at Ia or more it operates
    within t. From the instantaneous band of a breaker (BS EN 60898-1 Table 7), Table 41.3's 5 s
    multiple, a fuse's maximum-Zs tables read back as Ia = Cmin·230/Zs (Tables 41.2/41.4), a
    fuse's time-current zones (BS 1362), and the maker's max Zs (for the required time)."""
    return _points(f.circuit.device, f.ctx.supply.u0_v, f.t_req_s)


@lru_cache(maxsize=4096)
def _points(dev, u0_v: float, t_req_s: float) -> tuple[tuple[float, float, str, str], ...]:
    info = catalogue.device_info(dev.kind) or {}
    points: list[tuple[float, float, str, str]] = []
    if dev.max_zs_ohm is not None:
        ia = disconnection.ia_from_max_zs_a(u0_v, dev.max_zs_ohm)
        points.append((ia, t_req_s, "site", "within the maker's max Zs"))
    if dev.kind in BREAKERS:
        for t_s, table in ((info.get("instantaneous_time_s", 0.1), "instantaneous_multiple"),
                           (5.0, "five_s_multiple")):
            entry = info.get(table, {}).get(dev.curve)
            if entry:
                points.append((float(entry[0]) * dev.rating_a, float(t_s), str(entry[1]),
                               f"{float(entry[0]):g} In, type {dev.curve}"))
        return tuple(points)
    rating = dev.rating_a
    whole = float(rating).is_integer()
    for t_s in (0.4, 5.0):
        entry = ((info.get("max_zs_ohm") or {}).get(_table_key(t_s)) or {}).get(int(rating)) if whole else None
        if entry:
            ia = disconnection.ia_from_max_zs_a(TABLE_U0_V, float(entry[0]))
            points.append((ia, t_s, str(entry[1]), f"BS 7671 Table {'41.2' if t_s < 1 else '41.4'}"))
    zones = info.get("time_current", {}).get(int(rating)) if whole else None
    for current, t_s, status in zones or ():
        points.append((float(current), float(t_s), str(status), f"{info.get('standard', '')} time-current zone"))
    return tuple(points)


def overcurrent_time_s(f: Facts, loop_ohm: float) -> tuple[float | None, str, str]:
    """(time bound, how, data status) for the overcurrent device and a fault through `loop_ohm`.

    Every time here is an upper bound: the device operates within it. The current is taken at
    Cmin (0.95 U0 / Z: the lowest the supply may give), so the bound holds at any voltage.
    None with the reason, in words that state only what is known, where no point is reached.
    """
    t, status, describe = _time_bound(f, loop_ohm)
    return t, describe(), status


def _time_bound(f: Facts, loop_ohm: float) -> tuple[float | None, str, Callable[[], str]]:
    """(time bound, status, a function giving its words): the words are built only when shown."""
    current = disconnection.CMIN * f.ctx.supply.u0_v / loop_ohm
    points = time_points(f)
    best = None
    for p in points:
        if current >= p[0] and (best is None or p[1] < best[1]):
            best = p
    if best is not None:
        ia, t, status, source = best
        if status == "site":
            return t, status, lambda: f"t ≤ {t:g} s (loop within the maker's max Zs; an upper bound)"
        region = " in its instantaneous region" if f.circuit.device.kind in BREAKERS and t < 1 else ""
        return t, status, lambda: (f"t ≤ {t:g} s ({f.label}{region} at {current:.0f} A (at Cmin) ≥ {ia:.0f} A, "
                                   f"{source}; an upper bound){_note(status)}")
    if points:
        lowest = min(points, key=lambda p: p[0])
        return None, "", lambda: (f"fault current {current:.0f} A (at Cmin) is below {lowest[0]:.0f} A, the least "
                                  f"current held to operate the {f.label} within {lowest[1]:g} s ({lowest[3]}): its "
                                  "time-current data is needed")
    return None, "", lambda: (f"no time-current value held for a {f.label} (give device.max_zs_ohm or "
                              "device.let_through_a2s from the maker's data)")


def rcd_break_time_s(idn_ma: float, delayed: bool, current_a: float) -> tuple[float | None, str, float | None]:
    """(maximum break time, status, the multiple of IΔn it is tabulated at) of one RCD for a
    residual current, from the product standard's points (tracker/data/devices.yaml `rcd`): the
    time at the largest tabulated multiple the current reaches. None below IΔn (it need not trip)."""
    data = catalogue.device_info("rcd")
    table = data["delayed_break_time_s" if delayed else "break_time_s"]
    multiple = current_a / (idn_ma / 1000.0)
    reached = [m for m in table if multiple >= float(m)]
    if not reached:
        return None, "", None
    key = max(reached, key=float)
    t, status = table[key]
    return float(t), str(status), float(key)


def rcd_time_s(f: Facts, current_a: float) -> tuple[float | None, str, bool]:
    """(maximum break time, how, conclusive) of the fastest RCD that sees an earth fault current
    (a time-delayed, type S, RCD by its own longer times)."""
    best = None
    for rcd in f.rcds:
        t, status, at = rcd_break_time_s(rcd.idn_ma, rcd.delayed, current_a)
        if t is not None and (best is None or t < best[0]):
            best = (t, status, at, rcd)
    if best is None:
        return None, "", False
    t, status, at, rcd = best
    kind = "time-delayed (S) " if rcd.delayed else ""
    mark = "" if status == "seen" else f" [{status}]"
    standard = catalogue.device_info("rcd")["standard"]
    return t, f"t ≤ {t:g} s ({rcd.idn_ma:g} mA {kind}RCD, {rcd.at}, at ≥ {at:g} IΔn; {standard}){mark}", True


class FaultEnergy(NamedTuple):
    """The energy I²t let through to a fault, as far as the data tells it."""

    current_a: float
    upper_a2s: float | None   # the let-through is at most this (None: no bound known)
    lower_a2s: float | None   # the published let-through at a current at or below this one
    describe: Callable[[], str]   # where the figures come from, in words (built when shown)
    status: str               # the weakest status of the data used
    t_s: float | None = None  # the time bound, where the upper figure is I² t

    @property
    def how(self) -> str:
        return self.describe()


def _class_energy(f: Facts, current_a: float) -> FaultEnergy | None:
    """The let-through of a type B or C breaker's energy-limiting class at a prospective current
    (BS EN 60898-1 / 61009-1 Annex ZA; class 3 unless device.energy_class says otherwise)."""
    dev = f.circuit.device
    cls = dev.energy_class if dev.energy_class is not None else _default_class()
    found = catalogue.energy_class_rows(cls, dev.rating_a, dev.curve)
    if found is None:
        return None
    rows, values, band = found
    ia = instantaneous_ia_a(f)
    lt = let_through.class_let_through(current_a, rows, [v.value for v in values], ia,
                                       float((f.device_info or {}).get("instantaneous_time_s", 0.1)))
    by_row = dict(zip(rows, values))
    statuses = []
    if lt.upper_a2s is not None:
        statuses.append("derived" if lt.upper_row_a is None else by_row[lt.upper_row_a].status)
    if lt.lower_a2s is not None and lt.lower_row_a != lt.upper_row_a:
        statuses.append(by_row[lt.lower_row_a].status)

    def describe() -> str:
        assumed = "" if dev.energy_class is not None else ", assumed"
        parts = []
        if lt.upper_a2s is not None:
            if lt.upper_row_a is None:
                parts.append(f"at most {lt.upper_a2s:,.0f} A²s (line from Ia {ia:g} A at 0.1 s to the "
                             f"{rows[0] / 1000:g} kA row {values[0].value:,.0f} A²s) [derived]")
            else:
                v = by_row[lt.upper_row_a]
                parts.append(f"at most {lt.upper_a2s:,.0f} A²s ({lt.upper_row_a / 1000:g} kA row){_note(v.status)}")
        if lt.lower_a2s is not None and lt.lower_row_a != lt.upper_row_a:
            v = by_row[lt.lower_row_a]
            parts.append(f"at least the {lt.lower_a2s:,.0f} A²s of the {lt.lower_row_a / 1000:g} kA row"
                         f"{_note(v.status)}")
        if lt.upper_a2s is None:
            parts.append(f"beyond the table's {rows[-1] / 1000:g} kA")
        return (f"let-through of the {f.label} at {current_a:.0f} A (class {cls}{assumed}, type {dev.curve} up to "
                f"{band:g} A; BS EN 60898-1 Annex ZA): " + ", ".join(parts))

    return FaultEnergy(current_a, lt.upper_a2s, lt.lower_a2s, describe, _weakest(*statuses))


def _default_class() -> int:
    return int(catalogue.let_through_table()["default_class"])


def fault_energy(f: Facts, current_a: float, loop_ohm: float, rcd: bool = False) -> FaultEnergy:
    """What is known of the energy let through to a fault of `current_a` through `loop_ohm`.

    The upper figure is the least of: the maker's let-through (device.let_through_a2s), the
    energy-limiting class's (an MCB/RCBO in its instantaneous region), I² × the overcurrent
    device's time bound and, for an earth fault (`rcd`), I² × the RCD's break time. The lower
    figure is the maker's let-through, or the class's at the row at or below the current.
    """
    dev = f.circuit.device
    options: list[FaultEnergy] = []
    lower, lower_of = None, None
    t, t_status, t_words = _time_bound(f, loop_ohm)
    if dev.let_through_a2s is not None:
        lt = dev.let_through_a2s
        options.append(FaultEnergy(current_a, lt, lt, lambda: f"I²t {lt:,.0f} A²s (maker's let-through energy, "
                                                               "site file)", "site"))
        lower, lower_of = lt, options[-1]
    elif dev.kind in BREAKERS and t is not None and t < 1.0:
        cls = _class_energy(f, current_a)
        if cls is not None:
            if cls.upper_a2s is not None:
                options.append(cls)
            lower, lower_of = cls.lower_a2s, cls
    if t is not None:
        options.append(FaultEnergy(current_a, current_a ** 2 * t, None,
                                   lambda: f"I²t ≤ {current_a:.0f}² × {t:g} s; {t_words()}", t_status, t))
    if rcd:
        t_rcd, rcd_how, _ = rcd_time_s(f, current_a)
        if t_rcd is not None:
            options.append(FaultEnergy(current_a, current_a ** 2 * t_rcd, None,
                                       lambda: f"I²t ≤ {current_a:.0f}² × {t_rcd:g} s; {rcd_how}", "recalled", t_rcd))
    if not options:
        why = lower_of.describe if lower_of is not None else t_words
        return FaultEnergy(current_a, None, lower, why, "")
    best = min(options, key=lambda o: o.upper_a2s)
    describe = best.describe
    if lower is not None and lower_of is not None and lower_of is not best:
        describe = lambda: f"{best.describe()}; {lower_of.describe()}"   # noqa: E731
    return FaultEnergy(current_a, best.upper_a2s, lower, describe, best.status, best.t_s)


class Withstand(NamedTuple):
    status: str                 # pass | fail | not-assessed
    min_mm2: float | None       # the size the deciding figure needs: √(I²t)/k
    energy: FaultEnergy
    k: float


def withstand(energy: FaultEnergy, k: float, csa_mm2: float) -> Withstand:
    """The conductor against the energy: pass where the upper figure is within k²S²; fail where
    even the lower (published) figure exceeds it; otherwise not assessed (434.5.2, 543.1.3)."""
    limit = let_through.withstand_a2s(k, csa_mm2)
    if energy.upper_a2s is not None and energy.upper_a2s <= limit:
        return Withstand(PASS, math.sqrt(energy.upper_a2s) / k, energy, k)
    if energy.lower_a2s is not None and energy.lower_a2s > limit:
        return Withstand(FAIL, math.sqrt(energy.lower_a2s) / k, energy, k)
    need = math.sqrt(energy.upper_a2s) / k if energy.upper_a2s is not None else None
    return Withstand(NOT_ASSESSED, need, energy, k)


def _settles(label: str, current_a: float, breaker: bool) -> str:
    if breaker:
        return f"the maker's let-through I²t of the {label} at {current_a:.0f} A (device.let_through_a2s)"
    return (f"the {label}'s operating time at {current_a:.0f} A from its time-current characteristic "
            f"(BS 7671 Appendix 3), given as I² × t in device.let_through_a2s")


def undecided_reason(withstand: Withstand, what: str, label: str, breaker: bool = True) -> str:
    """Why a withstand is not assessed, and what would settle it."""
    e = withstand.energy
    settle = _settles(label, e.current_a, breaker)
    if e.upper_a2s is None:
        return f"no upper figure for the energy at {e.current_a:.0f} A, so {what} cannot be shown adequate: {settle}"
    return f"with only an upper figure for the energy {what} cannot be shown adequate or inadequate: {settle}"
