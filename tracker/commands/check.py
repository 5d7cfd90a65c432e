"""`izwatch check PATH [--json]`."""
from __future__ import annotations

import json
import sys
from pathlib import Path

from tracker.checks.result import FAIL
from tracker.checks.site import evaluate_site
from tracker.cli import EXIT_FAIL, EXIT_INPUT, EXIT_OK
from tracker.loading import load_estate
from tracker.loading.estate import EstateError


def report_problems(estate) -> None:
    for w in estate.warnings:
        print(w, file=sys.stderr)
    for e in estate.errors:
        print(e, file=sys.stderr)


def run(args) -> int:
    try:
        estate = load_estate(Path(args.path))
    except EstateError as exc:
        print(f"izwatch: {exc}", file=sys.stderr)
        if args.json:
            print(json.dumps({"schema": "izwatch.check/1", "circuits": [], "boards": [],
                              "errors": [{"file": str(args.path), "line": 0, "col": 0, "path": "",
                                          "message": str(exc), "text": str(exc)}]}, indent=2))
        return EXIT_INPUT
    results = [evaluate_site(site) for site in estate.sites.values()]
    report_problems(estate)
    if args.json:
        from tracker.output.json_out import check_document
        doc = check_document(results, estate.errors, estate.warnings)
        json.dump(doc, sys.stdout, indent=2, ensure_ascii=False)
        sys.stdout.write("\n")
    else:
        from tracker.output.text_out import render
        print(render(results, only_problems=args.problems))
    if estate.errors:
        return EXIT_INPUT
    failing = any(sr.status == FAIL for sr in results)
    return EXIT_FAIL if failing else EXIT_OK
