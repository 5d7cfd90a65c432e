"""The history's keeping: `copy-history` (SQLite ↔ PostgreSQL), `erase` (a person's name and
notes), `export-head` (the chain head with a timestamp, to keep elsewhere)."""
from __future__ import annotations

import json
import sys
from pathlib import Path

from tracker import __version__
from tracker.cli import EXIT_FAIL, EXIT_OK
from tracker.commands.common import CommandError, check_root, db_path, fail
from tracker.history import History, HistoryError, history_location, location_exists, shown_location
from tracker.output.terminal_text import clean

HEAD_SCHEMA = "izwatch.chain-head/1"


def copy(args) -> int:
    try:
        check_root(args.path)
        source, target = db_path(args), history_location(args.to)
        if not location_exists(source):
            raise CommandError(f"no history at {shown_location(source)}: nothing to copy")
        from tracker.history.copy import copy_history
        done = copy_history(source, target)
    except (CommandError, HistoryError) as exc:
        return fail(exc)
    rows = ", ".join(f"{n} {t}" for t, n in done.rows.items() if n)
    print(f"copied {shown_location(source)} → {shown_location(target)}: {rows}")
    print(f"the copy verifies: {done.target.revisions} revisions, chain head {done.target.head_hash} "
          "(the same as the source)")
    return EXIT_OK


def erase(args) -> int:
    from tracker.history.people import erase as erase_person
    from tracker.history.verify import verify
    try:
        check_root(args.path)
        if args.person.strip().casefold().startswith("izwatch ("):
            # izwatch's own name (the date's revisions) is no person's data; erasing it would hide
            # from the trail that no person made those revisions
            raise CommandError(f"{clean(args.person)!s} is izwatch's own name, not a person's: nothing to erase")
        location = db_path(args)
        if not location_exists(location):
            raise CommandError(f"no history at {shown_location(location)}")
        history = History.open(location, create=False)
    except (CommandError, HistoryError) as exc:
        return fail(exc)
    try:
        actor, notes = erase_person(history, args.person)
        report = verify(history)
    except HistoryError as exc:
        return fail(exc)
    finally:
        history.close()
    print(f"erased {clean(args.person)} ({actor}) and {notes} note{'s' if notes != 1 else ''} of theirs; "
          "the history shows 'erased' where they were")
    if report.ok:
        print(f"history intact: {report.revisions} revisions, chain head {report.head_hash}")
        return EXIT_OK
    print(f"izwatch verify: FAILED — {report.problem}")
    return EXIT_FAIL


def export_head(args) -> int:
    from tracker.history.verify import verify
    try:
        check_root(args.path)
        location = db_path(args)
        if not location_exists(location):
            raise CommandError(f"no history at {shown_location(location)}")
        history = History.open(location, create=False)
    except (CommandError, HistoryError) as exc:
        return fail(exc)
    try:
        report = verify(history)
        taken = history.now()
    finally:
        history.close()
    if not report.ok:
        print(f"izwatch export-head: the history does not verify ({report.problem}); no head exported",
              file=sys.stderr)
        return EXIT_FAIL
    doc = {"schema": HEAD_SCHEMA, "history": shown_location(location), "revisions": report.revisions,
           "head_hash": report.head_hash, "taken_at": taken, "tool_version": __version__}
    text = json.dumps(doc, indent=2) + "\n"
    if args.output in (None, "-"):
        sys.stdout.write(text)
    else:
        try:
            Path(args.output).write_text(text, encoding="utf-8")
        except OSError as exc:
            return fail(CommandError(f"cannot write {args.output}: {exc.strerror or exc}"))
        print(f"chain head of {report.revisions} revisions written to {args.output}: keep it where the history's "
              "administrators cannot change it", file=sys.stderr)
    return EXIT_OK
