"""`design-current`: Ib ≤ In (BS 7671:2018 433.1.1(i))."""
from __future__ import annotations

from tracker.checks.context import Facts
from tracker.checks.result import CheckResult, not_assessed, verdict

ID = "design-current"


def run(f: Facts, w: dict) -> CheckResult:
    w["ib_a"], w["ib_source"] = f.ib_a, f.ib_how
    if f.ib_a is None:
        return not_assessed(ID, "A", "<=", f"{f.ib_how}: Ib unknown (list the loads or give design_current_a)",
                            limit=f.in_a)
    ok = f.ib_a <= f.in_a
    word = "≤" if ok else ">"
    detail = f"{f.ib_how}; Ib {f.ib_a:.2f} A {word} In {f.in_a:g} A ({f.label}) — 433.1.1(i)" if f.explain else ""
    return CheckResult(ID, verdict(ok), f.ib_a, f.in_a, "A", "<=", detail, ib_limit_a=f.in_a)
