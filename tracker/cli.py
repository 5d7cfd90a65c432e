"""The `izwatch` command line (SPEC §4). Each command lives in `tracker/commands/`; heavy
modules are imported only by the command that needs them, so `check` never loads the UI.

Exit codes: 0 nothing fails; 1 a check fails (verify: the chain is broken); 2 the input is
invalid or the command line is wrong; 3 an internal error (a bug: please report it).
"""
from __future__ import annotations

import argparse
import os
import sys

from tracker import __version__
from tracker.parallel import JOBS_PER_CORE, available_cores, max_jobs

EXIT_OK, EXIT_FAIL, EXIT_INPUT, EXIT_INTERNAL = 0, 1, 2, 3


def _add_path(p: argparse.ArgumentParser) -> None:
    p.add_argument("path", metavar="PATH", help="an estate folder (of site folders) or one site folder")


def _add_db(p: argparse.ArgumentParser, creates: bool = True) -> None:
    p.add_argument("--db", metavar="FILE",
                   help="history database: a file, or a PostgreSQL server's postgresql://… connection string "
                        "(default: the environment's IZWATCH_DB, else PATH/.izwatch/history.sqlite, "
                        + ("created on first use)" if creates else "only read; never created)"))


def _cores() -> str:
    n = available_cores()
    return f"{n} core" if n == 1 else f"{n} cores"


def _jobs(text: str) -> int:
    try:
        n = int(text) if len(text) < 10 else -1
    except ValueError:
        n = -1
    if n < 1:
        raise argparse.ArgumentTypeError(f"{text!r}: give a whole number of worker processes, 1 or more")
    if n > max_jobs():
        raise argparse.ArgumentTypeError(f"{text!r}: at most {max_jobs()} worker processes here "
                                         f"({JOBS_PER_CORE} per core, {_cores()} available to izwatch)")
    return n


def _command_check(sub) -> None:
    p = sub.add_parser("check", help="check an estate or a site once",
                       description="Load, validate and check every circuit and board. Exit 0: nothing fails; "
                                   "1: a check fails; 2: the input is invalid.")
    _add_path(p)
    p.add_argument("--json", action="store_true", help="print the izwatch.check/1 JSON document")
    p.add_argument("--problems", action="store_true", help="text output: list only circuits that do not pass")
    p.add_argument("--jobs", type=_jobs, default=0, metavar="N",
                   help="worker processes for large estates (default: one per core; 1: a single process)")
    p.set_defaults(func=_run("tracker.commands.check"))


def _command_watch(sub) -> None:
    p = sub.add_parser("watch", help="keep watching: re-check and record every change",
                       description="Watch the site files; every change is re-checked, recorded in the history "
                                   "and its events printed, one line each. Ctrl-C stops.")
    _add_path(p)
    _add_db(p)
    p.add_argument("--json", action="store_true", help="print JSON lines (a ready line, then one per event)")
    p.add_argument("--verbose", action="store_true", help="also print one line per recorded revision")
    p.set_defaults(func=_run("tracker.commands.watch"))


def _command_tui(sub) -> None:
    p = sub.add_parser("tui", help="the terminal UI: problems first, live, with their working and history",
                       description="Open the terminal UI on an estate: the circuits that fail, newly broken "
                                   "first, kept up to date by a watcher while it runs. Press ? inside for every key.")
    _add_path(p)
    _add_db(p)
    p.set_defaults(func=_run("tracker.commands.tui"))


def _command_replace(sub) -> None:
    p = sub.add_parser("replace", help="log an appliance replacement and see what it breaks",
                       description="Rewrite the load's power or current in its site file (comments and layout "
                                   "kept), record who and why, re-check, and print before → after for the "
                                   "circuit and everything upstream. Exit 1 if any of it fails afterwards.")
    _add_path(p)
    p.add_argument("load_ref", metavar="LOAD_REF", help="SITE/BOARD/CIRCUIT/LOAD")
    size = p.add_mutually_exclusive_group(required=True)
    size.add_argument("--power-kw", type=float, metavar="X", help="the new appliance's rated power, kW")
    size.add_argument("--current-a", type=float, metavar="X", help="the new appliance's rated current, A")
    p.add_argument("--by", required=True, metavar="NAME", help="who made the change")
    p.add_argument("--note", metavar="TEXT", help="why (work order, what was fitted)")
    p.add_argument("--dry-run", action="store_true", help="show the result without writing anything")
    _add_db(p)
    p.set_defaults(func=_run("tracker.commands.replace"))


def _command_propose(sub) -> None:
    p = sub.add_parser("propose", help="check a proposed alteration before the work (writes nothing)",
                       description="Apply a proposed alteration from a small YAML file (new circuits, replaced "
                                   "loads, added sources; schema/change.schema.json) to a site in memory and "
                                   "report every check it would break anywhere in the site, the maximum demand "
                                   "before → after, whether the network operator is notified after or applied to "
                                   "first, and the remedy (BS 7671 132.16). Nothing is written. Exit 0: nothing "
                                   "newly fails; 1: something would fail; 2: bad input.")
    _add_path(p)
    p.add_argument("change", metavar="CHANGE_FILE", help="the proposed alteration (YAML)")
    p.add_argument("--site", metavar="ID", help="the site (else the change file's `site:`, or the only site)")
    p.add_argument("--on", metavar="DATE", help="today's date for the deadline (YYYY-MM-DD; default today)")
    p.add_argument("--json", action="store_true", help="print the izwatch.proposal/1 JSON document")
    p.set_defaults(func=_run("tracker.commands.propose"))


def _command_history(sub) -> None:
    p = sub.add_parser("history", help="what changed, when, by whom, and what it did",
                       description="List the recorded revisions with their changes and events.")
    _add_path(p)
    p.add_argument("--ref", metavar="REF", help="only what concerns this site, board, circuit or load")
    p.add_argument("--since", metavar="DATE", help="only revisions at or after DATE (YYYY-MM-DD)")
    p.add_argument("--json", action="store_true", help="print a JSON list of revisions")
    _add_db(p, creates=False)
    p.set_defaults(func=_run("tracker.commands.history"))


def _command_ack(sub) -> None:
    p = sub.add_parser("ack", help="acknowledge an open problem (e.g. remedial work booked)",
                       description="Record an acknowledgement of a circuit's open problems (or a board's, or a "
                                   "site origin's demand), with who and a note. It is part of the history's chain.")
    _add_path(p)
    p.add_argument("circuit_ref", metavar="CIRCUIT_REF",
                   help="SITE/BOARD/CIRCUIT (or SITE/BOARD for a board, SITE for the origin)")
    p.add_argument("--by", required=True, metavar="NAME")
    p.add_argument("--note", required=True, metavar="TEXT")
    _add_db(p)
    p.set_defaults(func=_run("tracker.commands.ack"))


def _command_verify(sub) -> None:
    p = sub.add_parser("verify", help="check the history's hash chain",
                       description="Recompute the history's hash chain and SQLite's integrity check. Exit 0 "
                                   "when intact, 1 otherwise (naming the first revision that does not match).")
    _add_path(p)
    _add_db(p, creates=False)
    p.add_argument("--head", metavar="FILE",
                   help="also check that the history still holds a chain head exported earlier (export-head)")
    p.set_defaults(func=_run("tracker.commands.verify"))
    _add_keeping_commands(sub)


def _command_due(sub) -> None:
    p = sub.add_parser("due", help="every deadline of the inspection cycle: inspections, remedial work, copies",
                       description="List every site's deadlines on a day — the next inspection and test, the copy "
                                   "of the report to the tenants, remedial work for each C1, C2 or FI observation, "
                                   "written confirmation of completed work — from the rules of the site's "
                                   "jurisdiction and tenure, each with the rule it comes from. Exit 0: nothing "
                                   "overdue; 1: something is overdue; 2: bad input.")
    _add_path(p)
    p.add_argument("--on", metavar="DATE", help="the day to judge the deadlines on (YYYY-MM-DD; default today)")
    p.add_argument("--json", action="store_true", help="print the izwatch.due/1 JSON document")
    p.set_defaults(func=_run("tracker.commands.due"))


def _command_report(sub) -> None:
    p = sub.add_parser("report", help="the landlord's report: the installation, its state and its change history",
                       description="Write a site's report: site and supply, one-line diagram, every circuit's "
                                   "figures and verdict, the open problems with their cause, acknowledgement and "
                                   "remedy, the change history and the result of verifying it. The history is only "
                                   "read. Exit 0: written; 2: bad input.")
    _add_path(p)
    which = p.add_mutually_exclusive_group(required=True)
    which.add_argument("--site", metavar="ID", help="the site to report on")
    which.add_argument("--all-sites", action="store_true",
                       help="one report per site, and an index, into the folder given by -o")
    p.add_argument("--format", choices=("html", "csv", "json"), default="html",
                   help="html: a document to print or hand over (default); csv: one row per circuit; "
                        "json: the whole report, machine-readable (schema/report.schema.json)")
    p.add_argument("-o", "--output", required=True, metavar="FILE",
                   help="the file to write ('-': standard output); with --all-sites, a folder")
    p.add_argument("--since", metavar="DATE", help="history section: only revisions at or after DATE (YYYY-MM-DD)")
    p.add_argument("--jobs", type=_jobs, default=0, metavar="N",
                   help="with --all-sites: worker processes (default: one per core; 1: a single process)")
    _add_db(p, creates=False)
    p.set_defaults(func=_run("tracker.commands.report"))


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="izwatch",
        description="Keeps the sizing checks of existing electrical installations true as they change. "
                    "A tool for competent persons: verify results against the current wiring regulations, "
                    "local codes and manufacturers' data.",
    )
    parser.add_argument("--version", action="version", version=f"izwatch {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True
    for add_command in (_command_check, _command_watch, _command_tui, _command_replace, _command_propose,
                        _command_history, _command_ack,
                        _command_verify, _command_due, _command_report):
        add_command(sub)   # the order of the help's list
    return parser


def _add_keeping_commands(sub) -> None:
    """The history's keeping: copying it between stores, erasing a person, exporting its head."""
    p = sub.add_parser("copy-history", help="copy the history into another store (SQLite ↔ PostgreSQL)",
                       description="Copy every revision of the estate's history (--db, IZWATCH_DB or the default "
                                   "file) into TARGET — a new SQLite file or a postgresql://… database or schema "
                                   "that holds no history yet — and verify the copy: it must give the same chain "
                                   "head. Exit 0: copied and verified; 2: nothing copied (the reason is printed).")
    _add_path(p)
    p.add_argument("--to", required=True, metavar="TARGET", help="a new history file, or postgresql://…")
    _add_db(p, creates=False)
    p.set_defaults(func=_run("tracker.commands.history_admin", "copy"))

    p = sub.add_parser("erase", help="erase a person's name and notes from the history (the chain stays intact)",
                       description="Blank one person's name and the text of every note they wrote; the history "
                                   "shows 'erased' where they were. The hash chain holds only pseudonymous ids and "
                                   "digests, so it still verifies. On PostgreSQL only the tables' owner may erase.")
    _add_path(p)
    p.add_argument("--person", required=True, metavar="NAME", help="the name exactly as recorded")
    _add_db(p, creates=False)
    p.set_defaults(func=_run("tracker.commands.history_admin", "erase"))

    p = sub.add_parser("export-head", help="the chain head with a timestamp, to keep elsewhere",
                       description="Verify the history and print its chain head (revision count, hash, the time "
                                   "taken) as JSON, to keep where the history's administrators cannot change it; "
                                   "`verify --head FILE` checks the history against it later.")
    _add_path(p)
    p.add_argument("-o", "--output", metavar="FILE", help="write it to FILE (default: standard output)")
    _add_db(p, creates=False)
    p.set_defaults(func=_run("tracker.commands.history_admin", "export_head"))


def _run(module: str, function: str = "run"):
    def call(args) -> int:
        import importlib
        return getattr(importlib.import_module(module), function)(args)
    return call


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command == "tui":   # the UI owns the terminal
        return _call(args)
    from tracker.output.streams import guarded
    with guarded():
        return _call(args)


def _call(args) -> int:
    try:
        return args.func(args)
    except KeyboardInterrupt:
        return 130
    except Exception as exc:  # noqa: BLE001 - the last line of defence: never a traceback
        if os.environ.get("IZWATCH_DEBUG"):
            raise
        from tracker.commands.common import disk_full
        from tracker.history.store import HistoryError
        if isinstance(exc, HistoryError):    # said in its own words (damaged, full, read-only, …): not a bug
            from tracker.output.terminal_text import clean_lines
            print(f"izwatch: {clean_lines(exc)}", file=sys.stderr)
            return EXIT_INPUT
        from tracker.history.store import is_damage
        if is_damage(exc):   # a damaged page met by a read: every open checks only what is cheap (README)
            print(f"izwatch: {_history_named(args)}: the history database is damaged ({exc}); it is left as it is "
                  "— run izwatch verify, and restore it from a backup (see README, 'Reliability')", file=sys.stderr)
            return EXIT_INPUT
        if disk_full(exc):   # a write refused: SQLite rolled its transaction back, nothing is half-written
            print(f"izwatch: disk full ({exc}): nothing was recorded by this command; free some space and run it "
                  "again", file=sys.stderr)
            return EXIT_INPUT
        print(f"izwatch: internal error: {type(exc).__name__}: {exc} "
              "(set IZWATCH_DEBUG=1 for details, and please report it)", file=sys.stderr)
        return EXIT_INTERNAL


def _history_named(args) -> str:
    """The history a command was using, to name in a message."""
    try:
        from tracker.commands.common import db_path
        from tracker.history import shown_location
        return shown_location(db_path(args))
    except Exception:  # noqa: BLE001 - naming it is a courtesy
        return "the history"


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
