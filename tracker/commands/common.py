"""Shared by the commands: opening the history, finding a site, printing events."""
from __future__ import annotations

import errno
import json
import os
import sqlite3
import sys
from pathlib import Path

from tracker.cli import EXIT_INPUT
from tracker.history import History, HistoryError, default_db_path, history_location
from tracker.loading.estate import EstateError, site_folder_of, site_folders
from tracker.output import figures
from tracker.output.terminal_text import clean, clean_lines, first_unsafe


class CommandError(Exception):
    """A clear, one-line reason to stop with exit code 2."""


def disk_full(exc: BaseException) -> bool:
    """A write refused for want of space (the file system's or the user's quota), from the OS or
    from SQLite (SQLITE_FULL)."""
    if isinstance(exc, OSError) and exc.errno in (errno.ENOSPC, errno.EDQUOT):
        return True
    return isinstance(exc, sqlite3.Error) and (getattr(exc, "sqlite_errorcode", None) == sqlite3.SQLITE_FULL
                                               or "disk is full" in str(exc))


DB_VARIABLE = "IZWATCH_DB"


def db_path(args) -> Path | str:
    """The history: `--db`, else the environment's IZWATCH_DB, else the estate's own file. A
    `postgresql://…` connection string is returned as it is (a str), a file as a Path."""
    given = getattr(args, "db", None) or os.environ.get(DB_VARIABLE)
    return history_location(given) if given else default_db_path(Path(args.path))


def open_history(args, create: bool = True) -> History:
    try:
        return History.open(db_path(args), create=create)
    except HistoryError as exc:
        raise CommandError(str(exc)) from None


def check_root(path: str) -> Path:
    root = Path(path)
    try:
        site_folders(root)
    except EstateError as exc:
        raise CommandError(str(exc)) from None
    return root


def folder_of_site(root: Path, site_id: str) -> str:
    """The folder (relative; '' for a single site) of the site with this id."""
    folder = site_folder_of(root, site_id)
    if folder is None:
        raise CommandError(f"no site '{site_id}' in {root}")
    return folder


def fail(exc: Exception) -> int:
    print(f"izwatch: {clean_lines(exc)}", file=sys.stderr)
    return EXIT_INPUT


def warning_lines(outcome, recorded, as_json: bool) -> list[str]:
    """Lines for what a save brought that `check` would warn of: a change that comes only from a
    misspelt key first, then each new warning (a key not in the schema)."""
    out = []
    base = {"ref": outcome.site_id, "check": None, "file": outcome.file,
            "revision": recorded.id if recorded else None, "at": recorded.at if recorded else None}
    for text in getattr(outcome, "misspelt", ()):
        out.append(json.dumps({"event": "check-spelling", "transition": "check-spelling", **base, "detail": text},
                              ensure_ascii=False) if as_json else f"CHECK SPELLING  {clean(text)}")
    for warning in getattr(outcome, "new_warnings", ()):
        out.append(json.dumps({"event": "warning", "transition": "warning", **base, "line": warning.line, "col": warning.col,
                               "detail": str(warning)}, ensure_ascii=False) if as_json else f"WARNING  {clean(warning)}")
    return out


def state_warnings(state) -> list:
    """Every warning of the files as the state holds them (those `check` gives), sorted."""
    from tracker.loading.errors import sort_problems
    return sort_problems(state.warnings())


def loads_again_line(outcome, recorded, as_json: bool) -> str:
    """The line for a file that loads again after an input error (it may change no check)."""
    if as_json:
        return json.dumps({"event": "loads-again", "ref": outcome.site_id, "check": None, "transition": "loads-again",
                           "file": outcome.file, "revision": recorded.id if recorded else None,
                           "at": recorded.at if recorded else None,
                           "author": recorded.author if recorded else None,
                           "source": recorded.source if recorded else None}, ensure_ascii=False)
    who = f" by {clean(recorded.author)}" if recorded else ""
    return f"LOADS AGAIN  {clean(outcome.file)}  (input error cleared; checked from this state on{who})"


def event_line(e: dict, outcome, recorded, as_json: bool) -> str:
    """One printed line for one event (watch, replace, startup)."""
    if as_json:
        doc = {"event": e["transition"], "ref": e["ref"], "check": e.get("check"), "transition": e["transition"],
               "value": e.get("value"), "limit": e.get("limit"), "unit": e.get("unit"),
               "compare": e.get("compare"), "detail": e.get("detail"), "file": outcome.file, "revision": recorded.id if recorded else None,
               "at": recorded.at if recorded else None, "author": recorded.author if recorded else None,
               "source": recorded.source if recorded else None}
        if e["transition"] == "input-error" and outcome.errors:
            first = outcome.errors[0]
            doc.update(line=first.line, col=first.col, message=first.message,
                       errors=[x.as_json() for x in outcome.errors])
        return json.dumps(doc, ensure_ascii=False)
    who = f" by {clean(recorded.author)}" if recorded else ""
    if e["transition"] == "input-error":
        return f"INPUT ERROR  {clean(e['detail'])}  (last good state kept; {clean(outcome.file)}{who})"
    if e.get("check") == "deadline" and e.get("what"):   # a deadline in words, not as "days against 0"
        return f"{deadline_words(e)}  ({clean(outcome.file)}{who})"
    mark = {"newly-failing": "NEWLY FAILING", "cleared": "cleared", "worse": "WORSE"}[e["transition"]]
    need = {"<=": "at most", ">=": "at least"}.get(e.get("compare"), "limit")
    return (f"{mark:<13} {clean(e['ref'])}  {e['check']}: {figures.quantity(e.get('value'), e.get('unit'))}, needs {need} "
            f"{figures.quantity(e.get('limit'), e.get('unit'))}  ({clean(outcome.file)}{who})")


def date_lines(passed, as_json: bool) -> list[str]:
    """The printed lines of the deadlines a change of date made overdue (a DatePassed): one per item.
    `--json`: the event's fields as `event_line` gives them, with no file, source `date` and the day."""
    rec, out = passed.recorded, []
    for e in passed.events:
        if as_json:
            out.append(json.dumps({
                "event": e["transition"], "ref": e["ref"], "check": e.get("check"), "transition": e["transition"],
                "value": e.get("value"), "limit": e.get("limit"), "unit": e.get("unit"), "compare": e.get("compare"),
                "detail": e.get("detail"), "file": None, "revision": rec.id, "at": rec.at, "author": rec.author,
                "source": rec.source, "cause": "date-passed", "on": passed.on.isoformat(), "site": passed.site,
                "what": e.get("what"), "due": e.get("due")}, ensure_ascii=False))
            continue
        out.append(f"{deadline_words(e)}  (the date passed: {passed.on.isoformat()}; revision {rec.id}, "
                   f"{clean(rec.author)})")
    return out


def deadline_words(e: dict) -> str:
    """A deadline event in words: `OVERDUE  REF  WHAT: the last day was DATE, N days ago`, or
    `deadline met  REF  WHAT` once it is put right."""
    what = clean(e.get("what") or e.get("detail") or "")
    if e["transition"] == "cleared":
        return f"{'deadline met':<13} {clean(e['ref'])}  {what}"
    late = int(e.get("value") or 0)
    return (f"{'OVERDUE':<13} {clean(e['ref'])}  {what}: the last day was {e.get('due')}, "
            f"{late} day{'s' if late != 1 else ''} ago")


def plain_name(option: str, text: str) -> str:
    """A name given on the command line (`--by`): refused if it holds a control or bidirectional
    character, which would show one name and record another."""
    at = first_unsafe(text)
    if at is not None:
        raise CommandError(f"{option} {clean(text)!s}: character {at + 1} is a control or direction character; "
                           "give the name as plain text")
    if not text.strip():
        raise CommandError(f"{option} is empty: say who")
    if text.strip().casefold().startswith("izwatch ("):
        raise CommandError(f"{option} {clean(text)!s}: names beginning 'izwatch (' are izwatch's own, for what no "
                           "person did; give your name")
    return text.strip()
