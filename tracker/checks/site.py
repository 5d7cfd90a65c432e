"""All checks of a site: demand bottom-up, conditions at each board top-down, then every
circuit with the conditions at its board. A site is independent of every other site."""
from __future__ import annotations

from dataclasses import dataclass, field

from tracker.checks import circuit as circuit_checks
from tracker.checks import demand as demand_checks
from tracker.checks import notification
from tracker.checks.circuit import CircuitResult
from tracker.checks.readings import latest_readings
from tracker.checks.context import BoardContext, child_context, build_facts, origin_context, supply_context
from tracker.checks.readings import READING_CHECKS
from tracker.checks.result import FAIL, CheckResult, worst
from tracker.engine import three_phase
from tracker.model import PHASES, Circuit, Site


@dataclass(slots=True)
class BoardResult:
    ref: str
    board_id: str
    demand: demand_checks.Demand
    check: CheckResult
    ctx: BoardContext
    margin_a: float | None = None   # extra current any circuit here may add before an upstream check fails
    margin_by: str = ""             # which limit that is, in words

    @property
    def status(self) -> str:
        return self.check.status


@dataclass(slots=True)
class SiteResult:
    site: Site
    circuits: dict[str, CircuitResult] = field(default_factory=dict)
    boards: dict[str, BoardResult] = field(default_factory=dict)
    supply_check: CheckResult | None = None
    supply_phases_a: tuple | None = None   # a three-phase origin: demand per line L1, L2, L3
    notification: object = None      # tracker.checks.notification.Outcome: the network operator's route

    @property
    def status(self) -> str:
        return worst([r.status for r in self.circuits.values()] + [b.status for b in self.boards.values()]
                     + ([self.supply_check.status] if self.supply_check else []))


def evaluate_site(site: Site, previous: SiteResult | None = None, recheck: set[str] | None = None,
                  explain: bool = True) -> SiteResult:
    """Check every circuit and board of `site`.

    Incremental use: with `previous` (the result for an earlier state of the same site) and
    `recheck` (the refs of the circuits a change can affect, found from the graph by
    `tracker.tracking.impact`), every other circuit keeps its earlier results unchanged. Board
    demand and the conditions at each board are always recomputed (they are sums over a site).

    explain=False leaves the circuit checks' deferred texts unbuilt and their working records out
    (for a state kept in memory for a whole estate, and for trials: `explain_circuit` gives the
    text of any one circuit when it is shown).
    """
    sup = supply_context(site.supply, site.premises == "domestic", site.premises, site.diversity)
    on_board: dict[str, list[Circuit]] = {b.id: [] for b in site.boards}
    for c in site.circuits:
        on_board[c.board].append(c)
    boards = {b.id: b for b in site.boards}
    allow = demand_checks.allowances(site.premises, site.diversity)
    demand_of = _demands(sup, on_board, boards, allow)
    out = SiteResult(site)
    readings = latest_readings(site)
    old = previous.circuits if previous is not None else {}

    def visit(board_id: str, ctx: BoardContext) -> None:
        board = boards[board_id]
        d = demand_of(board_id)
        ref = f"{site.id}/{board_id}"
        out.boards[ref] = BoardResult(ref, board_id, d, demand_checks.run(board, d, site.supply.service_fuse_a), ctx)
        for c in on_board[board_id]:
            fed = demand_of(c.feeds).demand_a if c.feeds else None
            fed_phases = demand_of(c.feeds).phases_a if c.feeds and c.three_phase else None
            cref = f"{site.id}/{c.board}/{c.id}"
            prior = old.get(cref)
            if prior is not None and recheck is not None and cref not in recheck:
                result, facts = prior, None
            else:
                result, facts = circuit_checks.evaluate(c, ctx, fed, explain, readings.get(f"{c.board}/{c.id}"),
                                                         fed_phases)
            out.circuits[cref] = result
            if c.feeds:
                facts = facts or build_facts(c, ctx, fed, fed_phases_a=fed_phases)
                per_a = result.v_per_a
                if c.three_phase and per_a is not None:
                    # a single-phase ampere drawn below flows in one line and back in the neutral
                    per_a = 2.0 * per_a
                visit(c.feeds, child_context(facts, boards[c.feeds], result.vd_end_v, per_a, result.vd_phase_end_v))

    origin_boards = [b.id for b in site.boards if b.at_origin]
    for board_id in origin_boards:
        visit(board_id, origin_context(site, board_id, sup))
    _origin(out, sup, origin_boards, boards, demand_of, allow)
    # Report circuits in the order of the site files.
    out.circuits = {f"{site.id}/{c.board}/{c.id}": out.circuits[f"{site.id}/{c.board}/{c.id}"] for c in site.circuits}
    _margins(out, on_board, origin_boards)
    return out


def _demands(sup, on_board: dict[str, list[Circuit]], boards: dict, allow):
    """The demand of a board (bottom-up: a board's own circuits and the demand of every board it
    feeds), each computed once, as a function of the board's id."""
    u0 = sup.u0_v
    u_line = sup.u_line_v or three_phase.line_voltage_v(u0)
    demands: dict[str, demand_checks.Demand] = {}

    def demand_of(board_id: str) -> demand_checks.Demand:
        if board_id not in demands:
            fed = {c.feeds: demand_of(c.feeds).demand_a for c in on_board[board_id] if c.feeds}
            if boards[board_id].three_phase:
                fed_phases = {c.feeds: demand_of(c.feeds).phases_a for c in on_board[board_id]
                              if c.feeds and c.three_phase}
                demands[board_id] = demand_checks.three_phase_board_demand(on_board[board_id], u0, u_line, fed,
                                                                           fed_phases, allow)
            else:
                demands[board_id] = demand_checks.board_demand(on_board[board_id], u0, fed, allow)
        return demands[board_id]

    return demand_of


def _origin(out: SiteResult, sup, origin_boards: list[str], boards: dict, demand_of, allow) -> None:
    """The origin's demand against the supplier's fuse (per line on a three-phase origin) and the
    network operator's route."""
    site = out.site
    if sup.three_phase:
        lines = [0.0, 0.0, 0.0]
        for b in origin_boards:
            d = demand_of(b)
            if d.phases_a is not None:
                lines = [x + y for x, y in zip(lines, d.phases_a)]
            elif boards[b].phase is not None:
                lines[PHASES.index(boards[b].phase)] += d.demand_a
        out.supply_phases_a = tuple(lines)
        out.supply_check = demand_checks.supply_lines_check(site.id, out.supply_phases_a,
                                                            site.supply.service_fuse_a, origin_boards,
                                                            allow.upper_bound)
        most_loaded = max(out.supply_phases_a)
    else:
        total = sum(demand_of(b).demand_a for b in origin_boards)
        out.supply_check = demand_checks.supply_check(site.id, total, site.supply.service_fuse_a, origin_boards,
                                                     allow.upper_bound)
        most_loaded = total
    # the network operator's criteria are per phase: the most loaded line on a three-phase origin
    out.notification = notification.origin_state(site, most_loaded)


def _margins(out: SiteResult, on_board: dict[str, list[Circuit]], origin_boards: list[str]) -> None:
    """Upstream margins for headroom: each board's demand limit, the sub-main feeding it (its
    own Ib-dependent checks, and the voltage drop it adds to every circuit below it)."""
    site = out.site
    slack: dict[str, float | None] = {}

    def subtree_slack(board_id: str) -> float | None:
        values = []
        for c in on_board[board_id]:
            r = out.circuits[f"{site.id}/{c.board}/{c.id}"]
            values.append(r.vd_slack_v)
            if c.feeds:
                values.append(subtree_slack(c.feeds))
        known = [v for v in values if v is not None]
        slack[board_id] = min(known) if known else None
        return slack[board_id]

    for b in origin_boards:
        subtree_slack(b)
    supply_margin = None
    if out.supply_check is not None and out.supply_check.margin() is not None:
        supply_margin = (out.supply_check.margin(), "the supplier's fuse")

    def assign(board_id: str, inherited: tuple[float, str] | None, feeder: CircuitResult | None) -> None:
        br = out.boards[f"{site.id}/{board_id}"]
        candidates = [inherited]
        if br.check.margin() is not None:
            candidates.append((br.check.margin(), f"board {board_id}'s demand limit {br.check.limit:g} A"))
        if feeder is not None:
            if feeder.own_margin_a() is not None:
                candidates.append((feeder.own_margin_a(), f"the sub-main {feeder.circuit.board}/{feeder.circuit.id}"))
            per_a = br.ctx.v_per_a
            if slack.get(board_id) is not None and per_a > 0:
                candidates.append((slack[board_id] / per_a, f"the voltage drop of the circuits below {board_id}"))
        known = [c for c in candidates if c is not None]
        tightest = min(known, key=lambda x: x[0]) if known else None
        br.margin_a, br.margin_by = tightest if tightest else (None, "")
        for c in on_board[board_id]:
            if c.feeds:
                assign(c.feeds, tightest, out.circuits[f"{site.id}/{c.board}/{c.id}"])

    for b in origin_boards:
        assign(b, supply_margin, None)


def explain_circuit(result: CircuitResult) -> CircuitResult:
    """The same circuit's results with the working text of every check (a pure re-evaluation from
    the inputs the result holds: the circuit, the conditions at its board, the demand it feeds)."""
    if result.explained:
        return result
    explained, _ = circuit_checks.evaluate(result.circuit, result.ctx, result.fed_demand_a, True, result.readings,
                                            result.fed_phases_a)
    return explained


def headroom_kw(site_result: SiteResult, result: CircuitResult) -> float | None:
    """Extra load (kW at unity power factor) the circuit itself could take before any check of it
    fails — its own cable, device and checks; negative: how far over. None where an Ib-dependent
    check could not be assessed. The board's and the origin's spare demand are apart
    (`board_spare_kw`, `origin_spare_kw`): a passing circuit on an overloaded board keeps its own
    figure."""
    own = result.own_margin_a()
    if own is None:
        return None
    sup = result.ctx.supply
    if result.circuit.three_phase:
        # a balanced three-phase load: P = √3 × U_L × I
        return own * three_phase.SQRT3 * (sup.u_line_v or three_phase.line_voltage_v(sup.u0_v)) / 1000.0
    return own * sup.u0_v / 1000.0


def board_spare_kw(site_result: SiteResult, board_ref: str) -> tuple[float | None, str]:
    """(kW, what limits it): the extra load any circuit of the board could add before the board's
    demand, a sub-main feeding it, a voltage drop below it or the origin fails (counted at 100 % on
    every board above; negative: how far over)."""
    br = site_result.boards.get(board_ref)
    if br is None or br.margin_a is None:
        return None, ""
    return br.margin_a * site_result.site.supply.u0_v / 1000.0, br.margin_by


def origin_spare_kw(site_result: SiteResult) -> float | None:
    chk = site_result.supply_check
    if chk is None or chk.margin() is None:
        return None
    return chk.margin() * site_result.site.supply.u0_v / 1000.0


def spare_words(kw: float | None, what: str) -> str:
    """'the board can take 3.1 kW more' / 'the board is 8.4 kW over'."""
    if kw is None:
        return f"{what}: spare not known"
    return f"{what} can take {kw:.1f} kW more" if kw >= 0 else f"{what} is {-kw:.1f} kW over"


def headroom_words(site_result: SiteResult, result: CircuitResult) -> str:
    """Both figures in plain words: 'circuit can take 1.4 kW more; the board is 8.9 kW over (main switch)'."""
    own = headroom_kw(site_result, result)
    regardless = [c.id for c in result.checks if c.status == FAIL and c.ib_limit_a is None
                  and c.id not in READING_CHECKS]
    if regardless:
        first = f"circuit fails {', '.join(regardless)} whatever its load"
    elif own is None:
        first = "circuit: headroom not known (a load-dependent check is not assessed)"
    else:
        first = spare_words(own, "circuit")
    kw, by = board_spare_kw(site_result, f"{result.site_id}/{result.board_id}")
    if kw is None:
        return first
    return f"{first}; {spare_words(kw, 'the board')}" + (f" (limit: {by})" if by else "")
