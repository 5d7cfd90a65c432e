"""Reading the history back: revisions with their changes and events, acknowledgements."""
from __future__ import annotations

import json

from tracker.events import stored_event
from tracker.history.store import History, HistoryError


def named(history: History) -> str:
    """The revisions with names and note texts in place of their ids (migration 2's view), or the
    table itself in a history from before it."""
    from tracker.history.people import has_people
    return "named_revisions" if has_people(history) else "revisions"


def _matches(ref: str, prefix: str) -> bool:
    return ref == prefix or ref.startswith(prefix + "/")


def revisions(history: History, ref: str | None = None, since: str | None = None,
              limit: int | None = None, newest_first: bool = False) -> list[dict]:
    """Revisions as dicts (SPEC §4 history shape plus id, source, file, hash...)."""
    db = history.db
    where, args = [], []
    if since:
        where.append("at >= ?")
        args.append(since)
    if ref:
        # REF itself or anything below it: the range [REF/, REF0) ('0' follows '/'), which the
        # indexes on ref can serve (a LIKE could not: it ignores case)
        below = "(ref = ? OR (ref >= ? AND ref < ?))"
        where.append(f"(id IN (SELECT revision_id FROM changes WHERE {below}) "
                     f"OR id IN (SELECT revision_id FROM events WHERE {below}) "
                     f"OR id IN (SELECT revision_id FROM acks WHERE {below}) "
                     "OR id IN (SELECT revision_id FROM events WHERE transition = 'input-error' AND ref = ?) "
                     "OR site = ?)")   # a site: also its revisions that changed no element (a file loads again)
        args += [ref, ref + "/", ref + "0"] * 3 + [ref.split("/")[0], ref]
    signed = named(history) == "named_revisions"
    sql = (f"SELECT id, at, source, file, site, content_hash, valid, author, note, hash"
           f"{', signature, signer' if signed else ', NULL, NULL'} FROM {named(history)}")
    if where:
        sql += " WHERE " + " AND ".join(where)
    sql += " ORDER BY id" + (" DESC" if newest_first else "")
    if limit:
        sql += f" LIMIT {int(limit)}"
    rows = db.execute(sql, args).fetchall()
    if not rows:
        return []
    changes, events, acks = _details(db, [r[0] for r in rows])
    out = []
    for rid, at, source, file, site, chash, valid, author, note, hsh, signature, signer in rows:
        ch, ev = changes.get(rid, []), events.get(rid, [])
        if ref:
            ch = [c for c in ch if _matches(c["ref"], ref)]
            ev = [e for e in ev if _matches(e["ref"], ref) or (e["transition"] == "input-error" and _matches(ref, e["ref"]))]
        entry = {"id": rid, "at": at, "author": author, "note": note, "source": source, "file": file, "site": site,
                 "content_hash": chash, "valid": bool(valid), "hash": hsh, "changes": ch, "events": ev}
        if rid in acks:
            entry["ack"] = acks[rid]
        if signature is not None:      # the change arrived as a git commit: how it was signed
            entry["signature"] = {"status": signature, "signer": signer}
        out.append(entry)
    return out


def _details(db, ids: list[int]) -> tuple[dict, dict, dict]:
    """(changes, events, acknowledgement) of each of the revisions `ids`, by revision id."""
    marks = ",".join("?" * len(ids))
    changes: dict[int, list] = {}
    for rid, ref_, kind, fld, old, new in db.execute(
            f"SELECT revision_id, ref, change, field, old, new FROM changes WHERE revision_id IN ({marks}) "
            "ORDER BY revision_id, seq", ids):
        changes.setdefault(rid, []).append({"ref": ref_, "field": fld, "old": _load(old, rid), "new": _load(new, rid),
                                            "change": kind})
    events: dict[int, list] = {}
    for rid, ref_, check, transition, value, limit_v, unit, detail in db.execute(
            f"SELECT revision_id, ref, check_id, transition, value, limit_value, unit, detail FROM events "
            f"WHERE revision_id IN ({marks}) ORDER BY revision_id, seq", ids):
        events.setdefault(rid, []).append(stored_event(ref_, check, transition, value, limit_v, unit, detail))
    acks = {}
    # A later acknowledgement of the same element supersedes an earlier one (both stay in the chain).
    for rid, r, c, later in db.execute(
            "SELECT a.revision_id, a.ref, a.checks, (SELECT min(b.revision_id) FROM acks b "
            "WHERE b.ref = a.ref AND b.revision_id > a.revision_id) "
            f"FROM acks a WHERE a.revision_id IN ({marks})", ids):
        acks[rid] = {"ref": r, "checks": _load(c, rid)}
        if later is not None:
            acks[rid]["superseded_by"] = later
    return changes, events, acks


def _load(text, rid: int | None = None):
    """A value the history stored as JSON. One that is not JSON was written by something other
    than izwatch: said as such (and `verify` names the revision), never a traceback."""
    if text is None:
        return None
    try:
        return json.loads(text)
    except (ValueError, TypeError):
        where = f"revision {rid}" if rid is not None else "a revision"
        raise HistoryError(f"{where} holds a stored value that is not JSON ({str(text)[:40]!r}): the history was "
                           "changed outside izwatch; run `izwatch verify`", "damaged") from None


def _below(column: str, ref: str | None) -> tuple[str, list]:
    """A condition on `column` for REF itself or anything below it (the range [REF/, REF0), which
    the indexes on ref serve), and its arguments; nothing for no REF."""
    if ref is None:
        return "", []
    return f" AND ({column} = ? OR ({column} >= ? AND {column} < ?))", [ref, ref + "/", ref + "0"]


def latest_acks(history: History, into: dict | None = None, after: int = 0,
                upto: int | None = None, ref: str | None = None) -> dict[str, dict]:
    """ref -> its latest acknowledgement {revision, at, author, note, checks}.

    With `into` and `after`, the acknowledgements of revisions after `after` (and up to `upto`)
    are folded into an earlier answer: the history only grows, so the result is the same.
    `ref` (a site, say): only the acknowledgements of it and what is below it, read by index.
    """
    out = {} if into is None else into
    cond, args = _below("a.ref", ref)
    for rid, ref_, checks, at, author, note in history.db.execute(
            "SELECT a.revision_id, a.ref, a.checks, r.at, r.author, r.note FROM acks a "
            f"JOIN {named(history)} r ON r.id = a.revision_id WHERE a.revision_id > ? AND a.revision_id <= ?{cond} "
            "ORDER BY a.revision_id", [after, _upto(upto), *args]):
        out[ref_] = {"revision": rid, "at": at, "author": author, "note": note, "checks": _load(checks, rid)}
    return out


def _upto(upto: int | None) -> int:
    return (1 << 62) if upto is None else upto


def failing_since(history: History, into: dict | None = None, after: int = 0,
                  upto: int | None = None, ref: str | None = None) -> dict[tuple[str, str], dict]:
    """(ref, check) -> the revision of its latest newly-failing event, with the cause, and
    (`worse_revision`) the latest "worse" not undone since.

    A "worse" is undone when a later revision brings the check back to (or below) how badly it
    failed before that "worse" (the results each revision recorded say how it stood): the edit
    that made a problem worse, then reverted, is no longer its cause. How badly is the distance
    past the limit on the failing side (known from the newly-failing event, whose value was past
    its limit). `worse` keeps, for each "worse" still in force, its revision and how badly the
    check failed before it; `level`, how badly it failed at the latest of these events.

    `into`, `after`, `upto`: folded into an earlier answer, as for `latest_acks`; `ref` (a site,
    say): only it and what is below it, read by index.
    """
    out = {} if into is None else into
    cond, args = _below("e.ref", ref)
    rows = history.db.execute(
        "SELECT e.revision_id, e.ref, e.check_id, e.transition, e.value, e.limit_value, r.at, r.author, r.note, "
        f"r.file FROM events e JOIN {named(history)} r ON r.id = e.revision_id "
        f"WHERE e.revision_id > ? AND e.revision_id <= ?{cond} "
        "AND e.transition IN ('newly-failing', 'worse', 'cleared') ORDER BY e.revision_id, e.seq",
        [after, _upto(upto), *args]).fetchall()
    steps = [(row[0], 0, row) for row in rows]
    # The recorded results of the elements with a "worse" in force: how each later revision left them.
    watched = {k[0] for k, v in out.items() if v.get("worse")} | {row[1] for row in rows if row[3] == "worse"}
    if watched:
        refs = sorted(watched)
        for start in range(0, len(refs), 500):
            chunk = refs[start:start + 500]
            marks = ",".join("?" * len(chunk))
            for rid, ref, checks in history.db.execute(
                    f"SELECT revision_id, ref, checks FROM results WHERE revision_id > ? AND revision_id <= ? "
                    f"AND ref IN ({marks})", [after, _upto(upto), *chunk]):
                steps.append((rid, 1, (ref, checks)))
    steps.sort(key=lambda s: (s[0], s[1]))
    for rid, kind, row in steps:
        if kind == 1:
            _unwind(out, rid, *row)
            continue
        _, ref, check, transition, value, limit, at, author, note, file = row
        key = (ref, check)
        if transition == "cleared":
            out.pop(key, None)
        elif transition == "newly-failing" or key not in out:
            side = None if value is None or limit is None or value == limit else (1 if value > limit else -1)
            entry = {"revision": rid, "at": at, "author": author, "note": note, "file": file,
                     "transition": transition, "side": side, "worse": ()}
            entry["level"] = _past(entry, value, limit)
            out[key] = entry
        else:
            entry = dict(out[key])
            entry["worse"] = (*entry.get("worse", ()), (rid, entry.get("level")))
            entry["level"] = _past(entry, value, limit)
            entry["worse_revision"] = rid
            out[key] = entry
    return out


def _past(entry: dict, value, limit) -> float | None:
    """How far past its limit a failing check stands (larger: worse), on the entry's failing side."""
    side = entry.get("side")
    if side is None or value is None or limit is None:
        return None
    return side * (value - limit)


def _unwind(out: dict, rid: int, ref: str, checks_json: str) -> None:
    """A revision's recorded results of `ref`: every "worse" it undoes is taken off."""
    checks = _load(checks_json, rid)
    if not isinstance(checks, dict):
        return
    for check, figures in checks.items():
        entry = out.get((ref, check))
        if entry is None or not entry.get("worse") or not isinstance(figures, list) or len(figures) < 3:
            continue
        now = _past(entry, figures[1], figures[2])
        if now is None:
            continue
        stack = list(entry["worse"])
        while stack and stack[-1][0] < rid and stack[-1][1] is not None and now <= stack[-1][1] + 1e-9:
            stack.pop()
        if len(stack) == len(entry["worse"]):
            continue
        entry = {k: v for k, v in entry.items() if k != "worse_revision"}
        entry["worse"] = tuple(stack)
        entry["level"] = now
        if stack:
            entry["worse_revision"] = stack[-1][0]
        out[(ref, check)] = entry


def refs_touched(history: History, after: int, upto: int) -> set[str]:
    """The refs with an event or an acknowledgement in the revisions after `after` up to `upto`."""
    return {r for (r,) in history.db.execute(
        "SELECT ref FROM events WHERE revision_id > ? AND revision_id <= ? "
        "UNION SELECT ref FROM acks WHERE revision_id > ? AND revision_id <= ?", [after, upto, after, upto])}


def revisions_by_id(history: History, ids) -> dict[int, dict]:
    """id -> {id, at, source, file, site, author, note, first_of_file, changes} for some revisions.

    `first_of_file`: the revision is the first recorded for its file (the first record of an
    estate, or a file added later). Its elements are all new, so `changes` is left empty for it
    rather than listing every element of the file; other revisions carry their changes in order.
    """
    wanted = sorted({int(i) for i in ids if i})
    out: dict[int, dict] = {}
    db = history.db
    for start in range(0, len(wanted), 500):
        chunk = wanted[start:start + 500]
        marks = ",".join("?" * len(chunk))
        for rid, at, source, file, site, author, note, prev in db.execute(
                f"SELECT id, at, source, file, site, author, note, file_prev_id FROM {named(history)} "
                f"WHERE id IN ({marks})", chunk):
            out[rid] = {"id": rid, "at": at, "source": source, "file": file, "site": site, "author": author,
                        "note": note, "first_of_file": file is not None and prev == 0, "changes": []}
        later = [rid for rid in chunk if rid in out and not out[rid]["first_of_file"]]
        if not later:
            continue
        marks = ",".join("?" * len(later))
        for rid, ref_, kind, fld, old, new in db.execute(
                f"SELECT revision_id, ref, change, field, old, new FROM changes WHERE revision_id IN ({marks}) "
                "ORDER BY revision_id, seq", later):
            out[rid]["changes"].append({"ref": ref_, "field": fld, "old": _load(old, rid), "new": _load(new, rid),
                                        "change": kind})
    return out
