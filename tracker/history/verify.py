"""Recomputing the hash chain (and SQLite's own integrity check) over the whole history."""
from __future__ import annotations

import hashlib
import zlib
from dataclasses import dataclass
from itertools import groupby

from tracker.history import chain, people
from tracker.history.store import History


@dataclass
class Report:
    ok: bool
    revisions: int
    head_hash: str
    problem: str = ""
    first_bad: int | None = None


def _grouped(history: History, sql: str):
    rows = history.db.execute(sql)
    return groupby(rows, key=lambda r: r[0])


def missing_guards(history: History) -> list[str]:
    """The append-only triggers the applied migrations made that are gone or disabled."""
    present = history.guards()
    return [f"{name} ({'disabled' if present.get(name) == 'disabled' else 'dropped'})"
            for name in history.expected_guards() if present.get(name) != "enabled"]


def verify(history: History) -> Report:
    """The database's own check, the append-only triggers, then the chain, revision by revision."""
    integrity = history.integrity_problems()
    if integrity:
        return Report(False, 0, "", f"SQLite integrity check: {'; '.join(integrity[:3])}")
    report = _verify_chain(history)
    gone = missing_guards(history)
    if gone and report.ok:
        return Report(False, report.revisions, report.head_hash,
                      f"append-only triggers removed or switched off: {', '.join(gone)} — the history can have "
                      f"been rewritten through them; its chain of {report.revisions} revisions recomputes "
                      f"(head {report.head_hash}): compare that head with one kept elsewhere")
    if gone:
        report.problem += f"; append-only triggers removed or switched off: {', '.join(gone)}"
    return report


def _verify_chain(history: History) -> Report:
    db = history.db
    children = {
        "changes": _grouped(history, "SELECT * FROM changes ORDER BY revision_id, seq"),
        "results": _grouped(history, "SELECT * FROM results ORDER BY revision_id, ref"),
        "events": _grouped(history, "SELECT * FROM events ORDER BY revision_id, seq"),
        "acks": _grouped(history, "SELECT * FROM acks ORDER BY revision_id"),
    }
    pending = {name: next(it, None) for name, it in children.items()}

    def take(name: str, rev_id: int) -> list:
        group = pending[name]
        if group is not None and group[0] < rev_id:
            return None  # rows of a revision that no longer exists
        if group is not None and group[0] == rev_id:
            rows = [tuple(r) for r in group[1]]
            pending[name] = next(children[name], None)
            return rows
        return []

    cols = ["id", *chain.REVISION_FIELDS[1:], *history.optional_fields(), "hash"]
    expected_prev, expected_id, count = chain.GENESIS, 1, 0
    for row in db.execute(f"SELECT {', '.join(cols)} FROM revisions ORDER BY id"):
        rev = dict(zip(cols, row))
        rid = rev["id"]
        if rid != expected_id:
            return Report(False, count, "", f"revision {expected_id} is missing (next found: {rid})", expected_id)
        if rev["prev_hash"] != expected_prev:
            return Report(False, count, "", f"revision {rid} does not follow revision {rid - 1} "
                                            "(its prev_hash does not match)", rid)
        rows = {name: take(name, rid) for name in children}
        if any(v is None for v in rows.values()):
            return Report(False, count, "", f"rows of a removed revision found before revision {rid}", rid)
        computed = chain.revision_hash(rev, rows["changes"], rows["results"], rows["events"], rows["acks"])
        if computed != rev["hash"]:
            return Report(False, count, "", f"revision {rid} was altered: its content no longer matches its hash", rid)
        if rev["content_hash"] is not None:
            blob = db.execute("SELECT content FROM blobs WHERE hash = ?", [rev["content_hash"]]).fetchone()
            try:
                content = zlib.decompress(blob[0]) if blob is not None else None
            except (zlib.error, TypeError):   # not what izwatch writes: altered
                content = None
            if content is None or hashlib.sha256(content).hexdigest() != rev["content_hash"]:
                return Report(False, count, "", f"the file content recorded by revision {rid} is missing or altered",
                              rid)
        expected_prev, expected_id, count = rev["hash"], rid + 1, count + 1
    leftovers = [name for name, group in pending.items() if group is not None]
    if leftovers:
        return Report(False, count, expected_prev, f"{', '.join(leftovers)} rows belong to no revision "
                                                   f"(after revision {expected_id - 1})", expected_id)
    altered = people.altered(history)
    if altered:
        return Report(False, count, expected_prev, altered)
    return Report(True, count, expected_prev)
