"""The check registry: one module per check, declared once, read by everything that lists,
orders, labels or searches checks, and by both output schemas."""
from __future__ import annotations

import json
from dataclasses import fields
from pathlib import Path

import pytest

from tracker.checks import registry
from tracker.checks.working import ALWAYS, IF_KNOWN, INTERNAL
from tracker.loading import load_estate
from tracker.checks.site import evaluate_site

ROOT = Path(__file__).resolve().parents[1]
DEMO_SITES = list(load_estate(ROOT / "demo_site").sites.values())

# SPEC §3: the circuit checks' ids in the order of its table, and the board check.
SPEC_CIRCUIT_IDS = ["design-current", "capacity", "voltage-drop", "fault-loop", "cpc-adiabatic",
                    "line-adiabatic", "breaking-capacity", "rcd"]


def test_every_spec_check_is_registered_in_the_spec_order():
    ids = list(registry.circuit_ids())
    assert ids[:len(SPEC_CIRCUIT_IDS)] == SPEC_CIRCUIT_IDS
    assert [s.id for s in registry.board_checks()] == ["demand"]


def test_a_checks_code_is_one_hop_from_its_name():
    for spec in registry.all_checks():
        path = ROOT / "tracker" / "checks" / f"{registry.module_name(spec.id)}.py"
        assert path.is_file(), spec.id
        assert spec.scope == registry.BOARD or spec.run is not None


def test_schemas_are_in_line_with_the_registry():
    stale = registry.sync_schemas(ROOT, write=False)
    assert stale == [], f"run `python -m tracker.checks.registry` to regenerate: {stale}"


def test_the_schemas_describe_working_field_by_field():
    for rel in registry.SCHEMA_FILES:
        doc = json.loads((ROOT / rel).read_text(encoding="utf-8"))
        working = doc["$defs"]["circuit"]["properties"]["working"]
        assert working["additionalProperties"] is False
        declared = {f.name for s in registry.circuit_checks() if s.record is not None for f in fields(s.record)
                    if f.metadata["shown"] != INTERNAL}
        assert set(working["properties"]) == declared


# Units live in names (DEVELOPERS.md): a working figure's declared unit and its key's suffix agree.
SUFFIXES = {"A": "_a", "V": "_v", "%": "_pct", "ohm": "_ohm", "mm2": "_mm2", "kA": "_ka", "s": "_s", "mA": "_ma",
            "A2s": "_a2s", "Mohm": "_mohm", "ms": "_ms", "m": "_m"}


def test_working_fields_carry_their_unit_in_their_name():
    for spec in registry.circuit_checks():
        for f in fields(spec.record) if spec.record else ():
            unit = f.metadata["unit"]
            assert f.metadata["shown"] in (ALWAYS, IF_KNOWN, INTERNAL)
            if unit:
                assert f.name.endswith(SUFFIXES[unit]), (spec.id, f.name, unit)


@pytest.mark.parametrize("exempt", [False, True])
def test_every_check_runs_after_the_checks_it_needs(exempt):
    site = next(s for s in DEMO_SITES if any(c.overload_exempt == exempt
                                                                          for c in s.circuits))
    circuit = next(c for c in site.circuits if c.overload_exempt == exempt)
    plan = registry.plan(circuit)
    seen: set[str] = set()
    for spec in plan.run:
        assert set(spec.needs(circuit)) <= seen, spec.id
        seen.add(spec.id)
    assert [s.id for s in plan.listed] == [s.id for s in sorted(plan.run, key=lambda s: s.rank)]


def test_working_keys_follow_the_order_the_checks_ran():
    """The JSON working object lists each check's figures in the order the checks ran, so a
    cable sized on Ib (whose capacity verdict reads line-adiabatic) lists line-adiabatic's first."""
    for site in DEMO_SITES:
        for r in evaluate_site(site).circuits.values():
            keys = list(r.working.as_json())
            owners = []
            for key in keys:
                owner = next(s.id for s in registry.circuit_checks() if s.record is not None
                             and key in {f.name for f in fields(s.record)})
                if not owners or owners[-1] != owner:
                    owners.append(owner)
            ran = [s.id for s in registry.plan(r.circuit).run]
            assert owners == [i for i in ran if i in owners], r.ref


def test_a_renamed_working_field_fails_loudly():
    from tracker.checks.capacity import CapacityWorking

    site = DEMO_SITES[0]
    r = next(iter(evaluate_site(site).circuits.values()))
    rec = r.working.of(CapacityWorking)
    with pytest.raises(AttributeError):
        rec.iz   # noqa: B018 - the field is iz_a
    with pytest.raises(KeyError):
        r.working["iz"]


def test_a_check_needing_an_unknown_check_is_refused():
    spec = registry.CheckSpec(id="x", rank=999, name="x", unit="A", compare="<=")
    with pytest.raises(ValueError):
        registry.CheckSpec(id="x", rank=999, name="x", unit="A", compare="<", )
    with pytest.raises(ValueError):
        registry.CheckSpec(id="x", rank=999, name="x", unit="A", compare="<=", helps=frozenset({"paint"}))
    assert spec.run is None
