"""`rcd`: additional protection by a 30 mA RCD where the rules ask for it (BS 7671:2018
411.3.3 — socket-outlets, mobile equipment used outdoors —, 522.6.202/203 cables concealed in
walls, 701.411.3.3, 722.531.3.101; 411.3.4 advised, and 522.6.202 advised where it is not known
whether the cables are concealed)."""
from __future__ import annotations

from tracker.checks import rules
from tracker.checks.context import Facts
from tracker.checks.registry import RCD, CheckSpec, Outcome
from tracker.checks.result import FAIL, PASS, WARN, CheckResult
from tracker.checks.working import figure, record

ID = "rcd"


@record
class RcdWorking:
    rcd_ma: float | None = figure("mA", "smallest IΔn of an RCD protecting the circuit; null: none")


CHECK = CheckSpec(
    id=ID, rank=80, stage=70, name="RCD additional protection", unit="mA", compare="<=",
    record=RcdWorking, helps=frozenset({RCD}),
)


def run(f: Facts, done) -> Outcome:
    return Outcome(_verdict(f), RcdWorking(rcd_ma=f.rcd_ma))


def _verdict(f: Facts) -> CheckResult:
    required, advised = rules.rcd_requirements(f.circuit, f.ctx.supply.domestic)
    limit = rules.ADDITIONAL_PROTECTION_MA
    have = f.rcd_ma
    covered = have is not None and have <= limit
    what = f"{have:g} mA RCD" if have is not None else "no RCD"
    if required:
        why = "; ".join(required)
        if covered:
            return CheckResult(ID, PASS, have, limit, "mA", "<=", f"{what} gives the additional protection "
                                                                  f"required: {why}")
        return CheckResult(ID, FAIL, have, limit, "mA", "<=", f"{what}, but a {limit:g} mA RCD is required: {why}")
    if advised and not covered:
        return CheckResult(ID, WARN, have, limit, "mA", "<=", f"{what}; a {limit:g} mA RCD is advised: "
                                                              + "; ".join(advised))
    if f.distribution:
        return CheckResult(ID, PASS, have, limit, "mA", "<=", f"{what}; a distribution circuit needs no "
                                                              "additional protection (411.3.3 is for final circuits)")
    return CheckResult(ID, PASS, have, limit, "mA", "<=", f"{what}; no requirement for {limit:g} mA additional "
                                                          "protection applies to this circuit's loads")
