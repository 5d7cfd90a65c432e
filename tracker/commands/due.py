"""`izwatch due PATH [--on DATE] [--json]`: every deadline of every site, soonest first.

Exit 0: nothing overdue; 1: something is overdue; 2: bad input (the sites that load are still
listed; a site that does not load has no deadlines to show).
"""
from __future__ import annotations

import datetime
import json
import sys

from tracker.cli import EXIT_FAIL, EXIT_INPUT, EXIT_OK
from tracker.commands.common import CommandError, fail
from tracker.inspection import due as dues
from tracker.loading import load_estate
from tracker.loading.estate import EstateError
from tracker.output.terminal_text import clean

CAUTION = ("Deadlines as tracker/data/deadlines.yaml reads the regulations it cites; a rule marked "
           "[recalled] is not confirmed. The landlord's duties are set by the current law, not by this list.")
_MARK = {dues.OK: "ok", dues.DUE_SOON: "DUE SOON", dues.OVERDUE: "OVERDUE", dues.DONE: "done"}


def on_date(text: str | None) -> datetime.date:
    if text is None:
        return datetime.date.today()
    try:
        return datetime.date.fromisoformat(text)
    except ValueError:
        raise CommandError(f"--on {text!r}: give a date as YYYY-MM-DD") from None


def estate_items(estate, on: datetime.date) -> list[dues.DueItem]:
    out = []
    for site_id in sorted(estate.sites):
        out.extend(dues.site_items(estate.sites[site_id], on))
    return out


def _text(items: list[dues.DueItem], on: datetime.date, out) -> None:
    site = None
    for i in items:
        if i.site != site:
            site = i.site
            out.write(f"{clean(site)}\n")
        out.write(f"  {i.due.isoformat()}  {_MARK[i.status]:<8}  {clean(i.what)}\n")
        out.write(f"  {'':10}  {'':8}  ({i.source})\n")
    counts = {s: sum(1 for i in items if i.status == s) for s in dues.STATUSES}
    out.write(f"{len(items)} deadline{'s' if len(items) != 1 else ''} on {on.isoformat()}: "
              f"{counts[dues.OVERDUE]} overdue, {counts[dues.DUE_SOON]} due soon, {counts[dues.OK]} ok, "
              f"{counts[dues.DONE]} done\n")
    out.write(f"Caution: {CAUTION}\n")


def run(args) -> int:
    try:
        on = on_date(args.on)
        estate = load_estate(args.path)
    except CommandError as exc:
        return fail(exc)
    except EstateError as exc:
        return fail(exc)
    for warning in estate.warnings:
        print(warning, file=sys.stderr)
    for e in estate.errors:
        print(e, file=sys.stderr)
    items = estate_items(estate, on)
    if args.json:
        print(json.dumps(dues.document(items), indent=2 if sys.stdout.isatty() else None, ensure_ascii=False))
    else:
        _text(items, on, sys.stdout)
    if estate.errors:
        return EXIT_INPUT
    return EXIT_FAIL if any(i.status == dues.OVERDUE for i in items) else EXIT_OK
