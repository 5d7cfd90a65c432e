"""Warnings of a file that loads (a key not in the schema, ignored), carried with the change that
brought them, so that `watch`, the UI and the history show what `check` shows.

A misspelt key is ignored, so its element takes the key's default: `grouped_wth: 3` leaves
`grouped_with` at 1 and may clear a problem that is still there. A change of an element that a
new "did you mean" warning explains is flagged: the history's note of the revision says so, and
the report and `history` show that note.
"""
from __future__ import annotations

import re

from tracker.loading.errors import format_path

MAX_IN_NOTE = 5
_SUGGESTED = re.compile(r"did you mean '([^']+)'")


def _key(warning) -> tuple:
    return (tuple(warning.path), warning.message)


def note_warnings(outcome, now: list, before) -> None:
    """Set the outcome's warnings, those new in this save, and the changes they may explain."""
    seen = {_key(warning) for warning in before}
    outcome.warnings = list(now)
    outcome.new_warnings = [warning for warning in now if _key(warning) not in seen]
    flagged = []
    for warning in outcome.new_warnings:
        m = _SUGGESTED.search(warning.message)
        if not m or len(warning.path) < 1:
            continue
        meant = ".".join(str(p) for p in warning.path[2:-1] if not isinstance(p, int)) if len(warning.path) > 2 else ""
        field = f"{meant}.{m.group(1)}" if meant else m.group(1)
        for c in outcome.changes:
            if c.field == field or (c.field or "").endswith("." + m.group(1)) or c.field == m.group(1):
                flagged.append(f"{c} comes only from the unknown key '{warning.path[-1]}' (did you mean "
                               f"'{m.group(1)}'?, {warning.file}:{warning.line})")
    outcome.misspelt = flagged


def warnings_note(outcome, note: str | None) -> str | None:
    """The revision's note with what the warnings say: a flagged change first, then the file's
    warnings (the first few)."""
    parts = [note] if note else []
    misspelt = getattr(outcome, "misspelt", None) or []
    if misspelt:
        parts.append("check the spelling: " + "; ".join(misspelt))
    warnings = getattr(outcome, "warnings", None) or []
    if warnings:
        shown = "; ".join(f"{format_path(warning.path)}: {warning.message}" if warning.path else warning.message
                          for warning in warnings[:MAX_IN_NOTE])
        more = f" (and {len(warnings) - MAX_IN_NOTE} more)" if len(warnings) > MAX_IN_NOTE else ""
        parts.append(f"warnings: {shown}{more}")
    return "; ".join(parts) if parts else None
