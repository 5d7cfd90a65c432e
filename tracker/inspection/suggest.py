"""A suggested classification code for a failing measured check (tracker/data/suggested_codes.yaml):
common practice, for the inspector to confirm — izwatch never classifies."""
from __future__ import annotations

from tracker.catalogue import suggested_codes
from tracker.checks.result import FAIL

LABEL = "suggested code, for the inspector to confirm"


def suggestion(check_id: str, status: str) -> dict | None:
    """{check, code, why, status} for a failing check the table covers, else None."""
    if status != FAIL:
        return None
    table = suggested_codes()
    row = table["checks"].get(check_id)
    if row is None:
        return None
    return {"check": check_id, "code": row["code"], "why": row["why"], "status": table["status"]}


def suggestions(checks) -> list[dict]:
    """The suggestions for a circuit's checks (CheckResults), in their order."""
    return [s for s in (suggestion(c.id, c.status) for c in checks) if s is not None]
