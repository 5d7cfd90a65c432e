"""Deadlines a change makes overdue (or puts right), as events of the revision that records the
change: an added inspection whose 28 days have already run out, a completion date removed, a
shorter next date set. An item becoming overdue while nothing changes is recorded by the watcher
in a revision of the date's own (`newly_overdue`; tracker/tracking/datepassed.py), once: the
history's own deadline events say what it already holds."""
from __future__ import annotations

import datetime
import re

from tracker.inspection import due as dues
from tracker.model import Site

CHECK = "deadline"   # the check id the events carry (no circuit check has it)


def _overdue(site: Site | None, on: datetime.date, origin=None) -> dict[tuple, dues.DueItem]:
    if site is None:
        return {}
    return {(i.ref, i.duty, i.about): i for i in dues.site_items(site, on, origin) if i.status == dues.OVERDUE}


def _event(i: dues.DueItem, transition: str, on: datetime.date) -> dict:
    late = (on - i.due).days
    detail = (f"overdue since {i.due.isoformat()}: {i.what} ({i.source})" if transition == "newly-failing"
              else f"no longer overdue: {i.what}")
    return {"ref": i.ref, "check": CHECK, "transition": transition, "value": float(late), "limit": 0.0,
            "unit": "days", "compare": "<=", "detail": detail, "what": i.what, "due": i.due.isoformat()}


def deadline_events(old: Site | None, new: Site | None, on: datetime.date,
                    old_origin=None, new_origin=None) -> list[dict]:
    """newly-failing for each deadline overdue after the change and not before it; cleared for
    each overdue before and not after (done, or no longer asked for). `old_origin`/`new_origin`:
    the network-operator outcomes of the two evaluations the change already made
    (`SiteResult.notification`), so neither site is evaluated again for its deadlines."""
    before, after = _overdue(old, on, old_origin), _overdue(new, on, new_origin)
    out = [_event(i, "newly-failing", on) for k, i in after.items() if k not in before]
    out += [_event(i, "cleared", on) for k, i in before.items() if k not in after]
    return out


_SINCE = re.compile(r"overdue since \d{4}-\d{2}-\d{2}: ")


def _held(i: dues.DueItem, recorded: list[tuple[str, str, str]]) -> bool:
    """Whether the history holds `i` as overdue: its last deadline event for the item (the same ref
    and wording, in `_event`'s details) is newly-failing."""
    held = False
    for ref, transition, detail in recorded:
        if ref != i.ref:
            continue
        if transition == "newly-failing":
            m = _SINCE.match(detail)
            if m and detail[m.end():].startswith(i.what + " ("):
                held = True
        elif transition == "cleared" and detail == f"no longer overdue: {i.what}":
            held = False
    return held


def overdue_items(site: Site | None, on: datetime.date, origin=None) -> list[dues.DueItem]:
    """The site's items overdue on the day `on` (`origin`: the site's network-operator outcome,
    `SiteResult.notification`, where an evaluation already made it)."""
    return list(_overdue(site, on, origin).values())


def newly_overdue(items: list[dues.DueItem], recorded: list[tuple[str, str, str]],
                  on: datetime.date) -> list[dict]:
    """A newly-failing event for each overdue item in `items` that the history's deadline events
    (`recorded`: (ref, transition, detail), oldest first) do not hold as overdue. Only the passing
    of days makes these: an item a change made overdue is in that change's revision already."""
    return [_event(i, "newly-failing", on) for i in items if not _held(i, recorded)]
