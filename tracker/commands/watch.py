"""`izwatch watch PATH [--db FILE] [--json]`."""
from __future__ import annotations

import json
import signal
import sys
import threading

from tracker.cli import EXIT_OK
from tracker.progress import Progress
from tracker.commands.common import (CommandError, check_root, date_lines, db_path, event_line, fail,
                                     loads_again_line, open_history, state_warnings, warning_lines)
from tracker.output.streams import stdout_gone
from tracker.output.terminal_text import clean
from tracker.history import shown_location
from tracker.tracking.authors import Authors
from tracker.watcher import Watcher


def _print(line: str) -> None:
    print(line, flush=True)


def emit_updates(updates, as_json: bool, verbose: bool = False) -> None:
    for u in updates:
        o, rec = u.outcome, u.recorded
        if o.first_record and o.valid:
            continue   # the first record lists no events: nothing changed yet (the ready line counts them)
        if verbose and not as_json:
            changes = "; ".join(clean(c) for c in o.changes[:6]) + (" …" if len(o.changes) > 6 else "")
            tag = "already recorded" if rec.duplicate else f"revision {rec.id}"
            _print(f"· {clean(o.file)}: {tag} ({u.source}, by {clean(rec.author)}) {changes}")
        if o.loads_again:
            _print(loads_again_line(o, rec, as_json))
        for line in warning_lines(o, rec, as_json):
            _print(line)
        for e in o.events:
            _print(event_line(e, o, rec, as_json))


def emit_dates(passed, as_json: bool) -> None:
    for d in passed:
        for line in date_lines(d, as_json):
            _print(line)


def run(args) -> int:
    try:
        root = check_root(args.path)
        history = open_history(args)
    except CommandError as exc:
        return fail(exc)
    watcher = Watcher(root, history, Authors(root))
    stop = threading.Event()

    def on_signal(signum, frame):
        stop.set()

    signal.signal(signal.SIGINT, on_signal)
    signal.signal(signal.SIGTERM, on_signal)
    try:
        progress = Progress(0, "loading sites")
        updates = watcher.start(progress)
        progress.close()
        emit_updates(updates, args.json, args.verbose)
        emit_dates(watcher.date_passed(), args.json)    # overdue since the history last looked
        state = watcher.state
        n_sites, n_circuits, failing = state.counts()
        for _, errs in sorted(state.errors.items()):
            for e in errs:
                print(clean(e), file=sys.stderr)
        for warning in state_warnings(state):       # what `check` would warn of, as `check` writes it
            print(clean(warning), file=sys.stderr)
        first = bool(updates) and all(u.outcome.first_record for u in updates)
        if args.json:
            _print(json.dumps({"event": "ready", "sites": n_sites, "circuits": n_circuits,
                               "failing_circuits": failing, "first_record": first,
                               "input_errors": sum(len(v) for v in state.errors.values()),
                               "db": shown_location(db_path(args)), "revisions": history.count()}))
        else:
            what = "first record made" if first else f"{history.count()} revisions"
            _print(f"izwatch: watching {n_sites} sites, {n_circuits} circuits ({failing} failing) in {root} "
                   f"(history {shown_location(db_path(args))}: {what}) — ready; Ctrl-C stops")
        def on_update(u) -> None:
            emit_updates([u], args.json, args.verbose)
            if stdout_gone():   # nobody reads what the watcher says (`watch | head`): stop as a pipe expects
                stop.set()

        def on_date(d) -> None:
            emit_dates([d], args.json)
            if stdout_gone():
                stop.set()

        watcher.run(on_update, stop, on_date)
    finally:
        watcher.stop()
        history.close()
    if not args.json:
        _print("izwatch: stopped")
    return EXIT_OK
