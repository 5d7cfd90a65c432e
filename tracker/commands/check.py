"""`izwatch check PATH [--json] [--problems] [--jobs N]`.

Sites are independent, so the check streams: each site is loaded, checked and rendered before
the next is read, and memory stays at the size of the largest site whatever the estate's size.
On a machine with several cores, large estates are shared among worker processes, each taking
runs of sites; the parent writes their output in the estate's order.
"""
from __future__ import annotations

import gc
import json
import sys
import textwrap
from dataclasses import dataclass, field
from pathlib import Path

from tracker.checks.result import FAIL
from tracker.checks.site import evaluate_site
from tracker.cli import EXIT_FAIL, EXIT_INPUT, EXIT_OK
from tracker.loading.errors import sort_problems
from tracker.loading.estate import EstateError, duplicate_site_id, load_site, site_folders, split_problems
from tracker.output.terminal_text import clean
from tracker.parallel import available_cores, each_in_runs
from tracker.progress import Progress


class _JsonOut:
    """Writes the izwatch.check/1 document entry by entry (SPEC §5 order)."""

    def __init__(self, out, pretty: bool):
        from tracker.output import json_out
        self.json_out = json_out
        self.out, self.pretty = out, pretty
        self.first = True
        self.boards, self.supplies = [], []
        out.write('{"schema": "izwatch.check/1", "circuits": [')

    def worker_copy(self) -> "_JsonOut":
        twin = object.__new__(_JsonOut)
        twin.json_out, twin.pretty, twin.out = None, self.pretty, None
        return twin

    def _dump(self, obj) -> str:
        if not self.pretty:
            return json.dumps(obj, ensure_ascii=False)
        return "\n" + textwrap.indent(json.dumps(obj, indent=2, ensure_ascii=False), "    ")

    def render(self, result, out: "SiteOut") -> None:
        if self.json_out is None:
            from tracker.output import json_out
            self.json_out = json_out
        entries = [self.json_out.circuit_entry(result, r) for r in result.circuits.values()]
        if self.pretty:
            out.text = ", ".join(self._dump(e) for e in entries)
        else:
            # one dump per site: a list's items come out joined by ", ", as the document joins them
            out.text = json.dumps(entries, ensure_ascii=False)[1:-1]
        out.boards = [self.json_out.board_entry(b, result) for b in result.boards.values()]
        out.supply = self.json_out.supply_entry(result)

    def write(self, out: "SiteOut") -> None:
        if out.text:
            self.out.write(("" if self.first else ", ") + out.text)
            self.first = False
        self.boards.extend(out.boards)
        self.supplies.append(out.supply)

    def close(self, errors, warnings) -> None:
        ind = 2 if self.pretty else None
        tail = {"boards": self.boards, "errors": [e.as_json() for e in errors], "supplies": self.supplies,
                "warnings": [warning.as_json() for warning in warnings], "caution": self.json_out.CAUTION}
        body = json.dumps(tail, indent=ind, ensure_ascii=False)
        self.out.write("], " + body[1:] + "\n")


class _TextOut:
    def __init__(self, out, only_problems: bool):
        from tracker.output import text_out
        self.text_out = text_out
        self.out, self.only = out, only_problems
        self.counts = {k: 0 for k in ("pass", "warn", "not-assessed", "fail")}
        self.sites = 0

    def worker_copy(self) -> "_TextOut":
        twin = object.__new__(_TextOut)
        twin.text_out, twin.only, twin.out = None, self.only, None
        return twin

    def render(self, result, out: "SiteOut") -> None:
        if self.text_out is None:
            from tracker.output import text_out
            self.text_out = text_out
        lines = self.text_out.render_site(result, self.only)
        out.text = "\n".join(lines) + "\n\n" if lines else ""
        for r in result.circuits.values():
            out.counts[r.status] = out.counts.get(r.status, 0) + 1
        demands = [b.status for b in result.boards.values()] + ([result.supply_check.status] if result.supply_check else [])
        out.counts["demand-checked"] = len(demands)
        out.counts["demand-fail"] = demands.count("fail")

    def write(self, out: "SiteOut") -> None:
        self.out.write(out.text)
        self.sites += 1
        for k, v in out.counts.items():
            self.counts[k] = self.counts.get(k, 0) + v

    def close(self, errors, warnings) -> None:
        c = self.counts
        n = sum(c.get(k, 0) for k in ("fail", "warn", "not-assessed", "pass"))
        if self.sites or not errors:
            d = c.get("demand-checked", 0)
            demand = f"; demand: {c.get('demand-fail', 0)} of {d} {_plural(d, 'board or origin', 'boards and origins')} fail" \
                if d else ""
            self.out.write(f"{n} {_plural(n, 'circuit')} in {self.sites} {_plural(self.sites, 'site')}: "
                           f"{c.get('fail', 0)} fail, {c.get('warn', 0)} warn, "
                           f"{c.get('not-assessed', 0)} not fully assessed, {c.get('pass', 0)} pass{demand}\n")
        else:
            self.out.write(f"nothing checked: {len(errors)} input error(s), listed above\n")
        self.out.write(f"Caution: {self.text_out.CAUTION}\n")


def _plural(n: int, one: str, many: str | None = None) -> str:
    return one if n == 1 else (many or one + "s")


@dataclass
class SiteOut:
    """One site loaded, checked and rendered (picklable: it comes back from a worker)."""

    site_id: str | None = None
    first_file: str = ""
    errors: list = field(default_factory=list)
    warnings: list = field(default_factory=list)
    failing: bool = False
    text: str = ""
    boards: list = field(default_factory=list)
    supply: dict | None = None
    counts: dict = field(default_factory=dict)


def load_and_check(shared, item) -> SiteOut:
    """One site folder loaded, checked and rendered (here or in a worker process)."""
    root, renderer = shared
    folder, rel = item
    loaded = load_site(folder, rel, root)
    out = SiteOut(errors=loaded.errors, warnings=loaded.warnings)
    if loaded.site is not None:
        out.site_id, out.first_file = loaded.site.id, loaded.site.files[0]
        result = evaluate_site(loaded.site)
        out.failing = result.status == FAIL
        renderer.render(result, out)
    return out


def run(args) -> int:
    root = Path(args.path)
    try:
        single, folders, problems = site_folders(root)
    except EstateError as exc:
        print(f"izwatch: {clean(exc)}", file=sys.stderr)
        if args.json:
            print(json.dumps({"schema": "izwatch.check/1", "circuits": [], "boards": [],
                              "errors": [{"file": str(args.path), "line": 0, "col": 0, "path": "",
                                          "message": str(exc), "text": str(exc)}]}))
        return EXIT_INPUT
    out = _JsonOut(sys.stdout, sys.stdout.isatty()) if args.json else _TextOut(sys.stdout, args.problems)
    jobs = args.jobs if args.jobs else available_cores()
    errors, warnings = split_problems(problems)     # a site folder nested too deep: an error
    seen: dict[str, str] = {}
    failing = False
    progress = Progress(len(folders), "checking sites")
    gc.freeze()   # what is loaded so far lives to the end: keep the collector from re-scanning it
    for site_out in each_in_runs(load_and_check, folders, (root, out.worker_copy()), jobs):
        errors.extend(site_out.errors)
        warnings.extend(site_out.warnings)
        if site_out.site_id is not None and site_out.site_id in seen:
            errors.append(duplicate_site_id(site_out.site_id, site_out.first_file, seen[site_out.site_id]))
        elif site_out.site_id is not None:
            seen[site_out.site_id] = site_out.first_file
            failing |= site_out.failing
            out.write(site_out)
        progress.advance()
    progress.close()
    errors, warnings = sort_problems(errors), sort_problems(warnings)
    for problem in warnings + errors:
        print(clean(problem), file=sys.stderr)
    out.close(errors, warnings)
    if errors:
        return EXIT_INPUT
    return EXIT_FAIL if failing else EXIT_OK
