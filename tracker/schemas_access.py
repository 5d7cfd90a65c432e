"""Access to the files of `schema/`.

In a source checkout they are read from `schema/` beside `tracker/`; an installed wheel
carries the same files as `tracker/schemas/` (see pyproject.toml).
"""
from __future__ import annotations

import json
from functools import lru_cache
from pathlib import Path

_HERE = Path(__file__).resolve().parent


@lru_cache(maxsize=1)
def schema_dir() -> Path:
    for candidate in (_HERE / "schemas", _HERE.parent / "schema"):
        if (candidate / "site.schema.json").is_file():
            return candidate
    raise FileNotFoundError("schema/site.schema.json not found beside the tracker package")


def schema_text(name: str) -> str:
    return (schema_dir() / name).read_text(encoding="utf-8")


@lru_cache(maxsize=None)
def schema_json(name: str) -> dict:
    return json.loads(schema_text(name))
