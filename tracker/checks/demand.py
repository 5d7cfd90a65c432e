"""`demand` (boards): maximum demand after diversity against the main switch and, at the origin,
the supplier's fuse. Allowances from `tracker/data/diversity.yaml` (common UK practice)."""
from __future__ import annotations

from dataclasses import dataclass

from tracker import catalogue
from tracker.checks import rules
from tracker.checks.registry import BOARD, CheckSpec
from tracker.checks.result import CheckResult, WARN, not_assessed, verdict
from tracker.engine import diversity as dv
from tracker.engine.current import design_current_a
from tracker.model import Board, Circuit

ID = "demand"
CHECK = CheckSpec(id=ID, rank=10, scope=BOARD, name="maximum demand", unit="A", compare="<=", gauge="demand/limit")


@dataclass(frozen=True, slots=True)
class Demand:
    demand_a: float
    parts: tuple[tuple[str, float, float], ...]   # (category, connected A, allowed A)
    unknown: tuple[str, ...]                      # circuits without load data (not counted)


def contributions(circuit: Circuit, u0_v: float, fed_demand_a: float | None) -> list[tuple[str, float]] | None:
    """(category, amperes) a circuit adds to its board; None where it has no load data."""
    table = catalogue.diversity()["load_kinds"]
    if circuit.is_submain:
        return None if fed_demand_a is None else [("sub-main", fed_demand_a)]
    if rules.has_kind(circuit, "socket-outlets"):
        amps = circuit.design_current_a if circuit.design_current_a is not None else circuit.device.rating_a
        return [("socket-circuits", amps)]
    if circuit.design_current_a is not None:
        category = table[circuit.loads[0].kind] if circuit.loads else "heating-power"
        return [(category, circuit.design_current_a)]
    if not circuit.loads:
        return None
    out = []
    for ld in circuit.loads:
        amps = ld.current_a if ld.current_a is not None else design_current_a(ld.power_kw, u0_v, ld.power_factor)
        out.append((table[ld.kind], amps))
    return out


def board_demand(circuits: list[Circuit], u0_v: float, fed: dict[str, float | None]) -> Demand:
    cats = catalogue.diversity()["categories"]
    by_cat: dict[str, list[float]] = {}
    unknown = []
    for c in circuits:
        parts = contributions(c, u0_v, fed.get(c.feeds) if c.feeds else None)
        if parts is None:
            unknown.append(c.id)
            continue
        for cat, amps in parts:
            by_cat.setdefault(cat, []).append(amps)
    total, out = 0.0, []
    for cat in cats:  # the data file's order
        currents = by_cat.get(cat)
        if not currents:
            continue
        rule = cats[cat]
        connected = sum(currents)
        if "by_rank_pct" in rule:
            allowed = dv.allowance_by_rank(currents, rule["by_rank_pct"], rule["others_pct"])
        elif "full_a" in rule:
            allowed = dv.allowance_full_then_rest(connected, rule["full_a"], rule["rest_pct"])
        else:
            allowed = dv.allowance_pct(connected, rule["pct"])
        total += allowed
        out.append((cat, connected, allowed))
    return Demand(total, tuple(out), tuple(unknown))


def _limit(board: Board, service_fuse_a: float | None) -> tuple[float | None, str]:
    limits = []
    if board.main_switch_a is not None:
        limits.append((board.main_switch_a, f"main switch {board.main_switch_a:g} A"))
    if board.at_origin and service_fuse_a is not None:
        limits.append((service_fuse_a, f"supplier's fuse {service_fuse_a:g} A"))
    if not limits:
        return None, ""
    return min(limits)


def describe(d: Demand) -> str:
    return "; ".join(f"{cat} {conn:.1f} A → {allowed:.1f} A" for cat, conn, allowed in d.parts) or "no load"


def run(board: Board, d: Demand, service_fuse_a: float | None) -> CheckResult:
    limit, limit_how = _limit(board, service_fuse_a)
    parts = describe(d)
    missing = (f"; not counted, no load data: circuit{'s' if len(d.unknown) > 1 else ''} "
               f"{', '.join(d.unknown)}") if d.unknown else ""
    if limit is None:
        return not_assessed(ID, "A", "<=", f"demand {d.demand_a:.1f} A ({parts}); board {board.id} has no "
                                           "main_switch_a", value=d.demand_a)
    ok = d.demand_a <= limit
    detail = (f"maximum demand after diversity {d.demand_a:.1f} A {'≤' if ok else '>'} {limit_how} ({parts})"
              f"{missing} — allowances of common practice")
    status = verdict(ok)
    if ok and d.unknown:
        status = WARN
    return CheckResult(ID, status, d.demand_a, limit, "A", "<=", detail, ib_limit_a=limit)


def supply_check(site_id: str, total_a: float, service_fuse_a: float | None, boards: list[str]) -> CheckResult:
    """The origin as a whole: every board fed from the supply against the supplier's fuse."""
    if service_fuse_a is None:
        return not_assessed(ID, "A", "<=", f"demand at the origin {total_a:.1f} A; no service_fuse_a given",
                            value=total_a)
    ok = total_a <= service_fuse_a
    detail = (f"demand at the origin {total_a:.1f} A (boards {', '.join(boards)}) {'≤' if ok else '>'} "
              f"supplier's fuse {service_fuse_a:g} A")
    return CheckResult(ID, verdict(ok), total_a, service_fuse_a, "A", "<=", detail, ib_limit_a=service_fuse_a)
