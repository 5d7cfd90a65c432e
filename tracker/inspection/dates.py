"""Counting a period the way a regulation words it (see tracker/data/deadlines.yaml).

Every function returns the *last* day on which the duty is still done in time.
"""
from __future__ import annotations

import datetime

COUNTINGS = ("beginning-with", "after", "interval", "years-beginning-with")


def days_beginning_with(start: datetime.date, days: int) -> datetime.date:
    """The last day of a period of `days` days beginning (or starting) with `start`: `start` is
    day 1. 28 days starting with 2026-03-11 end on 2026-04-07."""
    return start + datetime.timedelta(days=days - 1)


def days_after(start: datetime.date, days: int) -> datetime.date:
    """The last day 'within `days` days of' `start`, the day of `start` not counted (the usual
    reading in English law; common practice). 28 days of 2026-03-30 end on 2026-04-27."""
    return start + datetime.timedelta(days=days)


def anniversary(start: datetime.date, years: int) -> datetime.date:
    """The same day `years` years on; 29 February falls back to 28 February (the earlier day, so
    that a deadline is never read later than the law allows)."""
    try:
        return start.replace(year=start.year + years)
    except ValueError:
        return start.replace(year=start.year + years, day=28)


def years_interval(start: datetime.date, years: int) -> datetime.date:
    """'At intervals of no more than `years` years': the next one by the same day `years` on."""
    return anniversary(start, years)


def years_beginning_with(start: datetime.date, years: int) -> datetime.date:
    """The last day of 'the period of `years` years beginning with' `start`: the day before the
    anniversary (5 years beginning with 2026-03-11 end on 2031-03-10)."""
    return anniversary(start, years) - datetime.timedelta(days=1)


def period_end(start: datetime.date, period: dict) -> datetime.date:
    """`period` as the rules file gives it: {days: N | years: N, counting: ...}."""
    counting = period["counting"]
    if "days" in period:
        n = int(period["days"])
        if counting == "beginning-with":
            return days_beginning_with(start, n)
        if counting == "after":
            return days_after(start, n)
    elif "years" in period:
        n = int(period["years"])
        if counting == "interval":
            return years_interval(start, n)
        if counting == "years-beginning-with":
            return years_beginning_with(start, n)
    raise ValueError(f"period {period!r}: unknown counting {counting!r} for its unit")
