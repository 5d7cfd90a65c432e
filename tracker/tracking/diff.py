"""Element-level differences between two states of a site file: added, removed, modified
(field by field, nested fields dotted: `device.rating_a`)."""
from __future__ import annotations

import datetime
from dataclasses import dataclass, fields, is_dataclass

from tracker.output import figures
from tracker.model import Site, board_ref, circuit_ref, inspection_ref, load_ref

ADDED, REMOVED, MODIFIED = "added", "removed", "modified"


@dataclass(frozen=True, slots=True)
class Change:
    ref: str
    change: str
    field: str | None = None
    old: object = None
    new: object = None

    def as_row(self) -> tuple:
        return (self.ref, self.change, self.field, self.old, self.new)

    def __str__(self) -> str:
        if self.change == MODIFIED:
            return f"{self.ref} {self.field} {figures.change(self.old, self.new)}"
        return f"{self.ref} {self.change}"


def _flat(obj, prefix: str = "", skip=("loads",)) -> dict:
    out = {}
    for f in fields(obj):
        if not f.compare or f.name in skip:
            continue
        value = getattr(obj, f.name)
        if is_dataclass(value):
            out.update(_flat(value, f"{prefix}{f.name}.", skip))
        elif isinstance(value, datetime.date):
            out[prefix + f.name] = value.isoformat()   # (the history keeps values as JSON)
        else:
            out[prefix + f.name] = value
    return out


_INSPECTION_SKIP = ("results", "observations", "key", "date")


def _inspection_elements(site: Site, file: str) -> dict[str, dict]:
    """An inspection (`SITE/inspection:DATE`), each circuit's readings in it
    (`SITE/inspection:DATE/BOARD/CIRCUIT`) and each observation (`…/observation:N`, from 1)."""
    out: dict[str, dict] = {}
    for x in site.inspections:
        if x.src is None or x.src.file != file:
            continue
        ref = inspection_ref(site.id, x)
        out[ref] = {"date": x.date.isoformat(), **_flat(x, "", _INSPECTION_SKIP)}
        for m in x.results:
            out[f"{ref}/{m.ref}"] = _flat(m, "", ("ref",))
        for n, o in enumerate(x.observations, 1):
            out[f"{ref}/observation:{n}"] = _flat(o)
    return out


def elements(site: Site | None, file: str) -> dict[str, dict]:
    """ref -> flattened fields of every element read from `file`."""
    if site is None:
        return {}
    out: dict[str, dict] = {}
    if site.files and site.files[0] == file:
        meta = {"site.name": site.name, "site.rules": site.rules, "site.premises": site.premises,
                "site.jurisdiction": site.jurisdiction, "site.tenure": site.tenure}
        meta.update(_flat(site.supply, "supply."))
        out[site.id] = meta
    for b in site.boards:
        if b.src.file == file:
            out[board_ref(site.id, b.id)] = _flat(b)
    for c in site.circuits:
        if c.src.file == file:
            out[circuit_ref(site.id, c)] = _flat(c)
            for ld in c.loads:
                out[load_ref(site.id, c, ld)] = _flat(ld)
    out.update(_inspection_elements(site, file))
    return out


def diff_file(old: Site | None, new: Site | None, file: str) -> list[Change]:
    before, after = elements(old, file), elements(new, file)
    changes: list[Change] = []
    for ref in before:
        if ref not in after:
            changes.append(Change(ref, REMOVED))
    for ref, values in after.items():
        if ref not in before:
            changes.append(Change(ref, ADDED))
            continue
        prior = before[ref]
        for name, value in values.items():
            if prior.get(name) != value:
                changes.append(Change(ref, MODIFIED, name, prior.get(name), value))
    return changes
