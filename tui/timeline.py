"""An element's history, as the details screen's history tab lists it (no Textual here).

Built from `tracker.history.query.revisions(ref=..., newest_first=True)`: each revision becomes an
entry with a headline (what happened, when, who) and lines for its changes and events.
"""
from __future__ import annotations

from dataclasses import dataclass

from tracker.output.terminal_text import clean

from tui.wording import change_text, number

MAX_CHANGE_LINES = 6

HEADLINES = {"watch": "saved", "replace": "replacement logged", "startup": "found at start", "ack": "acknowledged",
             "date": "the date passed"}
EVENT_MARK = {"newly-failing": "▲", "worse": "▼", "cleared": "✓", "input-error": "⚠"}
EVENT_WORDS = {"newly-failing": "newly failing", "worse": "worse", "cleared": "cleared", "input-error": "input error"}
CHANGE_MARK = {"added": "+", "removed": "−", "modified": "~"}


@dataclass(frozen=True)
class Item:
    mark: str
    text: str
    kind: str          # 'change' | 'event' | 'ack' | 'note'
    transition: str = ""


@dataclass(frozen=True)
class Entry:
    revision: int
    at: str
    author: str
    headline: str
    file: str | None
    items: tuple[Item, ...]


def _event_text(e: dict, ref: str) -> str:
    if e["transition"] == "input-error":
        return e.get("detail") or "the file did not load"
    if e.get("check") == "deadline" and e.get("detail"):
        return f"deadline: {e['detail']}"
    where = "" if e["ref"] == ref else f"{e['ref'].split('/', 1)[-1] if '/' in e['ref'] else 'origin'} "
    figures = ""
    if e.get("value") is not None and e.get("limit") is not None:
        figures = f": {number(e['value'], e.get('unit'))} against {number(e['limit'], e.get('unit'))}"
    return f"{where}{e['check']} {EVENT_WORDS[e['transition']]}{figures}"


def entry(rev: dict, ref: str) -> Entry:
    first = rev["source"] == "startup" and (rev.get("note") or "").startswith("first record")
    headline = "first record" if first else HEADLINES.get(rev["source"], rev["source"])
    items: list[Item] = []
    if rev.get("note"):
        items.append(Item("“", clean(rev["note"]), "note"))
    if rev.get("ack"):
        checks = ", ".join(rev["ack"]["checks"]) or "—"
        later = rev["ack"].get("superseded_by")
        items.append(Item("△", f"acknowledged: {checks}" + (f" (superseded by revision {later})" if later else ""),
                          "ack"))
    changes = rev.get("changes") or []
    for c in changes[:MAX_CHANGE_LINES]:
        items.append(Item(CHANGE_MARK.get(c["change"], "~"), clean(change_text(c, ref)), "change"))
    if len(changes) > MAX_CHANGE_LINES:
        items.append(Item("…", f"{len(changes) - MAX_CHANGE_LINES} more changes", "change"))
    for e in rev.get("events") or []:
        items.append(Item(EVENT_MARK.get(e["transition"], "·"), clean(_event_text(e, ref)), "event", e["transition"]))
    return Entry(rev["id"], rev["at"], clean(rev["author"]), headline, rev.get("file"), tuple(items))


def timeline(revs: list[dict], ref: str) -> list[Entry]:
    """Entries newest first (the order `revs` comes in)."""
    return [entry(r, ref) for r in revs]
