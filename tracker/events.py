"""Events of a revision (SPEC §6): their one definition, and the only places they are made.

Made by `tracker.tracking.transitions` (a check's transition), by the tracking of a file that does
not load (an input error) and read back from the history (`tracker.history.query`); read by the
store, the watch and replace lines, `history`, the report and the UI. No imports: the history's
readers use it without loading the checks.
"""

from typing import NotRequired, TypedDict

NEWLY_FAILING, CLEARED, WORSE, INPUT_ERROR = "newly-failing", "cleared", "worse", "input-error"
TRANSITIONS = (NEWLY_FAILING, CLEARED, WORSE, INPUT_ERROR)


class Event(TypedDict):
    """One event of a revision (SPEC §6), as made here, stored in the history and read back from it
    (`tracker.history.query`). The one definition every reader relies on."""

    ref: str                      # the element's ref; for an input error, the site (or the file)
    check: str | None             # the check's id; None for an input error
    transition: str               # one of TRANSITIONS
    detail: str | None            # the check's detail, or the input errors in words
    value: NotRequired[float | None]   # the check's figures after the change (none for an input error)
    limit: NotRequired[float | None]
    unit: NotRequired[str | None]
    compare: NotRequired[str]     # as made (the history keeps value, limit and unit, not compare)


def check_event(ref: str, r, kind: str, detail: str | None = None) -> Event:
    """A check's transition, with its figures after the change."""
    return {"ref": ref, "check": r.id, "transition": kind, "value": r.value, "limit": r.limit,
            "unit": r.unit, "compare": r.compare, "detail": r.detail if detail is None else detail}


def input_error_event(ref: str, text: str) -> Event:
    """A file that does not load: its site (or file) and the errors in words."""
    return {"ref": ref, "check": None, "transition": INPUT_ERROR, "detail": text}


def stored_event(ref: str, check: str | None, transition: str, value, limit, unit, detail) -> Event:
    """An event as the history keeps it."""
    return {"ref": ref, "check": check, "transition": transition, "value": value, "limit": limit, "unit": unit,
            "detail": detail}
