"""The deadline rules of tracker/data/deadlines.yaml, chosen by jurisdiction and tenure."""
from __future__ import annotations

import datetime
from dataclasses import dataclass
from functools import lru_cache

from tracker.catalogue import deadlines as _rules_file
from tracker.inspection.dates import COUNTINGS


@dataclass(frozen=True)
class Duty:
    name: str               # next-inspection | first-inspection | report-copy | remedial | confirmation
    source: str
    status: str             # seen | recalled
    period: dict | None = None
    by: datetime.date | None = None
    codes: tuple[str, ...] = ()
    shorter_by_report: bool = False
    to: str = ""
    soon_days: int = 0

    def cite(self) -> str:
        """The source as shown beside an item: unconfirmed wording is marked."""
        return self.source if self.status == "seen" else f"{self.source} [{self.status}]"


@dataclass(frozen=True)
class RuleSet:
    id: str
    title: str
    cite: str
    duties: dict            # name -> Duty


@lru_cache(maxsize=1)
def rulesets() -> dict[str, RuleSet]:
    raw = _rules_file()["rulesets"]
    out = {}
    for rid, r in raw.items():
        duties = {}
        for name, d in r["duties"].items():
            period = d.get("period")
            if period is not None and period["counting"] not in COUNTINGS:
                raise ValueError(f"deadlines.yaml {rid}.{name}: unknown counting {period['counting']!r}")
            duties[name] = Duty(name=name, source=d["source"], status=d["status"], period=period,
                                by=d.get("by"), codes=tuple(d.get("codes", ())),
                                shorter_by_report=bool(d.get("shorter_by_report", False)),
                                to=d.get("to", ""), soon_days=int(d.get("soon_days", 0)))
        out[rid] = RuleSet(rid, r["title"], r["cite"], duties)
    return out


@lru_cache(maxsize=None)
def ruleset_for(jurisdiction: str, tenure: str | None) -> RuleSet | None:
    """The rules for a site; None where no law sets inspection deadlines for it (owner-occupied,
    business premises, or a tenure not given): then only the inspector's next_due is followed."""
    if tenure is None:
        return None
    raw = _rules_file()["rulesets"]
    for rid, r in raw.items():
        if r["applies"]["jurisdiction"] == jurisdiction and tenure in r["applies"]["tenure"]:
            return rulesets()[rid]
    return None
