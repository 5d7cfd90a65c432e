"""All checks of one circuit, given the conditions at its board."""
from __future__ import annotations

from typing import NamedTuple

from tracker.checks import (breaking_capacity, capacity, cpc_adiabatic, design_current, fault_loop,
                            line_adiabatic, rcd, voltage_drop)
from tracker.checks.context import BoardContext, Facts, build_facts
from tracker.checks.result import CheckResult, worst
from tracker.model import Circuit

_NO_WORKING: dict = {}   # shared, never written: results kept without their working


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
    working: dict
    vd_end_v: float | None      # volts dropped from the origin to the far end (sub-mains: at the fed board)
    v_per_a: float | None       # this circuit's own volts per ampere
    vd_slack_v: float | None = None   # volts left before the voltage-drop limit (for headroom upstream)

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
            if r.id in ("design-current", "voltage-drop") or (r.id == "capacity" and self.basis == capacity.DESIGN):
                if r.ib_limit_a is None:
                    return None
                limits.append(r.ib_limit_a)
        return min(limits) - self.ib_a if limits else None


def evaluate(circuit: Circuit, ctx: BoardContext, fed_demand_a: float | None = None,
             explain: bool = True) -> tuple[CircuitResult, Facts]:
    """Every check of the circuit; with explain=False the details are left empty (faster, for
    searches that only need the verdicts and figures)."""
    f = build_facts(circuit, ctx, fed_demand_a, explain)
    w: dict = {}
    dc = design_current.run(f, w)
    fl = fault_loop.run(f, w)
    cpc = cpc_adiabatic.run(f, w)
    bc = breaking_capacity.run(f, w)
    if circuit.overload_exempt:
        # sized on Ib: the capacity verdict rests on both adiabatic checks (433.3.1(ii))
        line = line_adiabatic.run(f, w)
        cap, basis, iz = capacity.run(f, w, (cpc, line))
    else:
        # protected against overload: 435.1 may deem the short-circuit protection (line-adiabatic)
        cap, basis, iz = capacity.run(f, w, (cpc, None))
        line = line_adiabatic.run(f, w, cap, bc)
    vd, vd_end, per_a = voltage_drop.run(f, w)
    rc = rcd.run(f, w)
    checks = (dc, cap, vd, fl, cpc, line, bc, rc)
    if not explain:
        # verdicts and figures only: the text (and the working) are produced when a circuit is shown
        checks = tuple(c if not c.detail else CheckResult(c.id, c.status, c.value, c.limit, c.unit, c.compare,
                                                          "", c.ib_limit_a) for c in checks)
    result = CircuitResult(
        ref=f"{ctx.site_id}/{circuit.board}/{circuit.id}", circuit=circuit, ctx=ctx, fed_demand_a=fed_demand_a,
        checks=checks, status=worst(r.status for r in checks), ib_a=f.ib_a, in_a=f.in_a, iz_a=iz,
        basis=basis, working=w if explain else _NO_WORKING, vd_end_v=vd_end, v_per_a=per_a,
        vd_slack_v=w.get("vd_slack_v"),
    )
    return result, f
