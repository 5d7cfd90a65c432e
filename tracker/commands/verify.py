"""`izwatch verify PATH [--db FILE]`: exit 0 when the history's chain is intact, 1 otherwise."""
from __future__ import annotations

from tracker.cli import EXIT_FAIL, EXIT_OK
from tracker.commands.common import CommandError, check_root, db_path
from tracker.history import History, HistoryError, location_exists, shown_location
from tracker.history.verify import verify


def _open(args) -> History:
    """The history, migrated where it can be written; read through a query-only connection where
    it cannot (a read-only copy still verifies)."""
    try:
        return History.open(db_path(args), create=False)
    except HistoryError as exc:
        if exc.kind != "unwritable":
            raise
        return History.open_for_reading(db_path(args))


def run(args) -> int:
    try:
        check_root(args.path)
    except CommandError as exc:
        print(f"izwatch verify: FAILED — {exc}")
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
    history.close()
    if report.ok:
        print(f"history intact: {report.revisions} revisions, chain head {report.head_hash}")
        return EXIT_OK
    print(f"izwatch verify: FAILED — {report.problem}"
          + (f" (first revision that does not match: {report.first_bad})" if report.first_bad else ""))
    return EXIT_FAIL
