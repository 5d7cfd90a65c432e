"""Deadlines a change makes overdue (or puts right), as events of the revision that records the
change: an added inspection whose 28 days have already run out, a completion date removed, a
shorter next date set. An item becoming overdue while nothing changes is not an event of any
revision: `izwatch due` (exit 1) and the UI's deadlines view show it on the day."""
from __future__ import annotations

import datetime

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
            "unit": "days", "compare": "<=", "detail": detail}


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
