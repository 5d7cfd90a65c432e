"""Maximum demand after diversity."""
from __future__ import annotations


def allowance_full_then_rest(total_a: float, full_a: float, rest_pct: float) -> float:
    """The first `full_a` at 100 %, the remainder at `rest_pct` % (e.g. heating and power:
    100 % of 10 A + 50 % of the rest; cookers: 10 A + 30 % of the rest)."""
    return min(total_a, full_a) + max(0.0, total_a - full_a) * rest_pct / 100.0


def allowance_by_rank(currents_a: list[float], rank_pct: list[float], others_pct: float) -> float:
    """Largest at rank_pct[0] %, second at rank_pct[1] %, ..., every other at `others_pct` %
    (e.g. showers: 100 % of the largest, 100 % of the second, 25 % of the rest; socket-outlet
    circuits: 100 % of the largest, 40 % of every other)."""
    ordered = sorted(currents_a, reverse=True)
    total = 0.0
    for i, current in enumerate(ordered):
        pct = rank_pct[i] if i < len(rank_pct) else others_pct
        total += current * pct / 100.0
    return total


def allowance_pct(total_a: float, pct: float) -> float:
    """A flat percentage of the connected load (e.g. lighting 66 %)."""
    return total_a * pct / 100.0
