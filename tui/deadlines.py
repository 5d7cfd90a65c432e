"""The deadlines view's rows: every due item of every site the UI shows, on the day the UI's
clock says, overdue first (no Textual here)."""
from __future__ import annotations

import datetime
from dataclasses import dataclass

from tracker.inspection import due as dues
from tracker.output.terminal_text import clean

ORDER = {dues.OVERDUE: 0, dues.DUE_SOON: 1, dues.OK: 2, dues.DONE: 3}
MARK = {dues.OVERDUE: "▲", dues.DUE_SOON: "!", dues.OK: "·", dues.DONE: "✓"}
WORD = {dues.OVERDUE: "OVERDUE", dues.DUE_SOON: "due soon", dues.OK: "ok", dues.DONE: "done"}


@dataclass(frozen=True, slots=True)
class DueRow:
    site: str
    due: str
    status: str
    what: str
    source: str
    ref: str

    @property
    def mark(self) -> str:
        return f"{MARK[self.status]} {WORD[self.status]}"


def rows(snapshot, on: datetime.date, show_done: bool = False) -> list[DueRow]:
    """Overdue first, then due soon, then the rest, each by date; done items only if asked."""
    items = []
    for sr in snapshot.sites.values():
        items.extend(dues.site_items(sr.site, on, sr.notification))
    if not show_done:
        items = [i for i in items if i.status != dues.DONE]
    items.sort(key=lambda i: (ORDER[i.status], i.due, i.site, i.what))
    return [DueRow(clean(i.site), i.due.isoformat(), i.status, clean(i.what), clean(i.source), clean(i.ref))
            for i in items]


def counts(snapshot, on: datetime.date) -> dict[str, int]:
    out = {s: 0 for s in dues.STATUSES}
    for sr in snapshot.sites.values():
        for i in dues.site_items(sr.site, on, sr.notification):
            out[i.status] += 1
    return out
