"""The report as JSON: the report document itself (izwatch.report/1, described in
schema/report.schema.json), and the index of `--all-sites` (izwatch.report-index/1)."""
from __future__ import annotations

import json


def render(doc: dict) -> str:
    return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"


def render_index(index: dict) -> str:
    return json.dumps(index, indent=2, ensure_ascii=False) + "\n"
