"""For a failing circuit, the smallest change that passes every check of it.

The search tries changes of device rating, curve, cable size and RCD protection, smallest first
(fewest things changed, then fewest size steps), and re-runs the same checks on each; the first
candidate with no failing check is the remedy. Where only load-dependent checks fail, it also
says how large a load the circuit as it stands can take.
"""
from __future__ import annotations

import itertools
from dataclasses import replace
from typing import NamedTuple

from tracker import catalogue
from tracker.checks import circuit as circuit_checks
from tracker.checks import registry
from tracker.checks.breaking_capacity import BREAKING_STEPS_KA, fault_ka
from tracker.checks.circuit import CircuitResult
from tracker.checks.context import device_label
from tracker.checks.readings import READING_CHECKS
from tracker.checks.registry import BREAKING, CURVE, RATING, RATING_UP, RCD, SIZE
from tracker.checks.result import FAIL, NOT_ASSESSED, WARN
from tracker.checks.rules import ADDITIONAL_PROTECTION_MA
from tracker.model import Cable, Device

RATING_STEPS = (-2, -1, 0, 1, 2, 3, 4, 5)
SIZE_STEPS = (0, 1, 2, 3, 4, 5)
# A TT sub-main's RCD: 100 mA time-delayed, discriminating with the 30 mA devices below (common practice).
SUBMAIN_RCD_MA = 100.0


def _failing(result: CircuitResult) -> set[str]:
    """Failing checks a change of the circuit's sizes can put right. A failing check no remedy
    change helps (registry `helps` empty: a requirement such as ev-charging's RCD type or an
    isolator) is left to its own failing lines, which say what to fit."""
    return {r.id for r in result.checks if r.status == FAIL and _sized(r.id)}


def _sized(check_id: str) -> bool:
    spec = registry.spec(check_id)
    return spec is None or bool(spec.helps)


def _requirement_fixes(result: CircuitResult) -> list[str]:
    """The failing lines of the failing checks no size change helps, as their details word them."""
    out = []
    for r in result.checks:
        if r.status == FAIL and not _sized(r.id):
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
    kind = catalogue.cable_kind(c.cable.kind)
    ratings = catalogue.standard_ratings(c.device.kind)
    curves = [c.device.curve] + [k for k in ("B", "C", "D") if k != c.device.curve] \
        if c.device.kind in ("mcb", "rcbo") else [c.device.curve]
    sizes = kind.sizes(c.cable.method) if kind else [c.cable.csa_mm2]
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


def find(result: CircuitResult) -> dict | None:
    """The remedy for a failing circuit: {'text', 'changes', 'load_limit_kw'}; None if it passes."""
    failing = _failing(result)
    fixes = _requirement_fixes(result)
    if not failing:
        return {"changes": [], "load_limit_kw": None, "text": "; ".join(fixes)} if fixes else None
    c = result.circuit
    out: dict = {"changes": [], "load_limit_kw": None, "text": ""}
    unknown, cautions = _with(result, NOT_ASSESSED), _with(result, WARN)
    chosen = fallback = None
    tries = 0
    local = _fixable_here(result, failing)
    for cand in (_candidate_circuits(result, failing) if local else ()):
        trial, _ = circuit_checks.evaluate(cand, result.ctx, result.fed_demand_a, explain=False,
                                          fed_phases_a=result.fed_phases_a)
        # A remedy must not pass by leaving a check unassessed that was assessed before.
        if _failing(trial) or not _with(trial, NOT_ASSESSED) <= unknown:
            continue
        if _with(trial, WARN) <= cautions:
            chosen = (cand, trial)
            break
        if fallback is None:
            fallback = (cand, trial)
        tries += 1
        if tries > FALLBACK_TRIES:   # a clean remedy is not close: settle for the first that passes
            break
    chosen = chosen or fallback
    if chosen is not None:
        cand, trial = chosen
        out["changes"] = _describe(c, cand, trial)
        out["change"] = {
            "device": {"kind": cand.device.kind, "curve": cand.device.curve, "rating_a": cand.device.rating_a,
                       "breaking_ka": cand.device.breaking_ka},
            "cable": {"kind": cand.cable.kind, "csa_mm2": cand.cable.csa_mm2, "cpc_mm2": cand.cable.cpc_mm2,
                      "method": cand.cable.method},
            "rcd_ma": cand.rcd_ma,
        }
    text = []
    ctx = result.ctx
    vd = result.check("voltage-drop")
    if "voltage-drop" in failing and ctx.fed_via and ctx.vd_v is not None and vd.limit is not None \
            and ctx.vd_v >= 0.5 * vd.limit / 100.0 * ctx.supply.u0_v:
        text.append(f"{ctx.vd_v:.2f} V of the allowed {vd.limit / 100.0 * ctx.supply.u0_v:.2f} V is already "
                    f"dropped upstream: put the sub-main {ctx.fed_via} right first")
    if out["changes"]:
        text.append("smallest change that passes every check of the circuit: " + "; ".join(out["changes"]))
    elif not local:
        text.append("no change to this circuit alone can pass: the cause is upstream")
    else:
        text.append("no change of device rating, curve, cable size or RCD within reach passes every check: "
                    "the circuit needs redesign (shorter route, split load, other installation method)")
    if _load_limited(result, failing) and result.own_margin_a() is not None and c.loads \
            and not any(ld.kind == "socket-outlets" for ld in c.loads) and c.design_current_a is None:
        limit_a = result.ib_a + result.own_margin_a()
        kw = sum(ld.power_kw for ld in c.loads if ld.power_kw is not None)
        if kw > 0 and limit_a > 0 and all(ld.power_kw is not None for ld in c.loads):
            limit_kw = limit_a * kw / result.ib_a   # the same loads, scaled down to the limiting current
            out["load_limit_kw"] = round(limit_kw, 2)
            text.append(f"or keep the circuit as it is and limit its load to {limit_kw:.2f} kW")
    out["text"] = "; ".join(fixes + text)
    return out
