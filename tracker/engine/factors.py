"""Rating factors for current-carrying capacity: ambient temperature, grouping, insulation."""
from __future__ import annotations

import math


def ambient_factor_formula(ambient_c: float, conductor_max_c: float, reference_c: float = 30.0) -> float:
    """Ambient temperature correction factor from the conductor temperatures.

    Parameters
    ----------
    ambient_c : actual ambient (or ground) temperature θa, °C
    conductor_max_c : maximum permitted conductor operating temperature θp, °C (70 or 90)
    reference_c : ambient temperature of the tabulated ratings, °C (30 in air, 20 in ground)

    Returns
    -------
    Ca = sqrt((θp − θa) / (θp − θref)); 0 where θa ≥ θp (the cable can carry nothing).

    Notes
    -----
    IEC 60364-5-52:2009 Annex B, note to Table B.52.14; reproduces BS 7671:2018 Table 4B1 above
    30 °C to the table's two decimals.
    """
    if ambient_c >= conductor_max_c:
        return 0.0
    return math.sqrt((conductor_max_c - ambient_c) / (conductor_max_c - reference_c))


def tabulated_step(table: dict[float, float], x: float) -> float | None:
    """Value of a table at `x`, or at the next tabulated key above `x`; None beyond the table.

    The conservative reading of a rating-factor table between its rows (the next worse row).
    """
    for key in sorted(table):
        if x <= key:
            return table[key]
    return None


def ambient_factor_bs7671(ambient_c: float, conductor_max_c: float, table: dict[float, float]) -> float:
    """The bs7671 rule set's choice of ambient factor.

    At and above 30 °C the formula of :func:`ambient_factor_formula`; below 30 °C the value of
    BS 7671:2018 Table 4B1 at the next tabulated temperature at or above θa (the formula gives
    more, e.g. 1.06 against the table's 1.03 at 25 °C for 70 °C thermoplastic: the lower,
    tabulated value is kept).
    """
    if ambient_c >= 30.0:
        return ambient_factor_formula(ambient_c, conductor_max_c)
    low = min(table)
    return table[low] if ambient_c <= low else tabulated_step(table, ambient_c)


def grouping_factor(circuits: int, table: dict[int, float], open_ended: bool = False) -> float | None:
    """Grouping factor Cg for `circuits` circuits grouped together (this one included).

    BS 7671:2018 Table 4C1: between tabulated numbers the next larger number's factor; beyond
    the last row None (not tabulated), unless the table's last row holds for every larger
    number (`open_ended`, the single-layer rows' "9 and more").
    """
    if circuits <= 1:
        return 1.0
    value = tabulated_step(table, circuits)
    if value is None and open_ended:
        return table[max(table)]
    return value


def insulation_factor(length_mm: float, table: dict[float, float]) -> float:
    """Derating factor Ci for a cable totally surrounded by thermal insulation over `length_mm`.

    BS 7671:2018 Table 52.2 (next longer tabulated length between rows; 0.5 at 500 mm and
    over, as Regulation 523.9 gives for any length over 0.5 m).
    """
    if length_mm <= 0:
        return 1.0
    value = tabulated_step(table, length_mm)
    return table[max(table)] if value is None else value
