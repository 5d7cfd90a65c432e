"""Check results and their statuses."""
from __future__ import annotations

from collections.abc import Callable
from functools import lru_cache
from typing import NamedTuple

PASS, FAIL, WARN, NOT_ASSESSED = "pass", "fail", "warn", "not-assessed"
# Worst first. An unknown is worse than a caution: a not-assessed check has not been shown to hold.
SEVERITY = {FAIL: 3, NOT_ASSESSED: 2, WARN: 1, PASS: 0}

UNIT_DIGITS = {"A2s": 0, "A": 2, "V": 2, "%": 2, "ohm": 3, "mm2": 2, "kA": 2, "kW": 2, "mA": 0, "Mohm": 2, "ms": 1}


class CheckResult(NamedTuple):
    """One check's verdict. A plain immutable record (a named tuple: a whole estate's worth of
    them is cheap to hold and to pass between processes)."""

    id: str
    status: str
    value: float | None
    limit: float | None
    unit: str
    compare: str          # '<=' or '>=': `value compare limit` must hold
    detail: str
    # For checks that depend on the design current: the largest Ib at which the check still
    # holds (the engine's own figure, from which headroom is derived). None: independent of Ib.
    ib_limit_a: float | None = None

    def with_detail(self, detail: str) -> CheckResult:
        """The same verdict with `detail` as its text (as `_replace`, without its cost: a whole
        estate's verdicts pass through here)."""
        return tuple.__new__(CheckResult, (*self[:6], detail, self[7]))

    def margin(self) -> float | None:
        """How far inside the limit (negative: how far over), in the check's unit."""
        if self.value is None or self.limit is None:
            return None
        return self.limit - self.value if self.compare == "<=" else self.value - self.limit

    def as_json(self) -> dict:
        digits = UNIT_DIGITS.get(self.unit, 3)
        return {"id": self.id, "status": self.status,
                "value": _round(self.value, digits), "limit": _round(self.limit, digits),
                "unit": self.unit, "compare": self.compare, "detail": self.detail}


class Words(NamedTuple):
    """A check's working text, built only where it is shown: a function of the check's module and
    the values it reads. A check whose text costs formatting returns its verdict with an empty
    detail and its `Words` beside it (`registry.Outcome.words`); the circuit's evaluation calls
    `text()` only when the text is asked for (`check`, the report, an event, the UI's working),
    never in remedy trials or for a state kept in memory. A reason that is the verdict itself (why
    a check is not assessed) is written at once."""

    build: Callable[..., str]
    args: tuple = ()

    def text(self) -> str:
        return self.build(*self.args)


def words(build: Callable[..., str], *args) -> Words:
    """The text `build(*args)`, deferred until it is shown."""
    return Words(build, args)


def _round(x, digits):
    return None if x is None else round(x, digits)


def worst(statuses) -> str:
    out = PASS
    for s in statuses:
        if SEVERITY[s] > SEVERITY[out]:
            out = s
    return out


def not_assessed(check_id: str, unit: str, compare: str, why: str, value=None, limit=None) -> CheckResult:
    return CheckResult(check_id, NOT_ASSESSED, value, limit, unit, compare, _reason(why))


@lru_cache(maxsize=4096)
def _reason(why: str) -> str:
    """One text object for each reason: the same words on every circuit of an estate (nothing
    measured yet, a datum missing) are held once in a state kept in memory."""
    return f"not assessed: {why}"


def verdict(ok: bool) -> str:
    return PASS if ok else FAIL


def fmt(x: float, digits: int = 2) -> str:
    """A number for a detail line: no trailing zeros beyond what the digits show."""
    text = f"{x:.{digits}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return text
