"""`breaking-capacity`: the device can break the prospective fault current at its board
(BS 7671:2018 434.5.1), or the board assembly's conditional rating covers it (536.4.202)."""
from __future__ import annotations

from tracker.checks.context import Facts
from tracker.checks.registry import BREAKING, CheckSpec, Outcome
from tracker.checks.result import CheckResult, not_assessed, verdict, words
from tracker.checks.working import figure, record

ID = "breaking-capacity"
# Breaking capacities a remedy may ask of a circuit's device, smallest first (the usual ratings
# of BS EN 60898 / 60947-2 devices: common practice).
BREAKING_STEPS_KA = (6.0, 10.0, 16.0, 25.0, 36.0, 50.0, 80.0)


@record
class BreakingCapacityWorking:
    pfc_ka: float | None = figure("kA", "prospective fault current at the board")


def _beyond_any_device(result) -> bool:
    return fault_ka(result.ctx, result.circuit) > BREAKING_STEPS_KA[-1]


def fault_ka(ctx, circuit) -> float:
    """The fault current the circuit's device must break: the symmetrical three-phase value for a
    three-phase circuit, the line-neutral value (or its bound) for a single-phase one."""
    if circuit.three_phase and ctx.pfc3_ka is not None:
        return ctx.pfc3_ka
    return ctx.pfc_ka


CHECK = CheckSpec(
    id=ID, rank=70, stage=40, name="breaking capacity", unit="kA", compare="<=", gauge="PFC / rating",
    record=BreakingCapacityWorking, helps=frozenset({BREAKING}), cause_upstream=_beyond_any_device,
)


def run(f: Facts, done) -> Outcome:
    result, text = _verdict(f)
    return Outcome(result, BreakingCapacityWorking(pfc_ka=fault_ka(f.ctx, f.circuit)), text)


def _where(f: Facts, pfc: float) -> tuple[str, bool]:
    """(where the fault current comes from, in words; whether it is only an upper bound)."""
    ctx, sup = f.ctx, f.ctx.supply
    if not sup.three_phase:
        if ctx.fed_via:
            return f"{pfc:.2f} kA at {ctx.board_id} (reduced through {ctx.fed_via.split('/', 1)[1]})", False
        if sup.pfc_declared:
            return f"{pfc:g} kA at the origin (pfc_ka)", False
        return f"{pfc:g} kA assumed at the origin (no pfc_ka: the usual maximum declared for a public supply)", False
    assumed = sup.pfc_ka is None and not sup.pfc_declared
    through = f" at {ctx.board_id}, reduced through {ctx.fed_via.split('/', 1)[1]}" if ctx.fed_via else ""
    if f.circuit.three_phase and ctx.pfc3_ka is not None:
        return f"{pfc:.2f} kA three-phase{through} (origin: {sup.pfc3_how})", assumed
    if ctx.pfc_ln_bound:
        return (f"{pfc:.2f} kA{through}, the three-phase value taken as an upper bound of the line-neutral fault "
                f"current (origin: {sup.pfc3_how}; no pfc_line_neutral_ka)"), True
    return f"{pfc:.2f} kA line-neutral{through} (origin: pfc_line_neutral_ka)", False


def _verdict(f: Facts):
    """(result, its deferred text or None)."""
    ctx, dev = f.ctx, f.circuit.device
    pfc = fault_ka(ctx, f.circuit)
    where, bound = _where(f, pfc)
    device_ka, device_how = dev.breaking_ka, "(breaking_ka)"
    if device_ka is None:
        default = (f.device_info or {}).get("breaking_ka")
        if default is not None:
            device_ka, device_how = float(default[0]), f"(usual for a {f.label}, {default[1]}; give breaking_ka if marked)"
    cond = ctx.conditional_rating_ka
    if device_ka is None and cond is None:
        return not_assessed(ID, "kA", "<=", f"prospective fault current {where}; the {f.label}'s breaking "
                                            "capacity is not given (device.breaking_ka)", value=pfc), None
    if cond is not None and (device_ka is None or cond > device_ka):
        limit, limit_how = cond, f"{cond:g} kA rated conditional short-circuit current of board {ctx.board_id} (536.4.202)"
    else:
        limit, limit_how = device_ka, f"{device_ka:g} kA breaking capacity of the {f.label} {device_how}"
    ok = pfc <= limit
    if not ok and bound:
        # an upper bound that fails settles nothing (a false fail costs as much as a false pass)
        settle = ("measure the line-neutral fault current at the origin (supply.pfc_line_neutral_ka)"
                  if not f.circuit.three_phase else "give the three-phase fault current at the origin (supply.pfc_ka)")
        return not_assessed(ID, "kA", "<=", f"PFC {where} > {limit_how}, but that figure is only an upper bound: "
                                            f"{settle}", value=pfc, limit=limit), None
    return CheckResult(ID, verdict(ok), pfc, limit, "kA", "<=", ""), words(_text, where, ok, limit_how)


def _text(where: str, ok: bool, limit_how: str) -> str:
    return f"PFC {where} {'≤' if ok else '>'} {limit_how} — 434.5.1"
