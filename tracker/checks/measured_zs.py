"""`measured-zs`: the earth fault loop impedance measured at an inspection against the maximum for
the protective device and the disconnection time required (BS 7671:2018 411.4.4, Tables 41.2–41.5),
the reading being at the test temperature and the maximum at the conductors' operating temperature:
a reading within 0.8 of the maximum passes (the rule of thumb of common practice); one above the
maximum fails; between the two the Appendix 3 correction decides (Ze + (Zs − Ze) raised to the
operating temperature) where Ze is known."""
from __future__ import annotations

from tracker.checks import protection
from tracker.checks.context import Facts
from tracker.checks.registry import CheckSpec, Outcome
from tracker.checks.readings import Readings
from tracker.checks.result import FAIL, PASS, WARN, CheckResult, fmt, not_assessed
from tracker.checks.working import IF_KNOWN, figure, record
from tracker.engine import disconnection, measured

ID = "measured-zs"



@record
class MeasuredZsWorking:
    measured_zs_ohm: float | None = figure("ohm", "Zs measured at the latest inspection that measured the circuit")
    measured_on: str | None = figure("", "the day of that inspection (YYYY-MM-DD)", IF_KNOWN, str)
    measured_max_zs_ohm: float | None = figure("ohm", "the tabulated maximum Zs of the device (BS 7671 Tables 41.2-41.4)",
                                               IF_KNOWN)
    zs_at_operating_ohm: float | None = figure("ohm", "the reading raised to the conductors' operating temperature "
                                                      "(BS 7671 Appendix 3)", IF_KNOWN)


CHECK = CheckSpec(
    id=ID, rank=110, stage=110, name="measured earth fault loop, Zs", unit="ohm", compare="<=",
    gauge="reading/max", record=MeasuredZsWorking,
    fix=("find why the reading is high before anything is changed (a loose or corroded connection at the "
         "board or an accessory, a longer route or a smaller cpc than recorded), put it right and measure Zs "
         "again; if the route is as recorded, the design changes of the circuit bring Zs down (common practice)"),
)

_FIELDS = {'measured_zs_ohm': 'measured_zs_ohm', 'measured_on': 'measured_on', 'max_zs_ohm': 'measured_max_zs_ohm', 'zs_at_operating_ohm': 'zs_at_operating_ohm'}


def run(f: Facts, done) -> Outcome:
    """The check on the circuit's latest readings (`f.readings`); not assessed where none."""
    result, figures = assess(f, f.readings)
    if not figures:
        return Outcome(result)
    return Outcome(result, MeasuredZsWorking(**{_FIELDS[k]: v for k, v in figures.items() if k in _FIELDS}))

def _when(rd: Readings) -> str:
    return f"measured {rd.date.isoformat()}"


def assess(f: Facts, rd: Readings | None) -> tuple[CheckResult, dict]:
    zs = rd.measurement.zs_ohm if rd is not None else None
    if zs is None:
        return not_assessed(ID, "ohm", "<=", "nothing measured (no zs_ohm in an inspection's results)"), {}
    sup = f.ctx.supply
    ze = rd.ze_ohm if rd.ze_ohm is not None else sup.ze_ohm
    ze_how = (f"Ze {ze:g} Ω measured at the inspection" if rd.ze_ohm is not None
              else f"Ze {ze:g} Ω of the supply" if ze is not None else "")
    working = {"measured_zs_ohm": zs, "measured_on": rd.date.isoformat()}
    if sup.system != "TT" and ze is not None and zs < ze:
        return not_assessed(ID, "ohm", "<=", f"implausible record: Zs {fmt(zs, 3)} Ω ({_when(rd)}) is below "
                                             f"{ze_how}, and a loop through the circuit cannot be less than the "
                                             "supply's alone — re-measure", value=zs), working
    if sup.system == "TT":
        return _by_rcd(f, rd, zs, working, tt=True)
    limit, limit_how, _status = protection.max_zs_ohm(f)
    if limit is None:
        if f.rcd_ma is not None:
            return _by_rcd(f, rd, zs, working, tt=False, device_note=limit_how)
        return not_assessed(ID, "ohm", "<=", f"Zs {fmt(zs, 3)} Ω {_when(rd)}; {limit_how}", value=zs), working
    working["max_zs_ohm"] = limit
    rule = measured.measured_zs_limit_ohm(limit)
    head = f"Zs {fmt(zs, 3)} Ω {_when(rd)}"
    t_txt = f"disconnection in {f.t_req_s:g} s"
    if zs <= rule:
        return CheckResult(ID, PASS, zs, rule, "ohm", "<=",
                           f"{head} ≤ 0.8 × {limit_how} = {rule:.2f} Ω (0.8 rule of thumb for a reading at "
                           f"ambient, common practice); {t_txt} — 411.4.4"), working
    operating_c = f.kind.conductor_c if f.kind is not None else 70.0
    if zs > limit:
        return _over(f, rd, zs, limit, f"{head} exceeds {limit_how} even before the conductors warm "
                                       f"to {operating_c:g} °C: the {f.label} will not give {t_txt} — 411.4.4", working)
    if ze is None:
        return not_assessed(ID, "ohm", "<=", f"{head} is above 0.8 × {limit_how} = {rule:.2f} Ω but within the "
                                             "maximum; Ze is needed for the Appendix 3 correction (ze_ohm at the "
                                             "inspection or of the supply)", value=zs, limit=rule), working
    hot = measured.zs_at_operating_ohm(zs, ze, operating_c, rd.test_temp_c)
    allowed = measured.max_measured_zs_ohm(limit, ze, operating_c, rd.test_temp_c)
    working["zs_at_operating_ohm"] = hot
    how = (f"{head} at {rd.test_temp_c:g} °C; by the Appendix 3 correction, {ze_how} + (Zs − Ze) × "
           f"{measured.temperature_ratio(operating_c, rd.test_temp_c):.3f} "
           f"= {hot:.3f} Ω at {operating_c:g} °C")
    if hot <= limit:
        return CheckResult(ID, PASS, zs, allowed, "ohm", "<=", f"{how} ≤ {limit_how}; {t_txt} — 411.4.4"), working
    return _over(f, rd, zs, allowed, f"{how} > {limit_how}: the {f.label} will not give {t_txt} — 411.4.4", working)


def _over(f: Facts, rd: Readings, zs: float, limit: float, detail: str, working: dict) -> tuple[CheckResult, dict]:
    """Over the device's limit: an RCD providing fault protection may still cover it (Table 41.5)."""
    if f.rcd_ma is not None:
        rcd_limit = disconnection.max_zs_rcd_ohm(f.rcd_ma)
        if zs <= rcd_limit:
            return CheckResult(ID, WARN, zs, rcd_limit, "ohm", "<=",
                               f"{detail}; fault protection relies on the {f.rcd_ma:g} mA RCD: Zs ≤ {disconnection.TOUCH_VOLTAGE_V:g} V / IΔn "
                               f"= {rcd_limit:.0f} Ω (Table 41.5)"), working
    return CheckResult(ID, FAIL, zs, limit, "ohm", "<=", detail), working


def _by_rcd(f: Facts, rd: Readings, zs: float, working: dict, tt: bool, device_note: str = "") -> tuple[CheckResult, dict]:
    if f.rcd_ma is None:
        why = "TT system with no RCD recorded on this circuit" if tt else device_note
        return not_assessed(ID, "ohm", "<=", f"Zs {fmt(zs, 3)} Ω {_when(rd)}; {why}", value=zs), working
    rcd_limit = disconnection.max_zs_rcd_ohm(f.rcd_ma)
    ok = zs <= rcd_limit
    what = ("TT: Zs, an upper bound of RA, × IΔn" if tt else f"{device_note}; fault protection by the RCD")
    detail = (f"Zs {fmt(zs, 3)} Ω {_when(rd)} {'≤' if ok else '>'} {disconnection.TOUCH_VOLTAGE_V:g} V / {f.rcd_ma:g} mA = {rcd_limit:.0f} Ω "
              f"({what}; Table 41.5, 411.5.3)")
    status = (PASS if tt else WARN) if ok else FAIL
    return CheckResult(ID, status, zs, rcd_limit, "ohm", "<=", detail), working
