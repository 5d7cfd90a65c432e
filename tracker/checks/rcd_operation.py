"""`rcd-operation`: the RCD's operating time measured at IΔn against its product standard's limit
(BS EN 61008-1 / 61009-1: a general RCD within 300 ms; a time-delayed type S between 130 and
500 ms), as BS 7671:2018 643.8 asks the effectiveness of an RCD to be verified."""
from __future__ import annotations

from tracker import catalogue
from tracker.checks.context import Facts
from tracker.checks.registry import CheckSpec, Outcome
from tracker.checks.readings import Readings
from tracker.checks.result import FAIL, PASS, WARN, CheckResult, fmt, not_assessed
from tracker.checks.working import IF_KNOWN, figure, record

ID = "rcd-operation"
UNIT = "ms"



@record
class RcdOperationWorking:
    rcd_ms: float | None = figure("ms", "the RCD's operating time measured at IΔn")
    rcd_max_ms: float | None = figure("ms", "the longest its product standard allows at IΔn (BS EN 61008-1/61009-1)",
                                      IF_KNOWN)
    rcd_measured_on: str | None = figure("", "the day of the inspection (YYYY-MM-DD)", IF_KNOWN, str)


CHECK = CheckSpec(
    id=ID, rank=130, stage=110, name="RCD operating time", unit=UNIT, compare="<=",
    gauge="time / limit", record=RcdOperationWorking,
    fix=("test the RCD again with the circuit's loads disconnected; if it is still too slow, replace it and "
         "test the new one (common practice)"),
)

_FIELDS = {'rcd_ms': 'rcd_ms', 'rcd_max_ms': 'rcd_max_ms', 'measured_on': 'rcd_measured_on'}


def run(f: Facts, done) -> Outcome:
    """The check on the circuit's latest readings (`f.readings`); not assessed where none."""
    result, figures = assess(f, f.readings)
    if not figures:
        return Outcome(result)
    return Outcome(result, RcdOperationWorking(**{_FIELDS[k]: v for k, v in figures.items() if k in _FIELDS}))

def _delay(f: Facts) -> tuple[str, str]:
    """The RCD's delay ('general' or 'S') and how it was found."""
    # the nearest RCD (the circuit's own, else its board's or above): Facts.rcds, from rcd_delay
    given = f.rcds[0].data.delay if f.rcds else None
    if given == "general" and not any(r.data != type(r.data)() for r in f.rcds[:1]):
        given = None     # nothing recorded of the RCD: general is the default, said so below
    if given in ("general", "S"):
        return given, f"type {given}" if given == "S" else "general (no delay)"
    return "general", "general (no delay) taken: give rcd_delay: S for a time-delayed RCD"


def assess(f: Facts, rd: Readings | None) -> tuple[CheckResult, dict]:
    t = rd.measurement.rcd_ms if rd is not None else None
    if t is None:
        return not_assessed(ID, UNIT, "<=", "nothing measured (no rcd_ms in an inspection's results)"), {}
    head = f"{fmt(t, 1)} ms at IΔn measured {rd.date.isoformat()}"
    if f.rcd_ma is None:
        return not_assessed(ID, UNIT, "<=", f"{head}, but the site file gives no RCD for this circuit (rcd_ma on "
                                            "the circuit or its board)", value=t), {"rcd_ms": t}
    delay, delay_how = _delay(f)
    shortest, longest = catalogue.rcd_time_limits_ms(delay, 1)
    working = {"rcd_ms": t, "rcd_max_ms": longest, "measured_on": rd.date.isoformat()}
    standard = f"{f.rcd_ma:g} mA RCD, {delay_how}: {catalogue.device_info('rcd')['standard']}"
    if t > longest:
        return CheckResult(ID, FAIL, t, longest, UNIT, "<=",
                           f"{head} > {longest:g} ms ({standard}) — 643.8"), working
    if shortest is not None and t < shortest:
        return CheckResult(ID, WARN, t, longest, UNIT, "<=",
                           f"{head} is faster than the {shortest:g} ms a type S must hold off ({standard}): it "
                           "will not wait for an RCD downstream (selectivity, 536.4.1.4)"), working
    band = f"{shortest:g}–{longest:g} ms" if shortest is not None else f"≤ {longest:g} ms"
    return CheckResult(ID, PASS, t, longest, UNIT, "<=", f"{head}, {band} ({standard}) — 643.8"), working
