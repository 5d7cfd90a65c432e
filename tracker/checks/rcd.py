"""`rcd`: additional protection by a 30 mA RCD where the rules ask for it (BS 7671:2018
411.3.3 — socket-outlets, mobile equipment used outdoors —, 522.6.202/203 cables concealed in
walls, 701.411.3.3, 722.531.3.101; 411.3.4 advised, and 522.6.202 advised where it is not known
whether the cables are concealed). Only an RCD without intended
delay counts (415.1.1: 40 ms at 5 IΔn; a type S RCD is slower by design). A type AC RCD on loads
that may draw DC residual current draws a caution (531.3.3 of BS 7671:2018+A2)."""
from __future__ import annotations

from tracker import catalogue
from tracker.checks import rules
from tracker.checks.context import Facts
from tracker.checks.registry import RCD, CheckSpec, Outcome
from tracker.checks.result import FAIL, PASS, WARN, CheckResult, words
from tracker.checks.working import figure, record

ID = "rcd"

# Loads with electronics that may put DC into a residual current: the 531.3.3 limit on type AC
# (fixed equipment known to draw no DC component) cannot be shown for them. Common practice.
DC_PRONE_KINDS = frozenset({"socket-outlets", "ev-charger", "heat-pump"})


@record
class RcdWorking:
    rcd_ma: float | None = figure("mA", "smallest IΔn of an RCD protecting the circuit; null: none")


CHECK = CheckSpec(
    id=ID, rank=80, stage=70, name="RCD additional protection", unit="mA", compare="<=",
    record=RcdWorking, helps=frozenset({RCD}),
)


def run(f: Facts, done) -> Outcome:
    # The verdict's text costs nothing beside it (it is built with the verdict): it is given only
    # where text is shown, and a state kept without text does not hold it.
    result = _verdict(f)
    return Outcome(result.with_detail(""), RcdWorking(rcd_ma=f.rcd_ma), words(str, result.detail))


def _additional(f: Facts):
    """The RCD giving additional protection: the first of IΔn ≤ 30 mA without intended delay."""
    for rcd in f.rcds:
        if rcd.idn_ma <= rules.ADDITIONAL_PROTECTION_MA and not rcd.delayed:
            return rcd
    return None


def type_ac_caution(f: Facts) -> str:
    kinds = sorted({ld.kind for ld in f.circuit.loads} & DC_PRONE_KINDS)
    if not kinds:
        return ""
    ac = [r for r in f.rcds if r.data.type == "AC"]
    if not ac:
        return ""
    rule = catalogue.device_info("rcd")["type_ac_rule"]
    return (f"the {ac[0].idn_ma:g} mA RCD ({ac[0].at}) is type AC, which {rule} limits to fixed equipment "
            f"known to draw no DC residual current; {', '.join(kinds)} may: type A or better is needed")


def _verdict(f: Facts) -> CheckResult:
    required, advised = rules.rcd_requirements(f.circuit, f.ctx.supply.domestic)
    limit = rules.ADDITIONAL_PROTECTION_MA
    have = f.rcd_ma
    covered = _additional(f) is not None
    what = f"{have:g} mA RCD" if have is not None else "no RCD"
    if have is not None and not covered and have <= limit:
        what += " (time-delayed, type S: no means of additional protection, 415.1.1)"
    caution = type_ac_caution(f)
    if required:
        why = "; ".join(required)
        if covered and caution:
            return CheckResult(ID, WARN, have, limit, "mA", "<=", f"{caution} — required: {why}")
        if covered:
            return CheckResult(ID, PASS, have, limit, "mA", "<=", f"{what} gives the additional protection "
                                                                  f"required: {why}")
        return CheckResult(ID, FAIL, have, limit, "mA", "<=", f"{what}, but a {limit:g} mA RCD is required: {why}")
    if advised and not covered:
        return CheckResult(ID, WARN, have, limit, "mA", "<=", f"{what}; a {limit:g} mA RCD is advised: "
                                                              + "; ".join(advised))
    if caution:
        return CheckResult(ID, WARN, have, limit, "mA", "<=", caution)
    if f.distribution:
        return CheckResult(ID, PASS, have, limit, "mA", "<=", f"{what}; a distribution circuit needs no "
                                                              "additional protection (411.3.3 is for final circuits)")
    return CheckResult(ID, PASS, have, limit, "mA", "<=", f"{what}; no requirement for {limit:g} mA additional "
                                                          "protection applies to this circuit's loads")
