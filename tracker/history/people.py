"""Personal data outside the hash chain (migration 2).

The chain hashes a pseudonymous actor id in place of a person's name (`revisions.author`,
`revisions.signer`) and a salted digest in place of a note's text (`revisions.note`). The names
and texts live in `people` and `notes`; `erase` blanks one person's name, salt and notes, and
the chain still verifies, because it never held them. While a name or text is present, `verify`
checks that it still gives its id or digest (`altered`), so they cannot be changed unseen
either. A random salt makes an erased id or digest say nothing of what it stood for (a short
note or a known name cannot be guessed back from it).

UK GDPR: the names of operatives and tenants are personal data; Article 17 (erasure) and
Article 5(1)(e) (storage limitation) are why they must be erasable without breaking the trail.
"""
from __future__ import annotations

import hashlib
import secrets

from tracker.history import chain
from tracker.history.store import MIGRATION_STEPS, HistoryError

ACTOR, NOTE = "actor:", "note:"
ERASED = "erased"


def _actor_id(salt: str, name: str) -> str:
    return ACTOR + hashlib.sha256((salt + name).encode("utf-8")).hexdigest()[:24]


def _note_digest(salt: str, text: str) -> str:
    return NOTE + hashlib.sha256((salt + text).encode("utf-8")).hexdigest()


def has_people(history) -> bool:
    if getattr(history, "_people", None) is None:
        history._people = "people" in set(history.db.table_names())
    return history._people


def actor_for(history, name: str, cache: dict | None = None) -> str:
    """The actor id standing for `name`, made on first use (inside a write transaction)."""
    if cache is not None and name in cache:
        return cache[name]
    row = history.db.execute("SELECT actor FROM people WHERE name = ?", [name]).fetchone()
    if row is not None:
        actor = row[0]
    else:
        salt = secrets.token_hex(16)
        actor = _actor_id(salt, name)
        history.db.execute("INSERT INTO people (actor, name, salt) VALUES (?, ?, ?)", [actor, name, salt])
    if cache is not None:
        cache[name] = actor
    return actor


def note_for(history, actor: str, text: str | None, cache: dict | None = None) -> str | None:
    """The digest standing for `text`, a note of `actor` (one row per person and text)."""
    if text is None:
        return None
    key = (actor, text)
    if cache is not None and key in cache:
        return cache[key]
    row = history.db.execute("SELECT digest FROM notes WHERE actor = ? AND text = ?", [actor, text]).fetchone()
    if row is not None:
        digest = row[0]
    else:
        salt = secrets.token_hex(16)
        digest = _note_digest(salt, text)
        history.db.execute("INSERT INTO notes (digest, actor, text, salt) VALUES (?, ?, ?, ?)",
                           [digest, actor, text, salt])
    if cache is not None:
        cache[key] = digest
    return digest


def name_of(history, actor: str) -> str:
    """The name an actor id stands for ('erased' once erased; the value itself if it is no id)."""
    if not has_people(history) or not actor.startswith(ACTOR):
        return actor
    row = history.db.execute("SELECT name FROM people WHERE actor = ?", [actor]).fetchone()
    if row is None:
        return actor
    return row[0] if row[0] is not None else ERASED


def altered(history) -> str:
    """A problem found in the names and notes still present ('' when none): each must still give
    the id or digest the chain holds."""
    if not has_people(history):
        return ""
    for actor, name, salt in history.db.execute("SELECT actor, name, salt FROM people WHERE name IS NOT NULL"):
        if salt is None or _actor_id(salt, name) != actor:
            return f"the name recorded for {actor} was altered (it no longer gives its id)"
    for digest, text, salt in history.db.execute("SELECT digest, text, salt FROM notes WHERE text IS NOT NULL"):
        if salt is None or _note_digest(salt, text) != digest:
            return f"the note text recorded for {digest[:21]}… was altered (it no longer gives its digest)"
    return ""


def erase(history, name: str) -> tuple[str, int]:
    """Blank `name` and every note of theirs; (actor id, notes erased). HistoryError if no such
    name is recorded. The old bytes are scrubbed from the store's own files too (SQLite: secure
    delete and a checkpoint of the WAL; PostgreSQL: VACUUM of the two tables)."""
    history.before_erase()
    with history._write():
        row = history.db.execute("SELECT actor FROM people WHERE name = ?", [name]).fetchone()
        if row is None:
            raise HistoryError(f"no one named {name!r} in the history (names are matched exactly)", "missing")
        actor = row[0]
        when = history.now()
        notes = history.db.execute("SELECT count(*) FROM notes WHERE actor = ? AND text IS NOT NULL",
                                   [actor]).fetchone()[0]
        history.db.execute("UPDATE notes SET text = NULL, salt = NULL, erased_at = ? WHERE actor = ? "
                           "AND text IS NOT NULL", [when, actor])
        history.db.execute("UPDATE people SET name = NULL, salt = NULL, erased_at = ? WHERE actor = ?", [when, actor])
    history.after_erase()
    return actor, notes


# -- migration 2: moving the names and notes of earlier revisions out of the chain -----------

_CHAINED = ["id", *chain.REVISION_FIELDS[1:], "hash"]


def _children(history, rev_id: int) -> dict[str, list]:
    db = history.db
    return {
        "changes": [tuple(r) for r in db.execute("SELECT * FROM changes WHERE revision_id = ? ORDER BY seq", [rev_id])],
        "results": [tuple(r) for r in db.execute("SELECT * FROM results WHERE revision_id = ? ORDER BY ref", [rev_id])],
        "events": [tuple(r) for r in db.execute("SELECT * FROM events WHERE revision_id = ? ORDER BY seq", [rev_id])],
        "acks": [tuple(r) for r in db.execute("SELECT * FROM acks WHERE revision_id = ?", [rev_id])],
    }


def move_out_of_the_chain(history) -> None:
    """Re-chain the revisions recorded before migration 2 with actor ids and note digests in place
    of names and texts. Only an intact chain is re-chained (a broken one is left as it is, and the
    migration with it); each revision's earlier hash is kept in `rechained`."""
    from tracker.history.verify import _verify_chain
    history._people = True
    rows = [dict(zip(_CHAINED, r)) for r in history.db.execute(
        f"SELECT {', '.join(_CHAINED)} FROM revisions ORDER BY id")]
    if not rows:
        return
    report = _verify_chain(history)
    if not report.ok:
        raise HistoryError(f"the history does not verify ({report.problem}), so its names cannot be moved out of "
                           "the chain; it is left as it is — restore it from a backup, or read it with "
                           "`izwatch verify`", "unmigratable")
    when, prev = history.now(), chain.GENESIS
    people: dict = {}
    notes: dict = {}
    with history.guard_suspended("revisions"):
        for rev in rows:
            actor = actor_for(history, rev["author"], people)
            digest = note_for(history, actor, rev["note"], notes)
            new = {**rev, "author": actor, "note": digest, "prev_hash": prev}
            kids = _children(history, rev["id"])
            new["hash"] = chain.revision_hash(new, kids["changes"], kids["results"], kids["events"], kids["acks"])
            history.db.execute("UPDATE revisions SET author = ?, note = ?, prev_hash = ?, hash = ? WHERE id = ?",
                               [actor, digest, prev, new["hash"], rev["id"]])
            history.db.execute("INSERT INTO rechained (revision_id, old_hash, at) VALUES (?, ?, ?)",
                               [rev["id"], rev["hash"], when])
            prev = new["hash"]


MIGRATION_STEPS["0002-people-outside-the-chain"] = move_out_of_the_chain
