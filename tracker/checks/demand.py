"""`demand` (boards): maximum demand after diversity against the main switch and, at the origin,
the supplier's fuse. Allowances from `tracker/data/diversity.yaml` by class of premises (the IET's
published allowances for diversity), or the site's own per load kind (`site.diversity`)."""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache

from tracker import catalogue
from tracker.checks import rules
from tracker.checks.registry import BOARD, CheckSpec
from tracker.checks.result import CheckResult, WARN, not_assessed, verdict
from tracker.engine import diversity as dv
from tracker.engine import three_phase
from tracker.checks.design_current import load_current_a
from tracker.model import PHASES, Board, Circuit

ID = "demand"
CHECK = CheckSpec(id=ID, rank=10, scope=BOARD, name="maximum demand", unit="A", compare="<=", gauge="demand/limit")

SITE_PREFIX = "site: "   # categories of the site's own allowances are named "site: <load kind>"


@dataclass(frozen=True, slots=True, eq=False)
class Allowances:
    """The allowances for diversity a site uses: its premises' table with the site's own per load kind."""
    premises: str
    own: tuple = ()
    categories: dict = field(default_factory=dict)   # category -> rule, in the order they are summed
    load_kinds: dict = field(default_factory=dict)   # load kind -> category
    table: str = ""                                  # which table, for the working
    upper_bound: bool = False                        # no published allowances: the figure is an upper bound

    def __eq__(self, other) -> bool:
        return isinstance(other, Allowances) and (self.premises, self.own) == (other.premises, other.own)

    def __hash__(self) -> int:
        return hash((self.premises, self.own))

    def rule(self, load_kind: str) -> dict:
        return self.categories[self.load_kinds[load_kind]]


@lru_cache(maxsize=64)
def allowances(premises: str = "domestic", own: tuple = ()) -> Allowances:
    """The allowances for `premises` (a class of tracker/data/diversity.yaml), with `own` (the
    model's `Site.diversity`) replacing the table's for the load kinds it names."""
    data = catalogue.diversity()
    entry = data["premises"].get(premises, data["premises"]["other"])
    categories = {name: dict(rule) for name, rule in data["categories"].items()}
    for name, rule in (entry.get("categories") or {}).items():
        categories[name] = {"what": categories[name]["what"], **rule}
    load_kinds = {**data["load_kinds"], **(entry.get("load_kinds") or {})}
    table = f"{entry['what']} ({entry['source']}; {entry['status']})"
    for kind, rule in own:
        name = SITE_PREFIX + kind
        rule = dict(rule)
        basis = rule.pop("basis", None)
        categories[name] = {"what": f"{kind} loads, the site's own allowance" + (f" ({basis})" if basis else ""),
                            **{k: list(v) if isinstance(v, tuple) else v for k, v in rule.items()}}
        load_kinds[kind] = name
    if own:
        table += "; the site's own allowances for " + ", ".join(kind for kind, _ in own)
    return Allowances(premises, own, categories, load_kinds, table, bool(entry.get("upper_bound")))


def allowed_a(rule: dict, currents_a: list[float]) -> float:
    """The allowance of one category's rule over its currents (amperes)."""
    if "by_rank_pct" in rule:
        return dv.allowance_by_rank(currents_a, rule["by_rank_pct"], rule["others_pct"])
    if "full_a" in rule:
        return dv.allowance_full_then_rest(sum(currents_a), rule["full_a"], rule["rest_pct"])
    return dv.allowance_pct(sum(currents_a), rule["pct"])


@dataclass(frozen=True, slots=True)
class Demand:
    demand_a: float
    parts: tuple[tuple[str, float, float], ...]   # (category, connected A, allowed A)
    unknown: tuple[str, ...]                      # circuits without load data (not counted)
    # Three-phase boards: demand_a is the largest line's; each line's demand after diversity
    # (L1, L2, L3) and its parts, the neutral current of that set and its imbalance; and the
    # single-phase circuits as (circuit id, line, {category: amperes}) for the remedy of moving one.
    phases_a: tuple | None = None
    phase_parts: tuple | None = None
    neutral_a: float | None = None
    imbalance_pct: float | None = None
    singles: tuple = ()
    line_inputs: tuple | None = None   # per line: ((category, (amperes, ...)), ...) before diversity
    table: str = ""                    # which allowances, in words
    upper_bound: bool = False          # counted without published allowances
    extra_a: float = 0.0               # cooker control units' socket-outlets (+ 5 A each, households)
    allow: object = None               # the Allowances used (a move between lines applies them again)


def contributions(circuit: Circuit, u0_v: float, fed_demand_a: float | None,
                  allow: Allowances | None = None) -> list[tuple[str, float]] | None:
    """(category, amperes) a circuit adds to its board; None where it has no load data."""
    table = (allow or allowances()).load_kinds
    if circuit.is_submain:
        return None if fed_demand_a is None else [("sub-main", fed_demand_a)]
    if rules.has_kind(circuit, "socket-outlets"):
        amps = circuit.design_current_a if circuit.design_current_a is not None else circuit.device.rating_a
        return [(table["socket-outlets"], amps)]
    if circuit.design_current_a is not None:
        category = table[circuit.loads[0].kind] if circuit.loads else table["fixed"]
        return [(category, circuit.design_current_a)]
    if not circuit.loads and circuit.sources:
        # PV adds no demand; a battery may charge from the supply at its inverter's rating
        # (on an off-peak tariff, at the same time as everything else): counted in full.
        return [("storage-charging", s.inverter_a) for s in circuit.sources if s.kind == "battery"]
    if not circuit.loads:
        return None
    out = []
    for ld in circuit.loads:
        amps, _ = load_current_a(ld, u0_v)
        if ld.load_control_a is not None:
            # 722.311: diversity for charge points only where a load control is fitted; it holds
            # the charge point to this current.
            amps = min(amps, ld.load_control_a)
        out.append((table[ld.kind], amps))
    return out


def board_demand(circuits: list[Circuit], u0_v: float, fed: dict[str, float | None],
                 allow: Allowances | None = None) -> Demand:
    allow = allow or allowances()
    by_cat: dict[str, list[float]] = {}
    unknown = []
    for c in circuits:
        parts = contributions(c, u0_v, fed.get(c.feeds) if c.feeds else None, allow)
        if parts is None:
            unknown.append(c.id)
            continue
        for cat, amps in parts:
            by_cat.setdefault(cat, []).append(amps)
    total, out, extra = _diversify(by_cat, allow, _cooker_sockets(circuits))
    return Demand(total, tuple(out), tuple(unknown), table=allow.table, upper_bound=allow.upper_bound,
                  extra_a=extra, allow=allow)


def _cooker_sockets(circuits) -> int:
    """Cooker control units with a socket-outlet among the circuits (+ 5 A each, households)."""
    return sum(1 for c in circuits if c.design_current_a is None and not c.is_submain
               for ld in c.loads if ld.kind == "cooker" and ld.socket_outlet)


def three_phase_contributions(circuit: Circuit, u_line_v: float, fed_phases_a: tuple | None,
                              allow: Allowances | None = None) -> list[tuple[str, tuple]] | None:
    """(category, (I_L1, I_L2, I_L3)) a three-phase circuit adds to its board's lines; None where
    it has no load data. A balanced load's power gives P / (√3 × U_L × pf) in each line."""
    table = (allow or allowances()).load_kinds
    if circuit.is_submain:
        return None if fed_phases_a is None else [("sub-main", tuple(fed_phases_a))]
    if circuit.design_current_a is not None:
        category = table[circuit.loads[0].kind] if circuit.loads else table["fixed"]
        return [(category, (circuit.design_current_a,) * 3)]
    if rules.has_kind(circuit, "socket-outlets"):
        return [(table["socket-outlets"], (circuit.device.rating_a,) * 3)]
    if not circuit.loads:
        return None
    out = []
    for ld in circuit.loads:
        if ld.phase_currents_a is not None:
            out.append((table[ld.kind], tuple(ld.phase_currents_a)))
            continue
        amps = (ld.current_a if ld.current_a is not None
                else three_phase.balanced_line_current_a(ld.power_kw, u_line_v, ld.power_factor))
        out.append((table[ld.kind], (amps,) * 3))
    return out


def three_phase_board_demand(circuits: list[Circuit], u0_v: float, u_line_v: float,
                             fed: dict[str, float | None], fed_phases: dict[str, tuple | None],
                             allow: Allowances | None = None) -> Demand:
    """Demand of a three-phase board, line by line: each single-phase circuit (and single-phase
    sub-main) counts on its line, each three-phase circuit on all three; the household allowances
    are applied to each line's circuits. The neutral current is that of the three line demands
    (`tracker.engine.three_phase.neutral_current_a`: same power factor taken for all)."""
    allow = allow or allowances()
    by_line: list[dict[str, list[float]]] = [{}, {}, {}]
    unknown, singles = [], []
    for c in circuits:
        if c.three_phase:
            parts3 = three_phase_contributions(c, u_line_v, fed_phases.get(c.feeds) if c.feeds else None, allow)
            if parts3 is None:
                unknown.append(c.id)
                continue
            for cat, currents in parts3:
                for k in range(3):
                    if currents[k] > 0:
                        by_line[k].setdefault(cat, []).append(currents[k])
            continue
        parts = contributions(c, u0_v, fed.get(c.feeds) if c.feeds else None, allow)
        if parts is None:
            unknown.append(c.id)
            continue
        k = PHASES.index(c.phase)
        for cat, amps in parts:
            by_line[k].setdefault(cat, []).append(amps)
        singles.append((c.id, c.phase, tuple(parts)))
    totals, line_parts = [], []
    for k in range(3):
        total, out, _extra = _diversify(by_line[k], allow)
        totals.append(total)
        line_parts.append(tuple(out))
    worst = max(range(3), key=lambda k: totals[k])
    return Demand(totals[worst], line_parts[worst], tuple(unknown), phases_a=tuple(totals),
                  phase_parts=tuple(line_parts), neutral_a=three_phase.neutral_current_a(*totals),
                  imbalance_pct=three_phase.imbalance_pct(totals), singles=tuple(singles),
                  line_inputs=tuple(tuple((cat, tuple(v)) for cat, v in line.items()) for line in by_line),
                  table=allow.table, upper_bound=allow.upper_bound, allow=allow)


def _diversify(by_cat: dict[str, list[float]], allow: Allowances | None = None,
               cooker_sockets: int = 0) -> tuple[float, list[tuple[str, float, float]], float]:
    """(total, [(category, connected A, allowed A)], the cooker socket-outlets' amperes)."""
    allow = allow or allowances()
    cats = allow.categories
    total, out, extra = 0.0, [], 0.0
    for cat in cats:  # the data file's order, then the site's own
        currents = by_cat.get(cat)
        if not currents:
            continue
        rule = cats[cat]
        allowed = allowed_a(rule, currents)
        if cat == allow.load_kinds["cooker"] and rule.get("socket_a") and cooker_sockets:
            extra = rule["socket_a"] * cooker_sockets
            allowed += extra
        total += allowed
        out.append((cat, sum(currents), allowed))
    return total, out, extra


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
    parts = "; ".join(f"{cat} {conn:.1f} A → {allowed:.1f} A" for cat, conn, allowed in d.parts) or "no load"
    if d.extra_a:
        parts += f" (cooking incl. {d.extra_a:g} A for socket-outlets in cooker control units)"
    return parts


UPPER_WHY = ("with no published allowances for these premises every load counts in full, an upper figure; "
             "name the class of premises (site.premises) or give the designer's own allowances (site.diversity)")


def lines_text(phases_a: tuple, neutral_a: float | None, imbalance_pct: float | None) -> str:
    lines = ", ".join(f"{ph} {i:.1f} A" for ph, i in zip(PHASES, phases_a))
    extra = ""
    if neutral_a is not None:
        extra += f"; neutral {neutral_a:.1f} A"
    if imbalance_pct is not None:
        extra += f"; imbalance {imbalance_pct:.0f} %"
    return lines + extra


def move_remedies(d: Demand, limit: float) -> list[tuple[str, str, str, tuple]]:
    """The moves of one single-phase circuit from the most loaded line to the least loaded one
    that bring every line within `limit`, those with the lowest largest line first (ties in the
    board's order): (circuit, from, to, new line demands). The allowances are applied again to
    both lines. Empty where no single move does it."""
    if d.phases_a is None or d.line_inputs is None:
        return []
    worst = max(range(3), key=lambda k: d.phases_a[k])
    least = min(range(3), key=lambda k: d.phases_a[k])
    if d.phases_a[worst] == d.phases_a[least]:
        return []
    found = []
    for cid, line, parts in d.singles:
        if PHASES.index(line) != worst:
            continue
        from_line = {cat: list(currents) for cat, currents in d.line_inputs[worst]}
        to_line = {cat: list(currents) for cat, currents in d.line_inputs[least]}
        for cat, amps in parts:
            from_line[cat].remove(amps)
            to_line.setdefault(cat, []).append(amps)
        new = list(d.phases_a)
        new[worst] = _diversify(from_line, d.allow)[0]
        new[least] = _diversify(to_line, d.allow)[0]
        if max(new) <= limit:
            found.append((cid, PHASES[worst], PHASES[least], tuple(new)))
    return sorted(found, key=lambda m: round(max(m[3]), 1))   # stable: the board's order on a tie


def run(board: Board, d: Demand, service_fuse_a: float | None) -> CheckResult:
    if d.phases_a is not None:
        return _run_three_phase(board, d, service_fuse_a)
    limit, limit_how = _limit(board, service_fuse_a)
    parts = describe(d)
    missing = (f"; not counted, no load data: circuit{'s' if len(d.unknown) > 1 else ''} "
               f"{', '.join(d.unknown)}") if d.unknown else ""
    if limit is None:
        return not_assessed(ID, "A", "<=", f"demand {d.demand_a:.1f} A ({parts}); board {board.id} has no "
                                           "main_switch_a", value=d.demand_a)
    ok = d.demand_a <= limit
    detail = (f"maximum demand after diversity {d.demand_a:.1f} A {'≤' if ok else '>'} {limit_how} ({parts})"
              f"{missing} — allowances for {d.table}")
    if not ok and d.upper_bound:
        return not_assessed(ID, "A", "<=", f"demand {d.demand_a:.1f} A > {limit_how} ({parts}){missing}; "
                                           + UPPER_WHY, value=d.demand_a, limit=limit)
    status = verdict(ok)
    if ok and d.unknown:
        status = WARN
    return CheckResult(ID, status, d.demand_a, limit, "A", "<=", detail, ib_limit_a=limit)


def _run_three_phase(board: Board, d: Demand, service_fuse_a: float | None) -> CheckResult:
    """A three-phase board: each line's demand against the main switch (and at the origin the
    supplier's fuse) of that line; value is the largest line's."""
    limit, limit_how = _limit(board, service_fuse_a)
    lines = lines_text(d.phases_a, d.neutral_a, d.imbalance_pct)
    missing = (f"; not counted, no load data: circuit{'s' if len(d.unknown) > 1 else ''} "
               f"{', '.join(d.unknown)}") if d.unknown else ""
    worst = PHASES[d.phases_a.index(d.demand_a)]
    if limit is None:
        return not_assessed(ID, "A", "<=", f"demand per line {lines}; board {board.id} has no main_switch_a",
                            value=d.demand_a)
    ok = d.demand_a <= limit
    detail = (f"maximum demand after diversity per line {lines}; largest {worst} {d.demand_a:.1f} A "
              f"{'≤' if ok else '>'} {limit_how} per line ({worst}: {describe(d)}){missing}"
              f" — allowances for {d.table}")
    if not ok:
        moves = move_remedies(d, limit)
        if moves:
            cid, src, dst, new = moves[0]
            best = round(max(new), 1)
            also = [m[0] for m in moves[1:] if round(max(m[3]), 1) == best]
            detail += (f"; moving circuit {cid} from {src} to {dst} gives "
                       + ", ".join(f"{ph} {i:.1f} A" for ph, i in zip(PHASES, new)) + f", within {limit:g} A"
                       + (f" (moving circuit {' or '.join(also)} instead does as well)" if also else ""))
    if not ok and d.upper_bound:
        return not_assessed(ID, "A", "<=", f"{detail}; " + UPPER_WHY, value=d.demand_a, limit=limit)
    status = verdict(ok)
    if ok and d.unknown:
        status = WARN
    return CheckResult(ID, status, d.demand_a, limit, "A", "<=", detail, ib_limit_a=limit)


def supply_lines_check(site_id: str, phases_a: tuple, service_fuse_a: float | None, boards: list[str],
                       upper_bound: bool = False) -> CheckResult:
    """A three-phase origin: each line's demand (every board fed from the supply) against the
    supplier's fuse in that line."""
    worst = max(phases_a)
    lines = lines_text(phases_a, three_phase.neutral_current_a(*phases_a), three_phase.imbalance_pct(phases_a))
    if service_fuse_a is None:
        return not_assessed(ID, "A", "<=", f"demand at the origin per line {lines}; no service_fuse_a given",
                            value=worst)
    ok = worst <= service_fuse_a
    detail = (f"demand at the origin per line {lines} (boards {', '.join(boards)}); largest {worst:.1f} A "
              f"{'≤' if ok else '>'} supplier's fuse {service_fuse_a:g} A per line")
    if not ok and upper_bound:
        return not_assessed(ID, "A", "<=", f"{detail}; " + UPPER_WHY, value=worst, limit=service_fuse_a)
    return CheckResult(ID, verdict(ok), worst, service_fuse_a, "A", "<=", detail, ib_limit_a=service_fuse_a)


def supply_check(site_id: str, total_a: float, service_fuse_a: float | None, boards: list[str],
                 upper_bound: bool = False) -> CheckResult:
    """The origin as a whole: every board fed from the supply against the supplier's fuse."""
    if service_fuse_a is None:
        return not_assessed(ID, "A", "<=", f"demand at the origin {total_a:.1f} A; no service_fuse_a given",
                            value=total_a)
    ok = total_a <= service_fuse_a
    if not ok and upper_bound:
        return not_assessed(ID, "A", "<=", f"demand at the origin {total_a:.1f} A (boards {', '.join(boards)}) > "
                                           f"supplier's fuse {service_fuse_a:g} A; " + UPPER_WHY,
                            value=total_a, limit=service_fuse_a)
    detail = (f"demand at the origin {total_a:.1f} A (boards {', '.join(boards)}) {'≤' if ok else '>'} "
              f"supplier's fuse {service_fuse_a:g} A")
    return CheckResult(ID, verdict(ok), total_a, service_fuse_a, "A", "<=", detail, ib_limit_a=service_fuse_a)
