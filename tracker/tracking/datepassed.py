"""Deadlines the date passes: when the local date changes (and at start), every site's items now
overdue that the history does not hold as overdue are recorded, once, in a revision of the date's
own per site (source `date`, no file, by "izwatch (date passed)": tracker/history/datepassed.py).

The history is read and written in one transaction under its write lock, so a restart, or a second
watcher on the same history, finds the items held and records nothing more. Due-soon is a state
of `izwatch due` and the UI's view only: the history's events have no such transition.
"""
from __future__ import annotations

import datetime
from collections.abc import Callable
from dataclasses import dataclass

from tracker.history import NewRevision
from tracker.history.datepassed import DATE_AUTHOR, DATE_SOURCE, deadline_events
from tracker.history.store import Recorded
from tracker.inspection.events import newly_overdue, overdue_items


@dataclass(frozen=True)
class DatePassed:
    """One site's deadlines the date made overdue, and the revision recording them."""

    site: str
    on: datetime.date
    events: tuple[dict, ...]
    recorded: Recorded


def note_for(on: datetime.date) -> str:
    return (f"overdue on {on.isoformat()} by the passing of the date: no file changed and no person acted "
            "(recorded by izwatch)")


def record_date(sites, history, on: datetime.date, overdue: dict | None = None) -> list[DatePassed]:
    """Record, for each of `sites` ((Site, its network-operator outcome or None) pairs), the
    deadlines overdue on `on` that the history does not hold as overdue; the recorded revisions,
    one per site with anything new. `overdue`: site id -> its items overdue on `on`, for sites
    not read (from their briefs: tracker.tracking.warm)."""
    candidates = {s.id: items for s, origin in sites
                  if s is not None and (items := overdue_items(s, on, origin))}
    candidates.update({site_id: items for site_id, items in (overdue or {}).items() if items})
    if not candidates:
        return []
    planned: list[tuple[str, list[dict]]] = []

    def make(h) -> list[NewRevision]:
        planned.clear()
        recorded = deadline_events(h, {i.ref for items in candidates.values() for i in items})
        revs = []
        for site_id, items in sorted(candidates.items()):
            events = newly_overdue(items, recorded, on)
            if events:
                planned.append((site_id, events))
                revs.append(NewRevision(source=DATE_SOURCE, author=DATE_AUTHOR, site=site_id, note=note_for(on),
                                        events=events))
        return revs

    recs = history.record_checked(make)
    return [DatePassed(site_id, on, tuple(events), rec) for (site_id, events), rec in zip(planned, recs)]
