"""`izwatch tui PATH [--db FILE]`: the terminal UI, watching while it runs.

The UI lives in the `tui` package and is imported here, inside `run`, so the rest of the
command line never loads Textual.
"""
from __future__ import annotations

import sys

from tracker.cli import EXIT_OK
from tracker.commands.common import CommandError, check_root, db_path, fail, open_history


def run(args) -> int:
    try:
        root = check_root(args.path)
        if not (sys.stdin.isatty() and sys.stdout.isatty()):
            raise CommandError("tui needs a terminal (`izwatch watch` watches without one)")
        open_history(args).close()       # an unusable history is refused here, before the screen opens
    except CommandError as exc:
        return fail(exc)
    from tui.app import IzwatchApp

    IzwatchApp(root, db_path(args)).run()
    return EXIT_OK
