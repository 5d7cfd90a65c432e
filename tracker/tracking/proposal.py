"""A proposed alteration, checked before the work (BS 7671:2018 132.16: no addition or alteration
unless the existing installation is adequate for it): the change file read and validated, applied
to the site in memory, and the site checked before and after. Nothing is written anywhere.

The change file (schema/change.schema.json) adds circuits written as in a site file, replaces
loads, and adds sources to existing circuits.
"""
from __future__ import annotations

import datetime
from dataclasses import dataclass, field, replace
from functools import lru_cache

from tracker.checks import notification, readings, remedy
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, SEVERITY, WARN
from tracker.checks.site import SiteResult, evaluate_site
from tracker.loading import build, semantic, yamlread
from tracker.loading.errors import InputError
from tracker.model import Site, Src
from tracker.schemas_access import schema_json

SCHEMA_FILE = "change.schema.json"


class ChangeError(Exception):
    """The change file cannot be used; `errors` are InputErrors (file:line:col)."""

    def __init__(self, errors: list[InputError]):
        super().__init__("\n".join(str(e) for e in errors))
        self.errors = errors


@lru_cache(maxsize=1)
def _validator():
    import jsonschema
    schema = dict(schema_json(SCHEMA_FILE))
    schema["$defs"] = {**schema_json("site.schema.json")["$defs"], **schema["$defs"]}
    jsonschema.Draft202012Validator.check_schema(schema)
    from tracker.loading.schema_check import whole_patterns
    return whole_patterns(jsonschema.Draft202012Validator)(schema)     # "$" is the very end: "7\n" is no id


@dataclass
class Change:
    """A change file, read and checked against its schema (not yet against a site)."""

    file: str
    text: str
    doc: dict
    locator: yamlread.Locator

    def error(self, path: tuple, message: str) -> InputError:
        return InputError(self.file, *self.locator.locate(path), message, path)

    @property
    def site_id(self) -> str | None:
        return self.doc.get("site")


def read_change(text: str, file: str) -> Change:
    from tracker.loading.schema_check import explain

    doc, errors = yamlread.parse(text, file)
    if errors:
        raise ChangeError(errors)
    if doc is None:
        doc = {}
    locator = yamlread.Locator(text)
    if not isinstance(doc, dict):
        raise ChangeError([InputError(file, 1, 1, "a change file is a mapping (site, circuits, replace, sources)")])
    problems = []
    for err in _validator().iter_errors(doc):
        problems.extend(explain(err))
    if problems:
        raise ChangeError(sorted((InputError(file, *locator.locate(p), m, p) for p, m in problems),
                                 key=lambda e: (e.line, e.col)))
    return Change(file, text, doc, locator)


def connect_date(change: Change, default: datetime.date) -> datetime.date:
    value = change.doc.get("connect_on")
    if value is None:
        return default
    if isinstance(value, datetime.date):
        return value
    try:
        return datetime.date.fromisoformat(str(value))
    except ValueError:
        raise ChangeError([change.error(("connect_on",), f"{value!r} is not a date (YYYY-MM-DD)")]) from None


def apply(site: Site, change: Change) -> Site:
    """The site with the change made, in memory. Raises ChangeError with every problem found."""
    p = build.Problems(change.file)
    doc = change.doc
    new_circuits = [build.build_circuit(c, i, p) for i, c in enumerate(doc.get("circuits") or ())]
    circuits = list(site.circuits)
    index = {(c.board, c.id): i for i, c in enumerate(circuits)}
    for j, rep in enumerate(doc.get("replace") or ()):
        path = ("replace", j)
        board_id, circuit_id, load_id = rep["load"].split("/")
        i = index.get((board_id, circuit_id))
        loads = circuits[i].loads if i is not None else ()
        k = next((n for n, ld in enumerate(loads) if ld.id == load_id), None)
        if k is None:
            p.error(path + ("load",), f"no load {rep['load']} in site {site.id}")
            continue
        rating = {key: rep[key] for key in ("power_kw", "current_a", "rated_current_a") if key in rep}
        if len(rating) != 1:
            p.error(path, "give the new load's rating: one of power_kw, current_a, rated_current_a")
            continue
        old = loads[k]
        sizes = {"power_kw": None, "current_a": None, "rated_current_a": None}
        sizes.update({key: float(v) for key, v in rating.items()})
        new = replace(old, **sizes,
                      kind=rep.get("kind", old.kind),
                      starting_current_a=rep.get("starting_current_a", old.starting_current_a),
                      load_control_a=rep.get("load_control_a", old.load_control_a),
                      src=Src(change.file, path))
        circuits[i] = replace(circuits[i], loads=loads[:k] + (new,) + loads[k + 1:])
    for j, sd in enumerate(doc.get("sources") or ()):
        path = ("sources", j)
        board_id, circuit_id = sd["circuit"].split("/")
        i = index.get((board_id, circuit_id))
        if i is None:
            p.error(path + ("circuit",), f"no circuit {sd['circuit']} in site {site.id}")
            continue
        src = build.build_source({k: v for k, v in sd.items() if k != "circuit"}, 0, 0, p)
        src = replace(src, src=Src(change.file, path))
        circuits[i] = replace(circuits[i], sources=circuits[i].sources + (src,))
    p.warnings.clear()   # keys of a change file are checked by its own schema
    circuits += new_circuits
    problems = list(p.errors)
    problems += semantic.check_site(list(site.boards), circuits, supply=site.supply)
    if problems:
        raise ChangeError(sorted((change.error(path, message) for _f, path, message in problems),
                                 key=lambda e: (e.line, e.col)))
    return replace(site, circuits=tuple(circuits))


# -- what it does ----------------------------------------------------------------------------

@dataclass
class Broken:
    ref: str
    check: str
    before: str | None       # status before (None: a new circuit)
    after: str
    detail: str


@dataclass
class Assessment:
    site: Site
    altered: Site
    before: SiteResult
    after: SiteResult
    broken: list[Broken] = field(default_factory=list)
    demand: list[tuple[str, float | None, float | None, float | None]] = field(default_factory=list)
    outcome: notification.Outcome | None = None
    connect_on: datetime.date | None = None
    remedies: list[tuple[str, str]] = field(default_factory=list)

    @property
    def breaks_something(self) -> bool:
        return any(b.after == FAIL for b in self.broken)

    def deadline(self) -> str | None:
        if self.outcome is None or self.outcome.route != "notify-after" or self.connect_on is None:
            return None
        return (self.connect_on + datetime.timedelta(days=self.outcome.notify_days)).isoformat()


def _worse(before: str | None, after: str) -> bool:
    if after == PASS:
        return False
    return before is None or SEVERITY[after] > SEVERITY[before]


def assess(site: Site, altered: Site, connect_on: datetime.date | None = None) -> Assessment:
    before, after = evaluate_site(site), evaluate_site(altered)
    a = Assessment(site, altered, before, after, connect_on=connect_on)
    for ref, r in after.circuits.items():
        prior = before.circuits.get(ref)
        old = {c.id: c.status for c in prior.checks} if prior else {}
        for c in r.checks:
            if readings.unmeasured(c):
                continue      # a reading check with nothing measured says nothing of the alteration
            if _worse(old.get(c.id), c.status):
                a.broken.append(Broken(ref, c.id, old.get(c.id), c.status, c.detail))
        if r.status == FAIL and any(b.ref == ref for b in a.broken):   # what the alteration breaks
            fix = remedy.find(r)
            if fix and fix.get("text"):
                a.remedies.append((ref, fix["text"]))
    for ref, b in after.boards.items():
        prior = before.boards.get(ref)
        a.demand.append((ref, prior.demand.demand_a if prior else None, b.demand.demand_a, b.check.limit))
        if _worse(prior.status if prior else None, b.status):
            a.broken.append(Broken(ref, b.check.id, prior.status if prior else None, b.status, b.check.detail))
            if b.status == FAIL and "supplier's fuse" not in b.check.detail:   # else the origin's remedy says it
                a.remedies.append((ref, "the board's main switch would carry more than its rating: a larger main "
                                        "switch, a load control on the new load, or the load moved to another board"))
    sb, sa = before.supply_check, after.supply_check
    a.demand.append((site.id, sb.value, sa.value, sa.limit))
    if _worse(sb.status, sa.status):
        a.broken.append(Broken(site.id, sa.id, sb.status, sa.status, sa.detail))
        if sa.status == FAIL:
            a.remedies.append((site.id, "the maximum demand would exceed the supplier's fuse: apply to the network "
                                        "operator for a larger supply before connecting, or reduce the new load (a "
                                        "load control on a charge point counts its limit, 722.311)"))
    a.outcome = notification.change_outcome(site, altered, sb.value, sa.value)
    return a


def as_json(a: Assessment) -> dict:
    return {
        "schema": "izwatch.proposal/1",
        "site": a.site.id,
        "breaks": a.breaks_something,
        "broken": [{"ref": b.ref, "check": b.check, "before": b.before, "after": b.after, "detail": b.detail}
                   for b in a.broken],
        "demand": [{"ref": ref, "before_a": _r(x), "after_a": _r(y), "limit_a": lim} for ref, x, y, lim in a.demand],
        "notification": a.outcome.as_json() if a.outcome else None,
        "connect_on": a.connect_on.isoformat() if a.connect_on else None,
        "notify_by": a.deadline(),
        "remedies": [{"ref": ref, "text": text} for ref, text in a.remedies],
    }


def _r(x):
    return None if x is None else round(x, 2)


MARK = {FAIL: "FAIL", WARN: "warn", NOT_ASSESSED: "n/a", PASS: "ok"}
