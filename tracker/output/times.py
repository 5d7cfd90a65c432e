"""Times as people read them: the history keeps UTC (`2026-12-02T00:33:31.454Z`); what is shown is
the local time with its offset from UTC (`2026-12-02 01:33:31 +01:00`), so that it is both the
clock on the wall and unambiguous."""
from __future__ import annotations

from datetime import datetime, timezone


def parse_utc(at: str | None) -> datetime | None:
    """A time as the history writes it → an aware datetime (None when absent or unreadable)."""
    if not at:
        return None
    try:
        when = datetime.fromisoformat(at.replace("Z", "+00:00"))
    except ValueError:
        return None
    return when if when.tzinfo is not None else when.replace(tzinfo=timezone.utc)


def local_stamp(at: str | datetime | None, seconds: bool = False) -> str:
    """`at` in the local time zone with its offset: '2026-12-02 01:33 +01:00' ('—' when absent)."""
    when = at if isinstance(at, datetime) else parse_utc(at)
    if when is None:
        return "—" if not at else str(at)
    local = when.astimezone()
    offset = local.strftime("%z")
    offset = f"{offset[:3]}:{offset[3:]}" if len(offset) == 5 else offset
    return local.strftime("%Y-%m-%d %H:%M:%S" if seconds else "%Y-%m-%d %H:%M") + f" {offset}"
