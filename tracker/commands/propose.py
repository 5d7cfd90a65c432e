"""`izwatch propose PATH CHANGE_FILE [--site ID] [--on DATE] [--json]`: a proposed alteration checked
before the work. Reads only; writes nothing (no site file, no history)."""
from __future__ import annotations

import datetime
import json
import sys
from pathlib import Path

from tracker.cli import EXIT_FAIL, EXIT_INPUT, EXIT_OK
from tracker.commands.common import CommandError, check_root, fail
from tracker.loading import load_estate
from tracker.output.json_out import CAUTION
from tracker.output.terminal_text import clean
from tracker.tracking import proposal


def _today(args) -> datetime.date:
    if args.on:
        try:
            return datetime.date.fromisoformat(args.on)
        except ValueError:
            raise CommandError(f"--on {args.on!r} is not a date (YYYY-MM-DD)") from None
    return datetime.date.today()


def _pick_site(estate, wanted: str | None):
    if wanted is not None:
        site = estate.sites.get(wanted)
        if site is None:
            known = ", ".join(sorted(estate.sites)) or "none that load"
            raise CommandError(f"no site '{wanted}' in {estate.root} (sites: {known})")
        return site
    if len(estate.sites) == 1:
        return next(iter(estate.sites.values()))
    raise CommandError("the estate has several sites: name one with --site or `site:` in the change file")


def run(args) -> int:
    try:
        root = check_root(args.path)
        on = _today(args)
        change_path = Path(args.change)
        try:
            text = change_path.read_text(encoding="utf-8")
        except (OSError, UnicodeDecodeError) as exc:
            raise CommandError(f"cannot read {args.change}: {exc}") from None
        change = proposal.read_change(text, args.change)
        estate = load_estate(root)
        site = _pick_site(estate, args.site or change.site_id)
        bad = [e for e in estate.errors if e.file.startswith(f"{site.folder}/") or not site.folder]
        if bad:
            raise CommandError(f"site {site.id} has input errors; fix them first:\n" + "\n".join(map(str, bad)))
        altered = proposal.apply(site, change)
        connect_on = proposal.connect_date(change, on)
    except proposal.ChangeError as exc:
        for e in exc.errors:
            print(clean(str(e)), file=sys.stderr)
        return EXIT_INPUT
    except CommandError as exc:
        return fail(exc)
    a = proposal.assess(site, altered, connect_on)
    if args.json:
        doc = proposal.as_json(a)
        doc["caution"] = CAUTION
        print(json.dumps(doc, ensure_ascii=False, indent=1))
    else:
        print("\n".join(clean(line) for line in render(a)))
    return EXIT_FAIL if a.breaks_something else EXIT_OK


def render(a: proposal.Assessment) -> list[str]:
    lines = [f"proposed alteration to {a.site.id} ({a.site.name})".replace(" ()", ""),
             "checked before the work; nothing written (BS 7671 132.16: the existing installation must be "
             "adequate for the alteration)"]
    if a.broken:
        lines.append("would break or leave in question:")
        for b in a.broken:
            was = "new" if b.before is None else b.before
            lines.append(f"  {proposal.MARK[b.after]:<4} {b.ref}  {b.check} ({was} → {b.after})")
            if b.detail:
                lines.append(f"       {b.detail}")
    else:
        lines.append("breaks nothing: every check that passed still passes")
    show = lambda x: "—" if x is None else f"{x:.1f} A"  # noqa: E731
    moved = [(ref, before, after, limit) for ref, before, after, limit in a.demand
             if before is None or after is None or abs(after - before) >= 0.005]
    if moved:
        lines.append("maximum demand, before → after:")
    else:
        origin = a.demand[-1]
        lines.append(f"maximum demand unchanged: {show(origin[2])} at the origin")
    for ref, before, after, limit in moved:
        lim = f" (limit {limit:g} A)" if limit is not None else ""
        lines.append(f"  {ref:<24} {show(before)} → {show(after)}{lim}")
    o = a.outcome
    if o is not None and o.route != "none":
        lines.append(f"network operator: {o.detail()}")
        if a.deadline():
            lines.append(f"  connected on {a.connect_on.isoformat()}: notify by {a.deadline()}")
    else:
        lines.append("network operator: nothing in this alteration to tell them")
    for ref, text in a.remedies:
        lines.append(f"remedy for {ref}: {text}")
    lines.append("Caution: verify against the current regulations and the maker's data; work on "
                 "installations is for qualified people.")
    return lines
