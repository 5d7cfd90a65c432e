"""Typed working records: the intermediate figures of a check (factors, Zs, fault currents,
minimum sizes), one frozen record type per check, declared in the check's own module.

A field is a `figure(...)`: its unit and meaning travel with it (the JSON schema's description of
`working` is built from them), and how it appears in `check --json`:

- `ALWAYS`: written whenever the check produced its record, null included;
- `IF_KNOWN`: written only where it has a value (a check that stopped early leaves it out);
- `INTERNAL`: kept for the engine (the site evaluation, headroom), never written.

A circuit's working (`CircuitWorking`) holds its checks' records in the order they ran; its JSON
object lists each record's fields in that order, so key order follows evaluation as it always has.
A misspelt field is an AttributeError (the records have slots), never a silent "—".
"""
from __future__ import annotations

from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field, fields
from functools import cache
from typing import Any, TypeVar

from tracker.checks.result import UNIT_DIGITS
from tracker.model import rebuilt_by_constructor

ALWAYS, IF_KNOWN, INTERNAL = "always", "if-known", "internal"
_SCHEMA_TYPES = {float: ["number", "null"], str: ["string", "null"]}

R = TypeVar("R")


def figure(unit: str, doc: str, shown: str = ALWAYS, kind: type = float) -> Any:
    """A field of a working record: `unit` as in the JSON (A, V, %, ohm, mm2, kA, s, mA, or '' for a
    plain factor), what it is (one line, with its source), and when `check --json` shows it."""
    return field(default=None, metadata={"unit": unit, "doc": doc, "shown": shown, "kind": kind})


def record(cls):
    """Declare a working record type: a frozen, slotted dataclass of `figure` fields."""
    return rebuilt_by_constructor(dataclass(frozen=True, slots=True)(cls))


# JSON rounding of a working figure follows its unit, read from the key's suffix (as the keys
# carry their unit): the same digits as the check results'.
_SUFFIX_UNITS = {"_a2s": "A2s", "_a": "A", "_v": "V", "_ohm": "ohm", "_mm2": "mm2", "_ka": "kA", "_pct": "%", "_s": "s"}


@cache
def json_digits(name: str) -> int:
    return next((UNIT_DIGITS.get(unit, 3) for suffix, unit in _SUFFIX_UNITS.items() if name.endswith(suffix)), 3)


@cache
def shown_fields(cls: type) -> tuple[tuple[str, bool], ...]:
    """(name, written even when None) for each field `check --json` shows, in declaration order."""
    return tuple((f.name, f.metadata["shown"] == ALWAYS) for f in fields(cls) if f.metadata["shown"] != INTERNAL)


def json_items(rec) -> Iterator[tuple[str, Any]]:
    """The record's shown fields, unrounded."""
    for name, always in shown_fields(type(rec)):
        value = getattr(rec, name)
        if value is not None or always:
            yield name, value


def schema_properties(cls: type) -> dict:
    """The JSON Schema properties of a record's shown fields."""
    out = {}
    for f in fields(cls):
        meta = f.metadata
        if meta["shown"] == INTERNAL:
            continue
        unit = f" ({meta['unit']})" if meta["unit"] else ""
        out[f.name] = {"description": f"{meta['doc']}{unit}", "type": _SCHEMA_TYPES[meta["kind"]]}
    return out


class CircuitWorking(Mapping):
    """The working records of one circuit's checks, in the order the checks ran.

    `of(CapacityWorking)` gives a typed record (or None where that check produced none). As a
    read-only mapping it is the flat view `check --json` writes: `working["zs_ohm"]`."""

    __slots__ = ("_records",)

    def __init__(self, records: tuple = ()):
        self._records = records

    def of(self, cls: type[R]) -> R | None:
        for rec in self._records:
            if type(rec) is cls:
                return rec
        return None

    @property
    def records(self) -> tuple:
        return self._records

    def _flat(self) -> dict:
        return {k: v for rec in self._records for k, v in json_items(rec)}

    def __getitem__(self, key: str):
        for rec in self._records:
            for name, value in json_items(rec):
                if name == key:
                    return value
        raise KeyError(key)

    def __iter__(self):
        return iter(self._flat())

    def __len__(self) -> int:
        return len(self._flat())

    def as_json(self) -> dict:
        """The `working` object of `check --json`: every shown figure, floats rounded by unit."""
        return {k: round(v, json_digits(k)) if type(v) is float else v for k, v in self._flat().items()}

    def __eq__(self, other) -> bool:
        return isinstance(other, CircuitWorking) and self._records == other._records

    def __hash__(self) -> int:
        return hash(self._records)

    def __repr__(self) -> str:
        return f"CircuitWorking({self._records!r})"

    def __reduce__(self):
        return CircuitWorking, (self._records,)


NO_WORKING = CircuitWorking()   # shared: results kept without their working
