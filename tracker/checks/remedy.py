"""For a failing circuit, the changes an electrician can make that pass every check of it.

The search tries changes of device rating, curve, cable size and RCD protection, smallest first
(fewest things changed, then fewest size steps), and re-runs the same checks on each; the first
candidate with no failing check is the remedy. A larger device comes with the cable it needs
(device and cable together, as a sub-main is put right). Where the capacity of the cable fails,
the changes of route are tried too: fewer circuits grouped with it, another installation method,
a ring split into two radials; each is re-checked the same way and offered beside the device and
cable change. What cannot be fitted is never offered: a socket-outlet circuit's cable is kept to
what 13 A accessories' terminals take, and a motor's device never trips sooner on starting unless
the maker's starting current shows it clear. Where only load-dependent checks fail, it also says
how large a load the circuit as it stands can take (for a fixed appliance, the largest appliance).
"""
from __future__ import annotations

import itertools
from dataclasses import replace
from typing import NamedTuple

from tracker import catalogue
from tracker.checks import circuit as circuit_checks
from tracker.checks import registry
from tracker.checks.breaking_capacity import BREAKING_STEPS_KA
from tracker.checks.circuit import CircuitResult
from tracker.checks.context import device_label
from tracker.checks.readings import READING_CHECKS
from tracker.checks.registry import BREAKING, CURVE, RATING, RATING_UP, RCD, SIZE
from tracker.checks.result import FAIL, NOT_ASSESSED, WARN
from tracker.checks.rules import ADDITIONAL_PROTECTION_MA
from tracker.engine import disconnection
from tracker.model import Cable, Device

RATING_STEPS = (-2, -1, 0, 1, 2, 3, 4, 5)
SIZE_STEPS = (0, 1, 2, 3, 4, 5)
# A TT sub-main's RCD: 100 mA time-delayed, discriminating with the 30 mA devices below (common practice).
SUBMAIN_RCD_MA = 100.0

# The largest conductor the terminals of 13 A socket-outlets and fused connection units (BS 1363)
# take: 4 mm² (common practice; a ring final's socket takes two such conductors, a 32 A radial's
# one). A socket-outlet circuit is never offered a larger cable.
SOCKET_TERMINAL_MAX_MM2 = 4.0
# The lower edge of the instantaneous tripping band of a type B, C, D breaker, × In
# (BS EN 60898-1 Table 7: B 3–5 In, C 5–10 In, D 10–20 In): the least current that may trip it at once.
INSTANT_LOWER = {"B": 3.0, "C": 5.0, "D": 10.0}
# A ring split into two radials: each on at most the standard radial arrangement's device for its
# cable (2.5 mm² on 20 A, 4 mm² on 32 A; IET On-Site Guide Appendix H, common practice), or a
# smaller one down to 16 A.
RADIAL_RATING_A = {2.5: 20.0, 4.0: 32.0}
# Appliances whose current is fixed by their rating: a lower load means a smaller appliance.
FIXED_APPLIANCES = frozenset({"shower", "water-heater", "motor", "ev-charger", "cooker", "space-heater",
                              "heat-pump", "storage-heater"})


def socket_circuit(c) -> bool:
    return any(ld.kind == "socket-outlets" for ld in c.loads)


def largest_size_fitted(c) -> float | None:
    """The largest cable a circuit's accessories take (socket-outlets: 4 mm²); None: no such limit."""
    return SOCKET_TERMINAL_MAX_MM2 if socket_circuit(c) and c.device.rating_a <= 32 else None


def starts_clear(c, curve: str | None, rating_a: float) -> bool:
    """Whether a motor circuit's device of `curve` and `rating_a` stays clear of the motor's starting
    current: a threshold of instantaneous tripping no lower than the present device's, or above the
    maker's starting current (`starting_current_a` of every motor on it)."""
    motors = [ld for ld in c.loads if ld.kind == "motor"]
    old = c.device
    if not motors or curve not in INSTANT_LOWER or old.curve not in INSTANT_LOWER:
        return True
    new_a = INSTANT_LOWER[curve] * rating_a
    if new_a >= INSTANT_LOWER[old.curve] * old.rating_a:
        return True
    if any(getattr(ld, "starting_current_a", None) is None for ld in motors):
        return False
    return new_a > sum(ld.starting_current_a for ld in motors)


def _failing(result: CircuitResult) -> set[str]:
    """Failing checks a change of the circuit's sizes can put right. A failing check no remedy
    change helps (registry `helps` empty: a requirement such as ev-charging's RCD type or an
    isolator) is left to its own failing lines, which say what to fit."""
    return {r.id for r in result.checks if r.status == FAIL and _sized(r.id)}


def _sized(check_id: str) -> bool:
    spec = registry.spec(check_id)
    return spec is None or bool(spec.helps)


def _requirement_fixes(result: CircuitResult) -> list[str]:
    """What to do about the failing checks no size change helps: the check's `fix` where it declares
    one (the checks on readings), else its failing lines as its detail words them."""
    out = []
    for r in result.checks:
        if r.status == FAIL and not _sized(r.id):
            spec = registry.spec(r.id)
            if spec is not None and spec.fix:
                out.append(f"{r.id}: {spec.fix}")
                continue
            lines = [part[len("[fail] "):] for part in r.detail.split("; ") if part.startswith("[fail] ")]
            out += lines or [f"{r.id}: {r.detail or 'see the check'}"]
    return out


def _with(result: CircuitResult, status: str) -> set[str]:
    # The checks on readings judge the installed circuit as measured: a change to its cable or device
    # is not theirs to judge (the readings would be taken again), so the search leaves them out.
    return {r.id for r in result.checks if r.status == status and r.id not in READING_CHECKS}


def _load_limited(result: CircuitResult, failing: set[str]) -> bool:
    dep = {s.id for s in registry.circuit_checks() if s.load_dependent(result.basis)}
    return bool(failing) and failing <= dep


def _changes_that_help(failing: set[str]) -> set[str]:
    """The kinds of change (registry.REMEDY_CHANGES) that can put one of the failing checks right."""
    return set().union(*(registry.spec(f).helps for f in failing if registry.spec(f) is not None))


class _Options(NamedTuple):
    """What the search may change on one circuit, each list starting from what is there."""

    ratings: list[float]          # the device kind's standard ratings
    i_rating: int                 # the present rating's place among them
    rating_steps: tuple[int, ...]
    curves: list[str | None]
    sizes: list[float]            # the cable kind's sizes for the method
    i_size: int
    size_steps: tuple[int, ...]
    rcd_options: list[float | None]
    breaking_ka: float | None     # the breaking capacity every candidate's device gets


def _options(result: CircuitResult, failing: set[str]) -> _Options:
    c = result.circuit
    dims = _changes_that_help(failing)
    if RATING_UP in dims or RATING in dims:
        dims = dims | {SIZE}      # a larger device comes with the cable it needs (a sub-main's B80 and 16 mm²)
    kind = catalogue.cable_kind(c.cable.kind)
    ratings = catalogue.standard_ratings(c.device.kind)
    curves = [c.device.curve] + [k for k in ("B", "C", "D") if k != c.device.curve] \
        if c.device.kind in ("mcb", "rcbo") else [c.device.curve]
    sizes = kind.sizes(c.cable.method, 3 if c.three_phase else 1) if kind else [c.cable.csa_mm2]
    cap = largest_size_fitted(c)
    if cap is not None:
        sizes = [x for x in sizes if x <= cap or x == c.cable.csa_mm2]
    try:
        i_rating = ratings.index(c.device.rating_a)
    except ValueError:
        i_rating, ratings = 0, [c.device.rating_a]
    try:
        i_size = sizes.index(c.cable.csa_mm2)
    except ValueError:
        i_size, sizes = 0, [c.cable.csa_mm2]
    rcd_options = [c.rcd_ma]
    # 30 mA protection is a remedy for final circuits. A sub-main is put right by its cable or
    # device — on TT, where no overcurrent device can disconnect an earth fault, by a 100 mA
    # time-delayed RCD (common practice: it discriminates with the 30 mA devices below).
    if not c.is_submain and (c.rcd_ma is None or c.rcd_ma > ADDITIONAL_PROTECTION_MA):
        rcd_options.append(ADDITIONAL_PROTECTION_MA)
    elif c.is_submain and c.rcd_ma is None and result.ctx.supply.system == "TT":
        rcd_options.append(SUBMAIN_RCD_MA)
    breaking = c.device.breaking_ka
    if BREAKING in dims:
        # a device of higher breaking capacity, applied to every candidate
        pfc = result.ctx.pfc_ka
        breaking = next((b for b in BREAKING_STEPS_KA if b >= pfc), None)
    if RATING in dims:
        rating_steps = RATING_STEPS
    elif RATING_UP in dims:
        rating_steps = tuple(x for x in RATING_STEPS if x >= 0)
    else:
        rating_steps = (0,)
    return _Options(ratings, i_rating, rating_steps, curves if CURVE in dims else curves[:1], sizes, i_size,
                    SIZE_STEPS if SIZE in dims else (0,), rcd_options if RCD in dims else rcd_options[:1],
                    breaking if breaking is not None else c.device.breaking_ka)


def _in_cost_order(c, opts: _Options) -> list[tuple[float, str | None, float, float | None]]:
    """(rating, curve, size, RCD) of every candidate, fewest things changed first, then fewest
    size steps, then the smallest change of rating."""
    out = []
    for dr, curve, ds, rcd in itertools.product(opts.rating_steps, opts.curves, opts.size_steps, opts.rcd_options):
        ir, isz = opts.i_rating + dr, opts.i_size + ds
        if not (0 <= ir < len(opts.ratings)) or isz >= len(opts.sizes):
            continue
        if not starts_clear(c, curve, opts.ratings[ir]):
            continue
        changed = (dr != 0) + (curve != c.device.curve) + (ds != 0) + (rcd != c.rcd_ma)
        cost = (changed, ds, abs(dr), curve != c.device.curve, rcd != c.rcd_ma, dr)
        out.append((cost, opts.ratings[ir], curve, opts.sizes[isz], rcd))
    out.sort(key=lambda x: x[0])
    return [changes for _cost, *changes in out]


def _resized(cable: Cable, kind, csa: float) -> Cable:
    """The same run in another size, its cpc with it."""
    if csa == cable.csa_mm2:
        return cable
    if kind.cpc == "separate":
        cpc = csa                   # single-core cpc of the line conductor's size
    elif cable.cpc_mm2 is None:
        cpc = None                  # the cable's standard construction still applies
    else:
        cpc = kind.default_cpc_mm2(csa) or csa
    return Cable(cable.kind, csa, cable.length_m, cable.method, cpc)


def _candidate_circuits(result: CircuitResult, failing: set[str]):
    """The circuit with each change the failing checks open, cheapest first."""
    c = result.circuit
    opts = _options(result, failing)
    kind = catalogue.cable_kind(c.cable.kind)
    d0 = c.device
    cables: dict[float, Cable] = {}
    for rating, curve, csa, rcd in _in_cost_order(c, opts):
        if (rating, curve) == (d0.rating_a, d0.curve):
            device = replace(d0, breaking_ka=opts.breaking_ka)
        else:
            # A different device: the old one's maker's figures and class do not carry over (a new
            # type B/C breaker is taken at the default energy-limiting class).
            device = Device(d0.kind, rating, curve, opts.breaking_ka)
        cable = cables.get(csa)
        if cable is None:
            cable = cables[csa] = _resized(c.cable, kind, csa)
        yield replace(c, device=device, cable=cable, rcd_ma=rcd)


def _describe(before, after, result_after: CircuitResult) -> list[str]:
    parts = []
    if (before.device.rating_a, before.device.curve) != (after.device.rating_a, after.device.curve):
        parts.append(f"device {device_label(before.device)} → {device_label(after.device)}")
    if before.device.breaking_ka != after.device.breaking_ka:
        parts.append(f"a device with a breaking capacity of at least {after.device.breaking_ka:g} kA")
    if before.cable.csa_mm2 != after.cable.csa_mm2:
        cpc_b = before.cable.cpc_mm2
        cpc_a = after.cable.cpc_mm2
        kind = catalogue.cable_kind(after.cable.kind)
        cpc_b = cpc_b if cpc_b is not None else kind.default_cpc_mm2(before.cable.csa_mm2)
        cpc_a = cpc_a if cpc_a is not None else kind.default_cpc_mm2(after.cable.csa_mm2)
        cpc = f", cpc {cpc_b:g} → {cpc_a:g} mm²" if cpc_b != cpc_a and cpc_a is not None else ""
        iz = f", Iz {result_after.iz_a:.1f} A" if result_after.iz_a is not None else ""
        parts.append(f"cable {before.cable.csa_mm2:g} → {after.cable.csa_mm2:g} mm² {after.cable.kind}{cpc}{iz}")
    if before.rcd_ma != after.rcd_ma:
        if after.is_submain:
            parts.append(f"a {after.rcd_ma:g} mA time-delayed RCD protecting the sub-main")
        else:
            parts.append(f"{ADDITIONAL_PROTECTION_MA:g} mA RCD protection (an RCBO, or an RCD on the board)")
    return parts


FALLBACK_TRIES = 12


def _fixable_here(result: CircuitResult, failing: set[str]) -> bool:
    """False where a failing check cannot pass whatever is done to this circuit alone."""
    for check_id in failing:
        spec = registry.spec(check_id)
        if spec is not None and spec.cause_upstream is not None and spec.cause_upstream(result):
            return False
    return True


def _passes(cand, result: CircuitResult, unknown: set[str]):
    """The candidate's result where it passes every check and leaves nothing unassessed that was
    assessed before; else None."""
    def out(r) -> bool:      # what rules a candidate out below, known from one check alone
        return (r.status == FAIL and _sized(r.id)) or (r.status == NOT_ASSESSED and r.id not in READING_CHECKS
                                                        and r.id not in unknown)

    if circuit_checks.any_result(cand, result.ctx, result.fed_demand_a, out):
        return None          # most candidates end here, at their first such check
    trial, _ = circuit_checks.evaluate(cand, result.ctx, result.fed_demand_a, explain=False)
    if _failing(trial) or not _with(trial, NOT_ASSESSED) <= unknown:
        return None
    return trial


def _device_kind_changes(result: CircuitResult):
    """A rewirable fuse replaced by a type B MCB of the next rating up (a plug-in MCB where the fuse
    board takes one, else a new board: common practice) — a B MCB needs no In / 0.725 allowance."""
    c = result.circuit
    if c.device.kind != "fuse-semi-enclosed" or catalogue.device_info("mcb") is None:
        return
    rating = next((r for r in catalogue.standard_ratings("mcb") if r >= c.device.rating_a), None)
    if rating is None:
        return
    breaking = next((b for b in BREAKING_STEPS_KA if b >= result.ctx.pfc_ka), None)
    if breaking is None:
        return
    new = Device("mcb", rating, "B", breaking)
    yield (0, [f"replace the {device_label(c.device)} by a {device_label(new)} (a plug-in MCB where the fuse board "
               "takes one, else a new board)"], replace(c, device=new))


def _route_changes(result: CircuitResult, failing: set[str]):
    """(rank, words, circuit) for the changes of route that can raise the cable's capacity: fewer
    circuits grouped with it, another installation method of higher rating, a ring split into two
    radials. Each alone, and a split ring with fewer grouped."""
    c = result.circuit
    if "capacity" not in failing or c.is_submain:
        return
    env, cable = c.environment, c.cable
    kind = catalogue.cable_kind(cable.kind)
    for g in range(env.grouped_with - 1, 0, -1):     # the least re-routing first
        yield (1, [f"re-route it so that it is grouped with {g - 1 or 'no'} other circuit{'s' if g != 2 else ''} "
                   f"(grouped_with {env.grouped_with} → {g})"],
               replace(c, environment=replace(env, grouped_with=g)))
    here = kind.rating(cable.csa_mm2, cable.method, c.phases) if kind else None
    better = []
    for m in (kind.methods_for(c.phases) if kind else ()):
        there = kind.rating(cable.csa_mm2, m, c.phases)
        if m != cable.method and there is not None and here is not None and there.value > here.value:
            better.append((there.value, m))
    # the least re-grouping first, then the method nearest the present one in rating
    for g, (_rating, m) in sorted(((g, b) for g in range(env.grouped_with, 0, -1) for b in better),
                                  key=lambda x: (-x[0], x[1][0])):
        words = f"re-run the cable by reference method {m} ({kind.methods[m]}) instead of {cable.method}"
        fewer = f", grouped with fewer circuits (grouped_with {env.grouped_with} → {g})" if g != env.grouped_with else ""
        yield 5, [words + fewer], replace(c, cable=replace(cable, method=m), environment=replace(env, grouped_with=g))
    if c.is_ring and cable.csa_mm2 in RADIAL_RATING_A and c.device.kind in ("mcb", "rcbo"):
        # the standard radial's rating for the cable first, then smaller ones down to 16 A
        ratings = [r for r in catalogue.standard_ratings(c.device.kind) if 16 <= r <= RADIAL_RATING_A[cable.csa_mm2]]
        for rating in sorted(ratings, reverse=True):
            half = replace(c, topology="radial",
                           device=Device(c.device.kind, rating, c.device.curve, c.device.breaking_ka),
                           cable=replace(cable, length_m=cable.length_m / 2))
            yield (3, [f"split the ring into two radial circuits, each on a {device_label(half.device)} with about "
                       f"half the ring's cable and floor area ({cable.length_m / 2:g} m each; a second way on the board)"],
                   half)


def _change_record(cand) -> dict:
    return {
        "device": {"kind": cand.device.kind, "curve": cand.device.curve, "rating_a": cand.device.rating_a,
                   "breaking_ka": cand.device.breaking_ka},
        "cable": {"kind": cand.cable.kind, "csa_mm2": cand.cable.csa_mm2, "cpc_mm2": cand.cable.cpc_mm2,
                  "method": cand.cable.method, "length_m": cand.cable.length_m},
        "rcd_ma": cand.rcd_ma,
        "topology": cand.topology,
        "grouped_with": cand.environment.grouped_with,
    }


def find(result: CircuitResult) -> dict | None:
    """The remedy for a failing circuit: {'text', 'changes', 'change', 'load_limit_kw', 'alternatives'};
    None if it passes. `changes`/`change` are the first option; `alternatives` the others, each
    {'changes', 'change'} — every one re-checked to pass every check of the circuit."""
    failing = _failing(result)
    fixes = _requirement_fixes(result)
    if not failing:
        return {"changes": [], "load_limit_kw": None, "text": "; ".join(fixes), "alternatives": []} if fixes else None
    out: dict = {"changes": [], "load_limit_kw": None, "text": "", "alternatives": []}
    local = _fixable_here(result, failing)
    options = _ranked_options(result, failing, local)
    if options:
        _rank, words, cand = options[0]
        out["changes"] = words
        out["change"] = _change_record(cand)
        out["alternatives"] = [{"changes": option_words, "change": _change_record(option)}
                               for _rank, option_words, option in options[1:]]
    text = []
    ctx = result.ctx
    vd = result.check("voltage-drop")
    if "voltage-drop" in failing and ctx.fed_via and ctx.vd_v is not None and vd.limit is not None \
            and ctx.vd_v >= 0.5 * vd.limit / 100.0 * ctx.supply.u0_v:
        text.append(f"{ctx.vd_v:.2f} V of the allowed {vd.limit / 100.0 * ctx.supply.u0_v:.2f} V is already "
                    f"dropped upstream: put the sub-main {ctx.fed_via} right first")
    if options:
        first = "smallest change that passes every check of the circuit: " + "; ".join(options[0][1])
        text.append(first + "".join(f"; or {'; '.join(option_words)}" for _rank, option_words, _option in options[1:]))
    elif not local:
        text.append("no change to this circuit alone can pass: the cause is upstream")
    else:
        text.append(_no_change_why(result, failing))
    text.extend(_load_limit(result, failing, out))
    out["text"] = "; ".join(fixes + text)
    return out


def _caution_words(trial: CircuitResult, ids: list[str]) -> str:
    """The caution a fallback change brings, in a few words (fault protection by an RCD named)."""
    if "fault-loop" in ids and trial.circuit.rcd_ma is not None:
        return (f"fault protection relies on the {trial.circuit.rcd_ma:g} mA RCD, "
                f"Zs ≤ {disconnection.TOUCH_VOLTAGE_V:g} V / IΔn, BS 7671 Table 41.5")
    return "see the check"


def _first_passing(result: CircuitResult, failing: set[str], unknown: set[str], cautions: set[str]):
    """(chosen, fallback), each (candidate circuit, its results) or None: chosen is the first of
    the device and cable changes that passes with no new caution, else the fallback, the first that
    passes (the same object then)."""
    fallback = None
    tries = 0
    for cand in _candidate_circuits(result, failing):
        trial = _passes(cand, result, unknown)
        if trial is None:
            continue
        if _with(trial, WARN) <= cautions:
            return (cand, trial), fallback
        if fallback is None:
            fallback = (cand, trial)
        tries += 1
        if tries > FALLBACK_TRIES:   # a clean remedy is not close: settle for the first that passes
            break
    return fallback, fallback


def _ranked_options(result: CircuitResult, failing: set[str], local: bool) -> list[tuple]:
    """Every change that passes, as (rank, words, circuit), least change first: a device alone,
    then fewer circuits grouped, a split ring, a new cable, a new route."""
    if not local:
        return []
    c = result.circuit
    unknown, cautions = _with(result, NOT_ASSESSED), _with(result, WARN)
    options = []
    chosen, fallback = _first_passing(result, failing, unknown, cautions)
    if chosen is not None:
        cand, trial = chosen
        options.append((0 if cand.cable.csa_mm2 == c.cable.csa_mm2 else 4, _describe(c, cand, trial), cand))
    if chosen is not None and fallback is not None and fallback is not chosen:
        # a change that passes with a caution the circuit did not have (30 mA RCD protection on a TN
        # circuit whose loop is too long: fault protection then relies on the RCD) is still one an
        # electrician may prefer to a new cable: offered after the clean ones, with its caution named
        cand, trial = fallback
        added = sorted(_with(trial, WARN) - cautions)
        words = _describe(c, cand, trial)
        if added:
            words[-1] += f" (then with a caution on {', '.join(added)}: {_caution_words(trial, added)})"
        options.append((6, words, cand))
    seen_ranks = set()
    for rank, words, cand in itertools.chain(_device_kind_changes(result), _route_changes(result, failing)):
        if rank in seen_ranks:
            continue           # the least change of each kind that passes
        if _passes(cand, result, unknown) is not None:
            seen_ranks.add(rank)
            options.append((rank, words, cand))
    options.sort(key=lambda o: o[0])
    return options


def _load_limit(result: CircuitResult, failing: set[str], out: dict) -> list[str]:
    """Keeping the circuit as it is with less load, where the load is what fails it: the words, and
    `out['load_limit_kw']`."""
    c = result.circuit
    if not (_load_limited(result, failing) and result.own_margin_a() is not None and c.loads
            and not socket_circuit(c) and c.design_current_a is None):
        return []
    limit_a = result.ib_a + result.own_margin_a()
    kw = sum(ld.power_kw for ld in c.loads if ld.power_kw is not None)
    if not (kw > 0 and limit_a > 0 and all(ld.power_kw is not None for ld in c.loads)):
        return []
    limit_kw = limit_a * kw / result.ib_a   # the same loads, scaled down to the limiting current
    out["load_limit_kw"] = round(limit_kw, 2)
    fixed = [ld for ld in c.loads if ld.kind in FIXED_APPLIANCES]
    if len(c.loads) == 1 and fixed:
        # an appliance draws its rated current: the circuit takes a smaller appliance, not "less load"
        return [f"or keep the circuit as it is with a {fixed[0].kind.replace('-', ' ')} of at most "
                f"{limit_kw:.2f} kW"]
    return [f"or keep the circuit as it is and limit its load to {limit_kw:.2f} kW"]


def _no_change_why(result: CircuitResult, failing: set[str]) -> str:
    c = result.circuit
    cap = largest_size_fitted(c)
    why = ("no change of device rating, curve, cable size, RCD or route within reach passes every check: "
           "the circuit needs redesign (shorter route, split load, other installation method)")
    if cap is not None:
        why += (f"; a socket-outlet circuit's cable stays at most {cap:g} mm², what 13 A accessories' terminals "
                "take (common practice)")
    if any(ld.kind == "motor" for ld in c.loads):
        why += "; a motor's device is not made to trip sooner on starting without the maker's starting_current_a"
    return why
