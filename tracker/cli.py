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

EXIT_OK, EXIT_FAIL, EXIT_INPUT, EXIT_INTERNAL = 0, 1, 2, 3


def _add_path(p: argparse.ArgumentParser) -> None:
    p.add_argument("path", metavar="PATH", help="an estate folder (of site folders) or one site folder")


def _add_db(p: argparse.ArgumentParser) -> None:
    p.add_argument("--db", metavar="FILE",
                   help="history database (default PATH/.izwatch/history.sqlite, created on first use)")


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

    p = sub.add_parser("check", help="check an estate or a site once",
                       description="Load, validate and check every circuit and board. Exit 0: nothing fails; "
                                   "1: a check fails; 2: the input is invalid.")
    _add_path(p)
    p.add_argument("--json", action="store_true", help="print the izwatch.check/1 JSON document")
    p.add_argument("--problems", action="store_true", help="text output: list only circuits that do not pass")
    p.set_defaults(func=_run("tracker.commands.check"))
    return parser


def _run(module: str):
    def call(args) -> int:
        import importlib
        return importlib.import_module(module).run(args)
    return call


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return args.func(args)
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:
        try:
            sys.stdout = open(os.devnull, "w")  # noqa: SIM115 - keep Python from complaining at exit
        except OSError:
            pass
        return EXIT_OK
    except Exception as exc:  # noqa: BLE001 - the last line of defence: never a traceback
        if os.environ.get("IZWATCH_DEBUG"):
            raise
        print(f"izwatch: internal error: {type(exc).__name__}: {exc} "
              "(set IZWATCH_DEBUG=1 for details, and please report it)", file=sys.stderr)
        return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
