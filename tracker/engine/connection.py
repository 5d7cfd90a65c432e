"""Telling the network operator about a change at the origin: notify after connecting, or apply
before connecting. Plain numbers in, a route and its reasons out; the thresholds are data
(`tracker/data/connection.yaml`, with their published sources).

References
----------
ENA Engineering Recommendation G98 (micro-generators up to and including 16 A per phase: connect,
then notify within 28 days of commissioning) and G99 (larger generation: apply before
connecting). ENA connection process for EV charge points and heat pumps at premises with an
existing connection (notify within 28 days where every notification criterion is met, else apply
before connecting).
"""
from __future__ import annotations

from datetime import date, timedelta

NOTIFY_AFTER = "notify-after"     # connect, then tell the operator within the deadline
APPLY_BEFORE = "apply-before"     # the operator's agreement is needed before connecting
NOTHING = "none"                  # nothing in the change concerns the operator


def aggregate_current_a(ratings_a) -> float:
    """Aggregate rating of generation and storage at the premises, A per phase.

    Notes
    -----
    EREC G98 takes the sum of the AC ratings of every generating unit (storage included) at the
    premises, with no allowance for them not running together.
    """
    return float(sum(ratings_a))


def generation_route(aggregate_a_per_phase: float, small_limit_a: float) -> str:
    """G98 (notify after) up to and including `small_limit_a` per phase, else G99 (apply before)."""
    return NOTIFY_AFTER if aggregate_a_per_phase <= small_limit_a else APPLY_BEFORE


def demand_reasons(max_demand_a: float, supply_capacity_a: float | None, looped: bool,
                   residential: bool, residential_limit_a: float) -> list[str]:
    """Why new demand needs an application before connecting (empty: it may be notified after).

    Parameters
    ----------
    max_demand_a : maximum demand at the origin after the change, A.
    supply_capacity_a : the supplier's fuse (cut-out) rating, A; None where unknown.
    looped : the service is looped with a neighbour's.
    residential : residential premises (the 60 A single-phase criterion applies).
    residential_limit_a : that criterion's limit, A.
    """
    reasons = []
    if supply_capacity_a is None:
        reasons.append("the supplier's fuse rating is not known (supply.service_fuse_a)")
    elif max_demand_a > supply_capacity_a:
        reasons.append(f"maximum demand {max_demand_a:.1f} A would exceed the supplier's fuse "
                       f"{supply_capacity_a:g} A")
    if residential and max_demand_a > residential_limit_a:
        reasons.append(f"maximum demand {max_demand_a:.1f} A is above {residential_limit_a:g} A single-phase "
                       "for residential premises")
    if looped:
        reasons.append("the service is looped with another property's")
    return reasons


def deadline(connected_on: date, days: int) -> date:
    """The last day to notify: `days` after connection (or commissioning)."""
    return connected_on + timedelta(days=days)
