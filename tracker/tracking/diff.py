"""Element-level differences between two states of a site file: added, removed, modified
(field by field, nested fields dotted: `device.rating_a`)."""
from __future__ import annotations

import datetime
from dataclasses import dataclass, fields, is_dataclass

from tracker.output import figures
from tracker.model import Site, board_ref, circuit_ref, inspection_ref, load_ref, source_ref

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


_COMPARED: dict[type, tuple[str, ...]] = {}


def _compared(cls: type) -> tuple[str, ...]:
    """The names of a model class's compared fields, in declaration order (read once a class)."""
    names = _COMPARED.get(cls)
    if names is None:
        names = _COMPARED[cls] = tuple(f.name for f in fields(cls) if f.compare)
    return names


def _flat(obj, prefix: str = "", skip=("loads", "sources")) -> dict:
    out = {}
    for name in _compared(type(obj)):
        if name in skip:
            continue
        value = getattr(obj, name)
        if is_dataclass(value):
            out.update(_flat(value, f"{prefix}{name}.", skip))
        elif isinstance(value, datetime.date):
            out[prefix + name] = value.isoformat()   # (the history keeps values as JSON)
        else:
            out[prefix + name] = value
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


def _items(site: Site | None, file: str) -> dict[str, object]:
    """ref -> every element read from `file`: a board, circuit or load as its model object (its
    fields flattened only where it differs), the site's own fields and inspections already flat."""
    if site is None:
        return {}
    out: dict[str, object] = {}
    if site.files and site.files[0] == file:
        meta = {"site.name": site.name, "site.rules": site.rules, "site.premises": site.premises,
                "site.diversity": _allowances_text(site.diversity),
                "site.jurisdiction": site.jurisdiction, "site.tenure": site.tenure}
        meta.update(_flat(site.supply, "supply."))
        out[site.id] = meta
    for b in site.boards:
        if b.src.file == file:
            out[board_ref(site.id, b.id)] = b
    for c in site.circuits:
        if c.src.file == file:
            out[circuit_ref(site.id, c)] = c
            for ld in c.loads:
                out[load_ref(site.id, c, ld)] = ld
            for s in c.sources:
                out[source_ref(site.id, c, s)] = s
    out.update(_inspection_elements(site, file))
    return out


def elements(site: Site | None, file: str) -> dict[str, dict]:
    """ref -> flattened fields of every element read from `file`."""
    return {ref: x if isinstance(x, dict) else _flat(x) for ref, x in _items(site, file).items()}


def diff_file(old: Site | None, new: Site | None, file: str) -> list[Change]:
    """The changes from `old` to `new` of the elements read from `file`. The model's objects are
    frozen and compare by their fields (a position in the file is not compared), so an element
    equal to its former self is passed over without flattening its fields."""
    before, after = _items(old, file), _items(new, file)
    changes: list[Change] = []
    for ref in before:
        if ref not in after:
            changes.append(Change(ref, REMOVED))
    for ref, now in after.items():
        if ref not in before:
            changes.append(Change(ref, ADDED))
            continue
        was = before[ref]
        if was is now or was == now:
            continue
        prior = was if isinstance(was, dict) else _flat(was)
        values = now if isinstance(now, dict) else _flat(now)
        for name, value in values.items():
            if prior.get(name) != value:
                changes.append(Change(ref, MODIFIED, name, prior.get(name), value))
    return changes


def _allowances_text(own: tuple) -> str | None:
    """The site's own allowances as one comparable text (None: none given)."""
    if not own:
        return None
    return "; ".join(f"{kind}: " + ", ".join(f"{k} {list(v) if isinstance(v, tuple) else v}" for k, v in rule)
                     for kind, rule in own)
