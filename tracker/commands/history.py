"""`izwatch history PATH [--ref REF] [--since DATE] [--json] [--db FILE]`."""
from __future__ import annotations

import json
import re

from tracker.cli import EXIT_OK
from tracker.commands.common import CommandError, check_root, db_path, fail, open_history
from tracker.history import HistoryError, location_exists, query
from tracker.output.terminal_text import clean
from tracker.output import figures
from tracker.output.times import local_stamp

DATE = re.compile(r"\d{4}-\d{2}-\d{2}([T ]\d{2}:\d{2}(:\d{2}(\.\d+)?)?)?Z?")    # matched whole (fullmatch)


def render(revisions: list[dict], filtered: bool = False) -> str:
    lines = []
    for r in revisions:
        what = clean(r["file"] or (f"acknowledgement of {r['ack']['ref']}" if r.get("ack") else "")
                     or (f"{r['site']}: deadlines the date passed (no file changed)" if r["source"] == "date" else ""))
        note = f" — {clean(r['note'])}" if r["note"] else ""
        signed = r.get("signature")
        commit = ""
        if signed:      # arrived as a git commit: git's verdict on its signature
            commit = f"  [commit {signed['status']}" + (f" by {clean(signed['signer'])}" if signed["signer"] else "") + "]"
        lines.append(f"#{r['id']}  {local_stamp(r['at'], seconds=True)}  {r['source']}  {what}  "
                     f"by {clean(r['author'])}{commit}{note}")
        for c in r["changes"]:
            if c["change"] == "modified":
                lines.append(f"    {clean(c['ref'])} {clean(c['field'])} "
                             f"{clean(figures.change(c['old'], c['new']))}")
            else:
                lines.append(f"    {clean(c['ref'])} {c['change']}")
        for e in r["events"]:
            if e["transition"] == "input-error":
                lines.append(f"    ! input error: {clean(e['detail'])}")
            elif e["check"] == "deadline" and e.get("detail"):    # what, its last day and its rule, in words
                lines.append(f"    ! {clean(e['ref'])} deadline {e['transition']}: {clean(e['detail'])}")
            else:
                lines.append(f"    ! {clean(e['ref'])} {e['check']} {e['transition']}")
        if r.get("ack"):
            later = r["ack"].get("superseded_by")
            lines.append(f"    acknowledged: {clean(r['ack']['ref'])} ({', '.join(r['ack']['checks'])})"
                         + (f" — superseded by #{later}" if later else ""))
        elif not r["changes"] and not r["events"] and r["file"]:
            lines.append("    no element changed (comments or layout only, or the file loads again as it last did)")
    if lines:
        return "\n".join(lines)
    return "no revisions match" if filtered else "no revisions recorded"


def run(args) -> int:
    try:
        check_root(args.path)
        if args.since and not DATE.fullmatch(args.since):
            raise CommandError(f"--since {args.since!r}: give a date as YYYY-MM-DD (or YYYY-MM-DDTHH:MM)")
        if not location_exists(db_path(args)):
            print("[]" if args.json else "no history recorded yet")
            return EXIT_OK
        history = open_history(args, create=False)
    except CommandError as exc:
        return fail(exc)
    since = args.since.replace(" ", "T") if args.since else None
    try:
        revs = query.revisions(history, ref=args.ref, since=since)
    except HistoryError as exc:
        return fail(CommandError(str(exc)))
    finally:
        history.close()
    if args.json:
        print(json.dumps(revs, indent=2, ensure_ascii=False))
    else:
        print(render(revs, filtered=bool(args.ref or args.since)))
    return EXIT_OK
