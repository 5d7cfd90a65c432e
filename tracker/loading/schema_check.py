"""Validation of one parsed site file against `schema/site.schema.json` (JSON Schema 2020-12).

The happy path runs a compiled validator (jsonschema-rs, in Rust): it only says whether the file
is valid. Only when it is not does the full Python validator (jsonschema) run, to report every
problem with its path, in practitioner's words. tests/test_schema.py holds the two to the same
verdicts.
"""
from __future__ import annotations

import re
from functools import lru_cache

from tracker.schemas_access import schema_json

SCHEMA_FILE = "site.schema.json"


@lru_cache(maxsize=1)
def _fast():
    import jsonschema_rs
    return jsonschema_rs.Draft202012Validator(schema_json(SCHEMA_FILE))


@lru_cache(maxsize=1)
def _full():
    import jsonschema
    schema = schema_json(SCHEMA_FILE)
    jsonschema.Draft202012Validator.check_schema(schema)
    return whole_patterns(jsonschema.Draft202012Validator)(schema)


def _ecma(pattern: str) -> str:
    """A JSON Schema pattern (ECMA-262) for Python's re: "$" there matches only at the very end;
    in Python it also matches before a final newline, so "CU1\n" would pass "^[A-Z0-9]+$"."""
    return re.sub(r"(?<!\\)\$", r"\\Z", pattern)


def whole_patterns(cls):
    """A jsonschema validator class whose `pattern` is read as ECMA-262 reads it (see _ecma): every
    schema izwatch validates with jsonschema goes through it, so no "$" accepts a final newline."""
    from jsonschema import validators
    return validators.extend(cls, {"pattern": _pattern})


def _pattern(validator, pattern, instance, schema):
    if validator.is_type(instance, "string") and not re.search(_ecma(pattern), instance):
        from jsonschema.exceptions import ValidationError
        yield ValidationError(f"{instance!r} does not match {pattern!r}")


def is_valid(data) -> bool:
    try:
        return _fast().is_valid(data)
    except (ValueError, TypeError, OverflowError):   # a value the compiled validator cannot take
        return False


def problems(data) -> list[tuple[tuple, str]]:
    """Every schema problem of `data` as (path, message)."""
    out = []
    for err in _full().iter_errors(data):
        out.extend(_explain(err))
    return out


def explain(err) -> list[tuple[tuple, str]]:
    """One jsonschema error of any schema in practitioner's words, as (path, message): the words
    the site files get, for other files validated the same way (a change file of `propose`)."""
    return _explain(err)


_TYPE_WORDS = {"number": "a number", "integer": "a whole number", "string": "text",
               "boolean": "true or false", "object": "a mapping (key: value lines)",
               "array": "a list (lines starting with '- ')"}


def _show(value) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return repr(value)
    if isinstance(value, dict):
        return "a mapping"
    if isinstance(value, list):
        return "a list"
    if value is None:
        return "an empty value"
    return f"{value:g}" if isinstance(value, float) else str(value)


def _explain(err) -> list[tuple[tuple, str]]:
    path = tuple(err.absolute_path)
    hint = err.schema.get("x-hint") if isinstance(err.schema, dict) else None
    v = err.validator
    if v == "required":
        missing = err.message.split("'")[1] if "'" in err.message else err.message
        if hint:
            return [(path, hint)]
        return [(path, f"missing required key '{missing}'")]
    if v == "type":
        want = err.validator_value
        wants = want if isinstance(want, list) else [want]
        words = " or ".join(_TYPE_WORDS.get(wanted, wanted) for wanted in wants)
        return [(path, f"expected {words}, got {_show(err.instance)}")]
    if v in ("enum", "pattern", "const"):
        if hint:
            return [(path, f"{_show(err.instance)} {hint}")]
        return [(path, err.message)]
    if v == "exclusiveMinimum":
        return [(path, f"{_show(err.instance)} must be more than {_show(err.validator_value)}")]
    if v == "minimum":
        return [(path, f"{_show(err.instance)} is below the lowest accepted value {_show(err.validator_value)}")]
    if v == "maximum":
        return [(path, f"{_show(err.instance)} is above the highest accepted value "
                       f"{_show(err.validator_value)} (check the unit the key names)")]
    if hint:
        return [(path, hint)]
    return [(path, err.message)]
