"""`izwatch verify PATH [--db FILE]`: exit 0 when the history's chain is intact, 1 otherwise."""
from __future__ import annotations

from tracker.cli import EXIT_FAIL, EXIT_OK
from tracker.commands.common import CommandError, check_root, db_path, open_history
from tracker.history.verify import verify


def run(args) -> int:
    try:
        check_root(args.path)
        if not db_path(args).exists():
            print(f"no history at {db_path(args)}: nothing to verify")
            return EXIT_OK
        history = open_history(args, create=False)
    except CommandError as exc:
        print(f"izwatch verify: FAILED — {exc}")
        return EXIT_FAIL
    report = verify(history)
    history.close()
    if report.ok:
        print(f"history intact: {report.revisions} revisions, chain head {report.head_hash}")
        return EXIT_OK
    print(f"izwatch verify: FAILED — {report.problem}"
          + (f" (first revision that does not match: {report.first_bad})" if report.first_bad else ""))
    return EXIT_FAIL
