"""Reliability suite: figures (inputs tried, kills survived, edits soaked) are collected here and
printed at the end of the run."""
from __future__ import annotations

FIGURES: dict[str, object] = {}


def record(name: str, value) -> None:
    FIGURES[name] = value
