"""Words, symbols and number formats shared by every screen (no Textual here).

A state is always shown as a symbol *and* a word, so nothing depends on colour alone: the
colour a stylesheet adds is a second cue, and with NO_COLOR the words carry it all.
"""
from __future__ import annotations

from datetime import date, datetime, timezone

from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, WARN
from tracker.output import figures
from tracker.output.times import local_stamp

# The state of a circuit in the UI: the engine's status, with failing circuits split by
# whether somebody has acknowledged them since they last got worse.
NEW, ACKED = "new", "acknowledged"
STATES = (NEW, ACKED, WARN, NOT_ASSESSED, PASS)

STATE_MARK = {NEW: "▲", ACKED: "△", WARN: "!", NOT_ASSESSED: "?", PASS: "✓"}
STATE_SHORT = {NEW: "NEW", ACKED: "ACK'D", WARN: "warn", NOT_ASSESSED: "n/a", PASS: "ok"}
STATE_WORDS = {NEW: "newly broken", ACKED: "acknowledged", WARN: "warning", NOT_ASSESSED: "not assessed",
               PASS: "passing"}

STATUS_MARK = {FAIL: "✗", WARN: "!", NOT_ASSESSED: "?", PASS: "✓"}
STATUS_WORD = {FAIL: "FAIL", WARN: "warn", NOT_ASSESSED: "not assessed", PASS: "pass"}


# Field names carry their unit (`power_kw`); shown as "power … kW".
_FIELD_UNITS = (("_mm2", "mm²"), ("_ohm", "Ω"), ("_kw", "kW"), ("_ka", "kA"), ("_ma", "mA"), ("_mm", "mm"),
                ("_a", "A"), ("_v", "V"), ("_m", "m"), ("_c", "°C"), ("_s", "s"))


unit = figures.unit_shown     # 'ohm' -> 'Ω'
number = figures.quantity     # an engine figure with its unit: '35.00 A', or '—'
plain = figures.as_written    # a recorded old/new value as written in a site file


def field_and_unit(field: str | None) -> tuple[str, str]:
    """'cable.csa_mm2' -> ('cable csa', 'mm²'); a field without a unit suffix keeps its name."""
    if not field:
        return "", ""
    name = field
    for suffix, u in _FIELD_UNITS:
        if name.endswith(suffix):
            return name[: -len(suffix)].replace(".", " ").replace("_", " "), u
    return name.replace(".", " ").replace("_", " "), ""


def short_ref(ref: str, within: str) -> str:
    """A ref written relative to `within` (a circuit or a site): the part that differs."""
    if ref == within:
        return ""
    if ref.startswith(within + "/"):
        return ref[len(within) + 1:]
    site = within.split("/")[0]
    if ref.startswith(site + "/"):
        return ref[len(site) + 1:]
    return ref


def change_text(change: dict, within: str) -> str:
    """One recorded change, e.g. 'shower power 7.5 → 8.5 kW' or 'WS1/4 added'."""
    where = short_ref(change["ref"], within)
    if change["change"] != "modified":
        return f"{where or 'this circuit'} {change['change']}"
    name, u = field_and_unit(change.get("field"))
    values = figures.change(change.get("old"), change.get("new"), u)
    return " ".join(x for x in (where, name, values) if x)


def parse_at(at: str | None) -> datetime | None:
    if not at:
        return None
    try:
        return datetime.fromisoformat(at.replace("Z", "+00:00"))
    except ValueError:
        return None


def ago(at: str | None, now: datetime) -> str:
    """'just now', '5 min ago', '3 h ago', '2 d ago', or the date for anything older than a month."""
    when = parse_at(at)
    if when is None:
        return "—"
    seconds = (now - when).total_seconds()
    if seconds < 45:
        return "just now"
    if seconds < 3600:
        return f"{max(1, round(seconds / 60))} min ago"
    if seconds < 86400:
        return f"{round(seconds / 3600)} h ago"
    if seconds < 31 * 86400:
        return f"{round(seconds / 86400)} d ago"
    return when.strftime("%Y-%m-%d")


def stamp(at: str | None) -> str:
    """An absolute time (recorded in UTC) in local time with its offset, to the minute:
    '2026-12-01 09:14 +00:00'."""
    when = parse_at(at)
    return "—" if when is None else local_stamp(when)


def utc_now() -> datetime:
    return datetime.now(timezone.utc)


def local_day(moment: datetime) -> date:
    """The local date of a moment (a deadline's day is the local day, as `izwatch due` takes it)."""
    return moment.astimezone().date() if moment.tzinfo is not None else moment.date()
