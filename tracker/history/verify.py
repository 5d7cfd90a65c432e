"""Recomputing the hash chain (and SQLite's own integrity check) over the whole history (`verify`),
or over the revisions after the last head a full verification recorded (`verify_tail`)."""
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
    # verify_tail only: the head a full verification recorded, whose revisions were not recomputed
    # ({"revision", "hash", "at"}); None when every revision was recomputed
    verified_head: dict | None = None


VERIFIED_HEADS = "verified_heads"     # migration 4


def last_verified_head(history: History) -> dict | None:
    """The latest head a full verification recorded ({"revision", "hash", "at"}), or None (none
    recorded, or a history from before migration 4)."""
    if VERIFIED_HEADS not in history._table_names():
        return None
    row = history.db.execute(f"SELECT revision_id, hash, verified_at FROM {VERIFIED_HEADS} "
                             "ORDER BY revision_id DESC LIMIT 1").fetchone()
    return {"revision": row[0], "hash": row[1], "at": row[2]} if row else None


def record_verified_head(history: History, report: Report) -> bool:
    """Record the head a full, successful verification reached, so that a report recomputes only
    what comes after it. False where nothing was recorded (a failed or empty verification, a
    history from before migration 4, or one opened for reading only)."""
    if not report.ok or report.revisions == 0 or report.verified_head is not None:
        return False
    if VERIFIED_HEADS not in history._table_names():
        return False
    from tracker import __version__
    if getattr(history, "read_only", False):           # a server history opened for reading
        return False
    if history.path is not None and history.db.execute("PRAGMA query_only").fetchone()[0]:
        return False                                    # a file opened for reading (a read-only copy)
    with history._write():
        history.db.execute(f"INSERT INTO {VERIFIED_HEADS} (revision_id, hash, verified_at, tool_version) "
                           "VALUES (?, ?, ?, ?) ON CONFLICT (revision_id) DO NOTHING",
                           [report.revisions, report.head_hash, history.now(), __version__])
    return True


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


def verify_tail(history: History) -> Report:
    """What a report checks, at a cost that grows with the revisions recorded since the last full
    verification and not with the history: the append-only triggers; that the head the last full
    `verify` recorded still has the hash it had then (a rewrite before it that recomputed the chain
    changes that hash); then every revision after it, recomputed as `verify` does. Without such a
    head, every revision is recomputed. SQLite's own integrity check is left to `verify`."""
    head = last_verified_head(history)
    if head is None:
        report = _verify_chain(history)
    else:
        row = history.db.execute("SELECT hash FROM revisions WHERE id = ?", [head["revision"]]).fetchone()
        if row is None:
            return Report(False, 0, "", f"revision {head['revision']}, the chain head `izwatch verify` found intact "
                                        f"on {head['at']}, is gone: revisions were cut off the end", None, head)
        if row[0] != head["hash"]:
            return Report(False, 0, "", f"revision {head['revision']} no longer has the hash `izwatch verify` found "
                                        f"on {head['at']}: the history was rewritten at or before it since "
                                        "(run `izwatch verify` to find where)", None, head)
        report = _verify_chain(history, after=head["revision"], after_hash=head["hash"])
        report.verified_head = head
    gone = missing_guards(history)
    if gone:
        report.ok = False
        report.problem = "; ".join(p for p in (report.problem, "append-only triggers removed or switched off: "
                                               + ", ".join(gone)) if p)
    return report


def _verify_chain(history: History, after: int = 0, after_hash: str = chain.GENESIS) -> Report:
    """The chain recomputed revision by revision after revision `after` (whose hash is `after_hash`);
    `revisions` counts from the first revision (those up to `after` taken as verified)."""
    db = history.db
    tail = f"WHERE revision_id > {int(after)} " if after else ""
    children = {
        "changes": _grouped(history, f"SELECT * FROM changes {tail}ORDER BY revision_id, seq"),
        "results": _grouped(history, f"SELECT * FROM results {tail}ORDER BY revision_id, ref"),
        "events": _grouped(history, f"SELECT * FROM events {tail}ORDER BY revision_id, seq"),
        "acks": _grouped(history, f"SELECT * FROM acks {tail}ORDER BY revision_id"),
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
    expected_prev, expected_id, count = after_hash, after + 1, after
    for row in db.execute(f"SELECT {', '.join(cols)} FROM revisions WHERE id > ? ORDER BY id", [after]):
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
