"""`insulation-resistance`: the lowest insulation resistance measured on the circuit against the
minimum of BS 7671:2018 Table 64 for its nominal voltage (643.3.2), at the row's test voltage
(643.3.3 allows 250 V d.c. where connected equipment could be damaged; the minimum stays)."""
from __future__ import annotations

from tracker.checks.context import Facts
from tracker.checks.registry import CheckSpec, Outcome
from tracker.checks.readings import Readings
from tracker.checks.result import FAIL, PASS, WARN, CheckResult, fmt, not_assessed
from tracker.checks.working import IF_KNOWN, figure, record
from tracker.engine import measured

ID = "insulation-resistance"
UNIT = "Mohm"
REDUCED_TEST_V = 250.0   # 643.3.3



@record
class InsulationWorking:
    ir_mohm: float | None = figure("Mohm", "the lowest insulation resistance measured")
    ir_min_mohm: float | None = figure("Mohm", "the minimum of BS 7671 Table 64 for the circuit's voltage", IF_KNOWN)
    ir_measured_on: str | None = figure("", "the day of the inspection (YYYY-MM-DD)", IF_KNOWN, str)


CHECK = CheckSpec(
    id=ID, rank=120, stage=110, name="insulation resistance", unit=UNIT, compare=">=",
    gauge=None, record=InsulationWorking,
    fix=("find and clear the insulation fault: disconnect the equipment, test the circuit in sections to "
         "locate it, repair or renew the damaged cable or accessory, then test again (common practice)"),
)

_FIELDS = {'ir_mohm': 'ir_mohm', 'ir_min_mohm': 'ir_min_mohm', 'measured_on': 'ir_measured_on'}


def run(f: Facts, done) -> Outcome:
    """The check on the circuit's latest readings (`f.readings`); not assessed where none."""
    result, figures = assess(f, f.readings)
    if not figures:
        return Outcome(result)
    return Outcome(result, InsulationWorking(**{_FIELDS[k]: v for k, v in figures.items() if k in _FIELDS}))

def assess(f: Facts, rd: Readings | None) -> tuple[CheckResult, dict]:
    ir = rd.measurement.ir_mohm if rd is not None else None
    if ir is None:
        return not_assessed(ID, UNIT, ">=", "nothing measured (no ir_mohm in an inspection's results)"), {}
    u0 = f.ctx.supply.u0_v
    row, row_test_v, minimum = measured.table64_row(u0)
    test_v = rd.measurement.ir_test_v
    working = {"ir_mohm": ir, "ir_min_mohm": minimum, "measured_on": rd.date.isoformat()}
    head = f"{fmt(ir)} MΩ measured {rd.date.isoformat()}"
    table = f"Table 64, circuits {row}: {minimum:g} MΩ at {row_test_v:g} V d.c."
    if test_v is None:
        note = f"test voltage not recorded ({row_test_v:g} V taken)"
    elif test_v == row_test_v:
        note = f"at {test_v:g} V"
    elif test_v == REDUCED_TEST_V and row_test_v > REDUCED_TEST_V:
        note = f"at {test_v:g} V, the reduced voltage 643.3.3 allows with equipment connected"
    elif test_v > row_test_v and measured.min_insulation_mohm(test_v) is not None:
        note = f"at {test_v:g} V (above the row's {row_test_v:g} V)"
    else:
        return not_assessed(ID, UNIT, ">=", f"{head} at {test_v:g} V, a test voltage Table 64 does not name for "
                                            f"this circuit ({table})", value=ir, limit=minimum), working
    if ir < minimum:
        return CheckResult(ID, FAIL, ir, minimum, UNIT, ">=", f"{head} {note} < {table} — 643.3.2"), working
    if test_v is not None and test_v < row_test_v:
        return CheckResult(ID, WARN, ir, minimum, UNIT, ">=",
                           f"{head} {note} ≥ {minimum:g} MΩ; a test at {row_test_v:g} V with the equipment "
                           f"disconnected would show the cables' insulation itself ({table})"), working
    return CheckResult(ID, PASS, ir, minimum, UNIT, ">=", f"{head} {note} ≥ {table} — 643.3.2"), working
