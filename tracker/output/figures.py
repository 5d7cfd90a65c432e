"""Numbers with their units, and a change from one value to another: the one formatter that the
text output, the watch and replace lines, `history`, the terminal UI, the CSV and the HTML report
use, so a figure reads the same everywhere (30 mA in the JSON is 30 mA on screen).

- `quantity`: an engine figure with the decimals of its unit (`UNIT_DIGITS`): "35.00 A",
  "0.350 Ω", "30 mA"; "—" where there is none.
- `rounded`: the same figure as a number for JSON and CSV (the same decimals).
- `as_written`: a value as a site file holds it ("7.5", "true", "(none)"); `change`: "7.5 → 8.5".
- `trimmed`: a figure inside a sentence, without trailing zeros ("2.5", "0.35").

Text that came from outside (names, notes, authors) is made safe for a terminal by
`tracker.output.terminal_text.clean`, which the callers apply to such text; numbers and units
are always safe.
"""
from __future__ import annotations

from tracker.checks.result import UNIT_DIGITS, fmt

# How a unit is written for people (the JSON keeps the ASCII names of SPEC §5).
UNIT_SHOWN = {"ohm": "Ω", "mm2": "mm²", "Mohm": "MΩ"}
NONE = "—"
ARROW = "→"


def digits(unit: str | None) -> int:
    """Decimals a figure in this unit is given to (2 where the unit has no rule)."""
    return UNIT_DIGITS.get(unit or "", 2)


def unit_shown(unit: str | None) -> str:
    return UNIT_SHOWN.get(unit or "", unit or "")


def rounded(x: float | None, unit: str | None = None, places: int | None = None) -> float | None:
    """The figure for JSON and CSV: rounded to its unit's decimals (or `places`)."""
    if x is None:
        return None
    return round(x, digits(unit) if places is None else places)


def quantity(x: float | None, unit: str | None = None, places: int | None = None, *, sign: bool = False,
             minus: str = "-", none: str = NONE, show_unit: bool = True) -> str:
    """An engine figure with its unit's decimals (or `places`): '35.00 A', '+1.25 kW', '—'.

    `minus`: the minus sign to write (the HTML report uses U+2212); `show_unit=False` leaves the
    unit out (a table whose column says it)."""
    if x is None:
        return none
    d = digits(unit) if places is None else places
    text = f"{x:+.{d}f}" if sign else f"{x:.{d}f}"
    if minus != "-":
        text = text.replace("-", minus)
    shown = unit_shown(unit) if show_unit else ""
    return f"{text} {shown}" if shown else text


def trimmed(x: float, places: int = 2) -> str:
    """A figure inside a sentence: at most `places` decimals, no trailing zeros ('2.5', '40')."""
    return fmt(x, places)


def as_written(value) -> str:
    """A site-file value as a change line shows it: 7.5, true, (none)."""
    if value is None:
        return "(none)"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)


def change(old, new, unit: str = "") -> str:
    """'7.5 → 8.5' (with a unit: '7.5 → 8.5 kW'; no unit after a removed value)."""
    text = f"{as_written(old)} {ARROW} {as_written(new)}"
    return f"{text} {unit}" if unit and new is not None else text
