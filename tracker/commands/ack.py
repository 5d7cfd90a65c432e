"""`izwatch ack PATH CIRCUIT_REF --by NAME --note TEXT [--db FILE]`."""
from __future__ import annotations

from tracker.checks.result import PASS
from tracker.cli import EXIT_OK
from tracker.commands.common import CommandError, check_root, fail, folder_of_site, open_history
from tracker.history import NewRevision
from tracker.tracking.authors import Authors
from tracker.tracking.startup import start


def run(args) -> int:
    try:
        root = check_root(args.path)
        parts = args.circuit_ref.split("/")
        if len(parts) != 3 or not all(parts):
            raise CommandError(f"'{args.circuit_ref}' is not a circuit ref (SITE/BOARD/CIRCUIT)")
        if not args.note.strip():
            raise CommandError("--note must say what is being done about it")
        folder = folder_of_site(root, parts[0])
        history = open_history(args)
        state, _ = start(root, history, Authors(root), folders={folder})
        ss = state.site_by_id(parts[0])
        result = ss.result.circuits.get(args.circuit_ref) if ss is not None and ss.result else None
        if result is None:
            raise CommandError(f"no circuit {args.circuit_ref} in the site files")
        open_checks = [c.id for c in result.checks if c.status != PASS]
        if not open_checks:
            raise CommandError(f"{args.circuit_ref} passes every check: nothing to acknowledge")
    except CommandError as exc:
        return fail(exc)
    rec = history.record(NewRevision(source="ack", author=args.by, site=parts[0], note=args.note,
                                     ack=(args.circuit_ref, open_checks)))
    history.close()
    print(f"{args.circuit_ref}: acknowledged ({', '.join(open_checks)}) as revision {rec.id} by {args.by}: {args.note}")
    return EXIT_OK
