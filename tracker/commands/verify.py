"""`izwatch verify PATH [--db FILE]`: exit 0 when the history's chain is intact, 1 otherwise.

A verification that finds the history intact records the head it reached (migration 4's
`verified_heads`), where the history can be written: a report then recomputes only the revisions
after it."""
from __future__ import annotations

from tracker.cli import EXIT_FAIL, EXIT_OK
from tracker.commands.common import CommandError, check_root, db_path
from tracker.history import History, HistoryError, location_exists, shown_location
from tracker.history.verify import record_verified_head, verify


def _open(args) -> History:
    """The history, migrated where it can be written; read through a query-only connection where
    it cannot (a read-only copy still verifies)."""
    try:
        return History.open(db_path(args), create=False)
    except HistoryError as exc:
        if exc.kind == "unmigratable":   # an older history that does not verify: say where it breaks
            return History.open_for_reading(db_path(args), older=True)
        if exc.kind != "unwritable":
            raise
        return History.open_for_reading(db_path(args))


def _against_head(history: History, path: str) -> tuple[bool, str]:
    """Whether the history still holds a chain head exported earlier: (holds it, what to say)."""
    import json
    try:
        doc = json.loads(open(path, encoding="utf-8").read())
        n, head, taken = int(doc["revisions"]), str(doc["head_hash"]), str(doc.get("taken_at", "?"))
    except (OSError, ValueError, KeyError, TypeError) as exc:
        return False, f"{path}: not a chain head exported by izwatch ({exc})"
    if n == 0:
        return True, f"the exported head of {taken} (an empty history) is held"
    row = history.db.execute("SELECT hash FROM revisions WHERE id = ?", [n]).fetchone()
    if row is None:
        return False, (f"the history has fewer than the {n} revisions it had on {taken} (exported head "
                       f"{head}): revisions were cut off the end")
    if row[0] == head:
        return True, f"it holds the chain head exported on {taken} (revision {n})"
    if "rechained" in set(history.db.table_names()):
        old = history.db.execute("SELECT old_hash FROM rechained WHERE revision_id = ?", [n]).fetchone()
        if old is not None and old[0] == head:
            return True, (f"it holds the chain head exported on {taken} (revision {n}, as it was hashed before "
                          "the names were moved out of the chain)")
    return False, (f"revision {n} no longer has the hash exported on {taken} ({head}): the history was rewritten "
                   "since, and its chain recomputed")


def run(args) -> int:
    try:
        check_root(args.path)
    except CommandError as exc:        # the estate's path, not the chain: no verdict on it
        print(f"izwatch verify: not verified — {exc}")
        return EXIT_FAIL
    if not location_exists(db_path(args)):
        print(f"no history at {shown_location(db_path(args))}: nothing to verify")
        return EXIT_OK
    try:
        history = _open(args)
    except HistoryError as exc:
        if exc.kind == "damaged":
            print(f"izwatch verify: FAILED — {exc}")
        else:   # not a verdict on the chain: say what stands in the way
            print(f"izwatch verify: not verified — {exc}")
        return EXIT_FAIL
    report = verify(history)
    anchor = _against_head(history, args.head) if report.ok and getattr(args, "head", None) else None
    if report.ok and (anchor is None or anchor[0]):
        try:   # reports then recompute only the revisions after this head
            record_verified_head(history, report)
        except HistoryError:
            pass   # a history that cannot be written (a role without INSERT): the verdict stands
    history.close()
    if report.ok and anchor is not None and not anchor[0]:
        print(f"izwatch verify: FAILED — {anchor[1]}")
        return EXIT_FAIL
    if report.ok:
        print(f"history intact: {report.revisions} revisions, chain head {report.head_hash}")
        if anchor is not None:
            print(anchor[1])
        return EXIT_OK
    print(f"izwatch verify: FAILED — {report.problem}"
          + (f" (first revision that does not match: {report.first_bad})" if report.first_bad else ""))
    return EXIT_FAIL
