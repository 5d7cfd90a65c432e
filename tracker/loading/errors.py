"""Input problems, reported as ``FILE:LINE:COL: PATH: message``.

FILE is relative to the path the user gave; LINE and COL count from 1; PATH is the
element's path inside the file (``circuits[2].cable.csa_mm2``), left out where the
problem concerns the file as a whole.
"""
from __future__ import annotations

from dataclasses import dataclass


def format_path(path: tuple) -> str:
    out = ""
    for part in path:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += f".{part}" if out else str(part)
    return out


@dataclass(frozen=True, slots=True)
class InputError:
    file: str
    line: int
    col: int
    message: str
    path: tuple = ()

    def __str__(self) -> str:
        where = f"{self.file}:{self.line}:{self.col}"
        p = format_path(self.path)
        return f"{where}: {p}: {self.message}" if p else f"{where}: {self.message}"

    def as_json(self) -> dict:
        return {"file": self.file, "line": self.line, "col": self.col,
                "path": format_path(self.path), "message": self.message, "text": str(self)}


@dataclass(frozen=True, slots=True)
class LoadWarning(InputError):
    """Not an error: the file loads, but something looks unintended (a misspelt key)."""

    def __str__(self) -> str:
        where = f"{self.file}:{self.line}:{self.col}"
        p = format_path(self.path)
        return f"{where}: warning: {p}: {self.message}" if p else f"{where}: warning: {self.message}"


def sort_problems(problems):
    return sorted(problems, key=lambda e: (e.file, e.line, e.col, format_path(e.path), e.message))
