"""schema/site.schema.json: a valid 2020-12 schema that accepts every demo file and rejects each
broken variant, and on which the compiled happy-path validator agrees with the full one."""
from __future__ import annotations

import copy
import json

import jsonschema
import pytest
import yaml

from tests.conftest import DEMO, MINIMAL, ROOT
from tracker.loading import schema_check, yamlread

SCHEMA = json.loads((ROOT / "schema" / "site.schema.json").read_text(encoding="utf-8"))


def demo_documents():
    return sorted(DEMO.glob("*/*.yaml"))


def test_schema_is_valid_2020_12():
    assert SCHEMA["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    jsonschema.Draft202012Validator.check_schema(SCHEMA)


def test_every_definition_is_described_or_obvious():
    """Descriptions on the keys a user has to think about (units, meaning)."""
    for name in ("supply", "circuit", "device", "cable", "environment", "load"):
        props = SCHEMA["$defs"][name]["properties"]
        for key, spec in props.items():
            if key.endswith(("_a", "_v", "_ohm", "_ka", "_mm2", "_m", "_c", "_kw", "_ma", "_mm")):
                assert "description" in spec or "$ref" in spec, f"{name}.{key} has no description"


@pytest.mark.parametrize("path", demo_documents(), ids=lambda p: f"{p.parent.name}/{p.name}")
def test_demo_files_are_valid(path):
    # dates as the loader hands them to the schema: YYYY-MM-DD text (tracker/loading/yamlread.py)
    doc = yamlread.dates_as_text(yaml.safe_load(path.read_text(encoding="utf-8")))
    jsonschema.Draft202012Validator(SCHEMA).validate(doc)
    assert schema_check.is_valid(doc)


def _minimal():
    return yaml.safe_load(MINIMAL)


def _set(doc, path, value):
    target = doc
    for key in path[:-1]:
        target = target[key]
    if value is _DELETE:
        del target[path[-1]]
    else:
        target[path[-1]] = value
    return doc


_DELETE = object()
C0 = ("circuits", 0)
BROKEN = {
    "csa not standard": (C0 + ("cable", "csa_mm2"), 7),
    "csa is text": (C0 + ("cable", "csa_mm2"), "2.5mm"),
    "csa is a bool": (C0 + ("cable", "csa_mm2"), True),
    "negative length": (C0 + ("cable", "length_m"), -1),
    "zero length": (C0 + ("cable", "length_m"), 0),
    "unknown device kind": (C0 + ("device", "kind"), "fuse-x"),
    "unknown curve": (C0 + ("device", "curve"), "K"),
    "mcb without curve": (C0 + ("device", "curve"), _DELETE),
    "rcbo without rcd_ma": (C0 + ("rcd_ma",), _DELETE),
    "unknown load kind": (C0 + ("loads", 0, "kind"), "kettle"),
    "unknown topology": (C0 + ("topology",), "star"),
    "unknown system": (("supply", "system"), "IT"),
    "no system": (("supply", "system"), _DELETE),
    "voltage far off": (("supply", "u0_v"), 2300),
    "negative ze": (("supply", "ze_ohm"), -0.2),
    "grouping zero": (C0 + ("environment",), {"grouped_with": 0}),
    "grouping fractional": (C0 + ("environment",), {"grouped_with": 2.5}),
    "unknown arrangement": (C0 + ("environment",), {"arrangement": "stacked"}),
    "power factor over 1": (C0 + ("loads", 0, "power_factor"), 1.2),
    "id with slash": (C0 + ("id",), "1/2"),
    "board missing": (C0 + ("board",), _DELETE),
    "fed_by malformed": (("boards", 0, "fed_by"), "CU1-7"),
    "site id upper case": (("site", "id"), "Flat-1"),
    "rules unknown": (("site", "rules"), "nec"),
    "boards not a list": (("boards",), {"id": "CU1"}),
    "device not a mapping": (C0 + ("device",), "B32"),
}


@pytest.mark.parametrize("case", sorted(BROKEN), ids=str)
def test_broken_variant_rejected_by_both_validators(case):
    path, value = BROKEN[case]
    doc = _set(copy.deepcopy(_minimal()), path, value)
    full = list(jsonschema.Draft202012Validator(SCHEMA).iter_errors(doc))
    assert full, f"{case}: the 2020-12 validator accepted it"
    assert not schema_check.is_valid(doc), f"{case}: the compiled validator accepted it"
    assert schema_check.problems(doc), case


def test_extra_keys_are_allowed():
    doc = _minimal()
    doc["notes"] = "handover pack in the office"
    doc["circuits"][0]["x-contractor-ref"] = 1234
    jsonschema.Draft202012Validator(SCHEMA).validate(doc)
    assert schema_check.is_valid(doc)
