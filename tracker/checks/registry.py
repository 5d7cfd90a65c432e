"""The check registry: every check is one module of `tracker.checks`, named after its id
(`cpc-adiabatic` → `cpc_adiabatic.py`), that declares

    CHECK = CheckSpec(id=..., rank=..., name=..., unit=..., compare=..., ...)

and, for a circuit check, `run(facts, done) -> Outcome` (the common signature: the circuit's
facts, and the outcomes of the checks it `needs`, by id). Everything that lists, orders, labels or
searches checks reads this registry: the circuit evaluation (`circuit.py`), the result lists, the
remedy search, the report's and the UI's labels, and both JSON schemas (`tests/test_registry.py`
holds the schemas to it; `python -m tracker.checks.registry` rewrites their generated parts).
"""
from __future__ import annotations

import importlib
import pkgutil
import re
from collections.abc import Callable, Mapping
from dataclasses import dataclass, replace
from functools import cache
from typing import TYPE_CHECKING, NamedTuple

from tracker.checks.result import CheckResult, Words

if TYPE_CHECKING:
    from tracker.model import Circuit

CIRCUIT, BOARD = "circuit", "board"

# What a remedy can change on the circuit itself (tracker/checks/remedy.py tries these):
RATING = "rating"            # the device's rating, up or down a step
RATING_UP = "rating-up"      # a larger device only
CURVE = "curve"              # another MCB/RCBO curve
SIZE = "size"                # a larger cable (its cpc with it)
RCD = "rcd"                  # 30 mA RCD protection (final circuits), 100 mA time-delayed (a TT sub-main)
BREAKING = "breaking"        # a device of higher breaking capacity
REMEDY_CHANGES = frozenset({RATING, RATING_UP, CURVE, SIZE, RCD, BREAKING})


class Outcome(NamedTuple):
    """What a check's `run` returns: its verdict, its typed working record (None: it stopped
    before any figure of its own), and where the verdict's text is built only when shown, how to
    build it (`result.Words`; the verdict's own detail is then empty)."""

    result: CheckResult
    record: object | None = None
    words: Words | None = None

    def worded(self) -> CheckResult:
        """The verdict with its text."""
        return self.result if self.words is None else self.result.with_detail(self.words.text())


def _nothing(circuit: Circuit) -> tuple[str, ...]:
    return ()


def _every(circuit: Circuit) -> bool:
    return True


def _never(basis: str) -> bool:
    return False


def always_on_load(basis: str) -> bool:
    """For `load_dependent`: a check whose verdict moves with the design current Ib."""
    return True


@dataclass(frozen=True)
class CheckSpec:
    """One check's declaration."""

    id: str                       # SPEC §3 id, as written in every output
    rank: int                     # position among its scope's checks in every list (reports, UI, JSON)
    name: str                     # its name in words, for the report and the UI
    unit: str                     # unit of its value and limit (A, V, %, ohm, mm2, kA, mA)
    compare: str                  # '<=' or '>=': value compare limit must hold
    scope: str = CIRCUIT          # CIRCUIT (run by circuit.py) or BOARD (run by site.py)
    stage: int = 100              # evaluation order among checks whose needs are met (then rank)
    gauge: str | None = None      # the UI's gauge label (value against limit); None: no gauge
    record: type | None = None    # its typed working record (tracker.checks.working)
    # Which remedy changes can put a failure of it right (REMEDY_CHANGES); empty: none on the circuit.
    helps: frozenset[str] = frozenset()
    # What to do about a failure no change of the circuit's sizes puts right (the checks on
    # readings: find the cause and test again), in the remedy's words; empty: the failing lines
    # themselves say what to fit (a requirement such as an RCD type).
    fix: str = ""
    # Whether more load can make it fail, given the circuit's capacity basis (headroom, load limits).
    load_dependent: Callable[[str], bool] = _never
    # The ids of the checks whose outcomes `run` reads, for this circuit.
    needs: Callable[[Circuit], tuple[str, ...]] = _nothing
    # Whether the check applies to this circuit at all (a check that does not apply is not listed).
    applies: Callable[[Circuit], bool] = _every
    # For the remedy search: True where a failure cannot be put right on this circuit alone
    # (its cause is upstream); reads the circuit's result.
    cause_upstream: Callable[[object], bool] | None = None
    run: Callable[..., Outcome] | None = None   # the module's `run`, attached by the registry

    def __post_init__(self):
        if not self.helps <= REMEDY_CHANGES:
            raise ValueError(f"{self.id}: unknown remedy changes {sorted(self.helps - REMEDY_CHANGES)}")
        if self.compare not in ("<=", ">="):
            raise ValueError(f"{self.id}: compare must be '<=' or '>='")


def module_name(check_id: str) -> str:
    return check_id.replace("-", "_")


@cache
def _registered() -> tuple[CheckSpec, ...]:
    import tracker.checks as package

    found = []
    for info in sorted(pkgutil.iter_modules(package.__path__), key=lambda m: m.name):
        module = importlib.import_module(f"{package.__name__}.{info.name}")
        spec = getattr(module, "CHECK", None)
        if not isinstance(spec, CheckSpec):
            continue
        if module_name(spec.id) != info.name:
            raise ImportError(f"check {spec.id} must live in tracker/checks/{module_name(spec.id)}.py")
        run = getattr(module, "run", None)
        if spec.scope == CIRCUIT and run is None:
            raise ImportError(f"tracker/checks/{info.name}.py declares a circuit check but has no run()")
        found.append(replace(spec, run=run))
    for scope in (CIRCUIT, BOARD):
        ranks = [s.rank for s in found if s.scope == scope]
        if len(ranks) != len(set(ranks)):
            raise ImportError(f"two {scope} checks share a rank: {sorted(ranks)}")
    return tuple(sorted(found, key=lambda s: (s.scope != CIRCUIT, s.rank)))


def all_checks() -> tuple[CheckSpec, ...]:
    """Every check, circuit checks first, each scope in rank order."""
    return _registered()


@cache
def circuit_checks() -> tuple[CheckSpec, ...]:
    return tuple(s for s in _registered() if s.scope == CIRCUIT)


@cache
def board_checks() -> tuple[CheckSpec, ...]:
    return tuple(s for s in _registered() if s.scope == BOARD)


@cache
def circuit_ids() -> tuple[str, ...]:
    return tuple(s.id for s in circuit_checks())


@cache
def _by_id() -> Mapping[str, CheckSpec]:
    return {s.id: s for s in _registered()}


def spec(check_id: str) -> CheckSpec | None:
    return _by_id().get(check_id)


def name(check_id: str) -> str:
    """A check's name in words (its id where it is not registered: an old history's event)."""
    found = _by_id().get(check_id)
    return found.name if found is not None else check_id


def always_listed() -> tuple[CheckSpec, ...]:
    """The circuit checks every circuit gets (those without an `applies` rule)."""
    return tuple(s for s in circuit_checks() if s.applies is _every)


class Plan(NamedTuple):
    run: tuple[CheckSpec, ...]        # evaluation order: every check after those it needs
    listed: tuple[CheckSpec, ...]     # the same checks in rank order


_PLANS: dict[tuple, Plan] = {}


@cache
def _variable() -> tuple[tuple[CheckSpec, bool, bool], ...]:
    return tuple((s, s.applies is not _every, s.needs is not _nothing) for s in circuit_checks())


def plan(circuit: Circuit) -> Plan:
    """Which checks apply to the circuit and in which order they run (cached by the answers of
    the checks' `applies` and `needs`, which few checks vary)."""
    key = tuple((s.applies(circuit) if a else True, s.needs(circuit) if n else ())
                for s, a, n in _variable())
    found = _PLANS.get(key)
    if found is None:
        found = _PLANS[key] = _make_plan(key)
    return found


def _make_plan(key: tuple) -> Plan:
    specs = [s for s, (applies, _) in zip(circuit_checks(), key) if applies]
    needs = {s.id: n for s, (_, n) in zip(circuit_checks(), key)}
    present = {s.id for s in specs}
    for s in specs:
        unknown = [n for n in needs[s.id] if spec(n) is None or spec(n).scope != CIRCUIT]
        if unknown:
            raise ValueError(f"check {s.id} needs unknown checks {unknown}")
    pending = sorted(specs, key=lambda s: (s.stage, s.rank))
    done: set[str] = set()
    order = []
    while pending:
        ready = next((s for s in pending if all(n in done or n not in present for n in needs[s.id])), None)
        if ready is None:
            raise ValueError(f"checks need each other: {[s.id for s in pending]}")
        order.append(ready)
        done.add(ready.id)
        pending.remove(ready)
    return Plan(tuple(order), tuple(specs))


# -- the schemas' generated parts ----------------------------------------------------------------

def working_schema() -> dict:
    """The JSON Schema of a circuit's `working` object: every shown field of every circuit check's
    record (names are unique across checks: the object is flat)."""
    from tracker.checks.working import schema_properties

    props: dict = {}
    for s in circuit_checks():
        if s.record is None:
            continue
        for key, value in schema_properties(s.record).items():
            if key in props:
                raise ValueError(f"working field {key} declared by two checks")
            props[key] = {**value, "description": f"{s.id}: {value['description']}"}
    return {"description": "Extension: intermediate values of the checks, each from the check named first in "
                           "its description, units in the key names. A key is present where its check computed "
                           "it (see each check's record in tracker/checks/).",
            "type": "object", "additionalProperties": False, "properties": props}


def check_id_enum() -> list[str]:
    return [s.id for s in all_checks()]


SCHEMA_FILES = ("schema/check-output.schema.json", "schema/report.schema.json")


def sync_schemas(root, write: bool) -> list[str]:
    """Bring the generated parts of both output schemas in line with the registry (the check id
    enum, the `working` object), leaving the rest of each file as written; the names of the files
    that differed (rewritten where `write`)."""
    from pathlib import Path

    stale = []
    for rel in SCHEMA_FILES:
        path = Path(root) / rel
        text = path.read_text(encoding="utf-8")
        new = _splice(text, '"id": { "enum": [', {"enum": check_id_enum()})
        if '"working": {' in new:
            new = _splice(new, '"working": {', working_schema(), indent=8)
        new = re.sub(r'"minItems": \d+, "maxItems": \d+, "items": \{ "\$ref": "#/\$defs/check" \}',
                     f'"minItems": {len(always_listed())}, "maxItems": {len(circuit_checks())}, '
                     '"items": { "$ref": "#/$defs/check" }', new)
        if new != text:
            stale.append(rel)
            if write:
                path.write_text(new, encoding="utf-8")
    return stale


def _splice(text: str, marker: str, value: dict, indent: int | None = None) -> str:
    """Replace the JSON value that follows the key of `marker` (found once) by `value`."""
    import json

    at = text.index(marker)
    start = text.index("{", text.index(":", at))
    _, end = json.JSONDecoder().raw_decode(text, start)
    if indent is None:
        body = json.dumps(value, ensure_ascii=False).replace("{", "{ ").replace("}", " }")
    else:
        body = _block(value, indent)
    return text[:start] + body + text[end:]


def _block(value: dict, indent: int) -> str:
    """An object with one property per line (the generated `working` schema stays readable)."""
    import json

    pad = " " * indent
    lines = []
    for key, item in value.items():
        if key == "properties":
            inner = ",\n".join(f'{pad}    {json.dumps(k)}: {json.dumps(v, ensure_ascii=False)}' for k, v in item.items())
            lines.append(f'{pad}  "properties": {{\n{inner}\n{pad}  }}')
        else:
            lines.append(f"{pad}  {json.dumps(key)}: {json.dumps(item, ensure_ascii=False)}")
    return "{\n" + ",\n".join(lines) + f"\n{pad}}}"


if __name__ == "__main__":   # python -m tracker.checks.registry [ROOT]
    import sys

    from tracker.checks import registry as _registry   # the module the checks registered with

    changed = _registry.sync_schemas(sys.argv[1] if len(sys.argv) > 1 else ".", write=True)
    print("\n".join(f"rewrote {name}" for name in changed) or "schemas already match the registry")
