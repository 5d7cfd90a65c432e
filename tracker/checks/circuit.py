"""All checks of one circuit, given the conditions at its board."""
from __future__ import annotations

from typing import NamedTuple

from tracker.checks import capacity, registry
from tracker.checks.context import BoardContext, Facts, build_facts
from tracker.checks.readings import counted
from tracker.checks.registry import Outcome
from tracker.checks.result import CheckResult, worst
from tracker.checks.working import NO_WORKING, CircuitWorking
from tracker.model import Circuit


class CircuitResult(NamedTuple):
    """Every check of one circuit, with what they were computed from (an immutable record)."""

    ref: str
    circuit: Circuit
    ctx: BoardContext
    fed_demand_a: float | None
    checks: tuple[CheckResult, ...]
    status: str
    ib_a: float | None
    in_a: float
    iz_a: float | None
    basis: str
    working: CircuitWorking     # the checks' typed records (empty where evaluated without text)
    vd_end_v: float | None      # volts dropped from the origin to the far end (sub-mains: at the fed board)
    v_per_a: float | None       # this circuit's own volts per ampere
    vd_slack_v: float | None = None   # volts left before the voltage-drop limit (for headroom upstream)
    readings: object = None           # the latest measurements the reading checks judged (Readings)
    # Three-phase circuits: the fed board's demand per line (sub-mains), the current in each line,
    # and the volts to neutral per line at the far end.
    fed_phases_a: tuple | None = None
    ib_phases_a: tuple | None = None
    vd_phase_end_v: tuple | None = None
    explained: bool = True            # False: verdicts and figures only (`site.explain_circuit` words it)

    @property
    def site_id(self) -> str:
        return self.ctx.site_id

    @property
    def board_id(self) -> str:
        return self.circuit.board

    def check(self, check_id: str) -> CheckResult | None:
        for r in self.checks:
            if r.id == check_id:
                return r
        return None

    def own_margin_a(self) -> float | None:
        """Extra current the circuit itself can take before an Ib-dependent check fails."""
        if self.ib_a is None:
            return None
        limits = []
        for r in self.checks:
            spec = registry.spec(r.id)
            if spec is not None and spec.load_dependent(self.basis):
                if r.ib_limit_a is None:
                    return None
                limits.append(r.ib_limit_a)
        return min(limits) - self.ib_a if limits else None


def evaluate(circuit: Circuit, ctx: BoardContext, fed_demand_a: float | None = None,
             explain: bool = True, readings=None,
             fed_phases_a: tuple | None = None) -> tuple[CircuitResult, Facts]:
    """Every check of the circuit that applies, in the registry's order; with explain=False the
    checks' deferred texts (`Outcome.words`) are not built and the working records are not kept
    (faster, for searches and for a state that only needs the verdicts and figures)."""
    f = build_facts(circuit, ctx, fed_demand_a, readings, fed_phases_a)
    plan = registry.plan(circuit)
    done: dict[str, Outcome] = {}
    for spec in plan.run:
        done[spec.id] = spec.run(f, done)
    if explain:
        checks = tuple(done[spec.id].worded() for spec in plan.listed)
    else:
        checks = tuple(done[spec.id].result for spec in plan.listed)
    capacity_rec = _record(done, "capacity")
    vd_rec = _record(done, "voltage-drop")
    result = CircuitResult(
        ref=f"{ctx.site_id}/{circuit.board}/{circuit.id}", circuit=circuit, ctx=ctx, fed_demand_a=fed_demand_a,
        checks=checks, status=worst(r.status for r in counted(checks)), ib_a=f.ib_a, in_a=f.in_a,
        iz_a=capacity_rec.iz_a if capacity_rec else None,
        basis=capacity_rec.basis if capacity_rec else capacity.DEVICE,
        working=CircuitWorking(tuple(o.record for o in done.values() if o.record is not None)) if explain
        else NO_WORKING,
        vd_end_v=vd_rec.end_v if vd_rec else None, v_per_a=vd_rec.per_a_v if vd_rec else None,
        vd_slack_v=vd_rec.vd_slack_v if vd_rec else None, readings=readings,
        fed_phases_a=fed_phases_a, ib_phases_a=f.ib_phases_a,
        vd_phase_end_v=vd_rec.end_phase_v if vd_rec else None, explained=explain,
    )
    return result, f


def any_result(circuit: Circuit, ctx: BoardContext, fed_demand_a: float | None, stop) -> bool:
    """Whether `stop(check_result)` holds for any check of the circuit, as `evaluate(circuit, ctx,
    fed_demand_a, explain=False)` would give them: the checks run in the same order on the same
    facts, and the run ends at the first that stops it (for a search that only needs to know a
    candidate is out)."""
    f = build_facts(circuit, ctx, fed_demand_a, None, None)
    done: dict[str, Outcome] = {}
    for spec in registry.plan(circuit).run:
        out = done[spec.id] = spec.run(f, done)
        if stop(out.result):
            return True
    return False


def _record(done: dict[str, Outcome], check_id: str):
    found = done.get(check_id)
    return found.record if found is not None else None
