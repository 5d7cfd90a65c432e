"""`izwatch ack PATH REF --by NAME --note TEXT [--db FILE]`.

REF is a circuit (SITE/BOARD/CIRCUIT) as SPEC §4 names it, or — an extension — a board
(SITE/BOARD) or the origin of a site (SITE), whose demand check can fail too.
"""
from __future__ import annotations

from tracker.checks.readings import unmeasured
from tracker.checks.result import PASS
from tracker.cli import EXIT_OK
from tracker.commands.common import CommandError, check_root, fail, folder_of_site, open_history, plain_name
from tracker.output.terminal_text import clean
from tracker.history import NewRevision
from tracker.tracking.authors import Authors
from tracker.tracking.startup import start


def _open_checks(result, ref: str) -> list[str]:
    depth = ref.count("/")
    if depth == 2:
        r = result.circuits.get(ref)
        checks = r.checks if r is not None else None
    elif depth == 1:
        b = result.boards.get(ref)
        checks = (b.check,) if b is not None else None
    else:
        checks = (result.supply_check,) if result.supply_check is not None else None
    if checks is None:
        raise CommandError(f"no {('origin', 'board', 'circuit')[depth]} {ref} in the site files")
    return [c.id for c in checks if c.status != PASS and not unmeasured(c)]


def run(args) -> int:
    try:
        root = check_root(args.path)
        parts = args.circuit_ref.split("/")
        if len(parts) > 3 or not all(parts):
            raise CommandError(f"'{args.circuit_ref}' is not a ref (SITE/BOARD/CIRCUIT, SITE/BOARD or SITE)")
        by = plain_name("--by", args.by)
        if not args.note.strip():
            raise CommandError("--note must say what is being done about it")
        folder = folder_of_site(root, parts[0])
        history = open_history(args)
        state, _ = start(root, history, Authors(root), folders={folder})
        site_state = state.site_by_id(parts[0])
        if site_state is None or site_state.result is None:
            raise CommandError(f"site {parts[0]} does not load; fix it first")
        open_checks = _open_checks(site_state.result, args.circuit_ref)
        if not open_checks:
            raise CommandError(f"{args.circuit_ref} passes every check: nothing to acknowledge")
    except CommandError as exc:
        return fail(exc)
    rec = history.record(NewRevision(source="ack", author=by, site=parts[0], note=args.note,
                                     ack=(args.circuit_ref, open_checks)))
    history.close()
    print(f"{args.circuit_ref}: acknowledged ({', '.join(open_checks)}) as revision {rec.id} by {clean(by)}: "
          f"{clean(args.note)}")
    return EXIT_OK
