"""Every deadline of a site on a given day: the next inspection, a first inspection where none is
recorded, the copy of the report to the tenants, the remedial work of each C1/C2/FI observation
and the written confirmation of completed work — from the rules for the site's jurisdiction and
tenure (tracker/data/deadlines.yaml), with the rule cited beside each."""
from __future__ import annotations

import datetime
from dataclasses import dataclass

from tracker.inspection.dates import days_beginning_with, period_end
from tracker.inspection.rules import Duty, ruleset_for
from tracker.model import Inspection, Observation, Site, inspection_ref

OK, DUE_SOON, OVERDUE, DONE = "ok", "due-soon", "overdue", "done"
STATUSES = (OK, DUE_SOON, OVERDUE, DONE)
SCHEMA = "izwatch.due/1"
# Warning ahead of an inspector's own date, where no rule gives one (common practice: time to book).
NEXT_DUE_SOON_DAYS = 90
INSPECTOR_SOURCE = "the inspector's recommended date (next_due in the site file)"


@dataclass(frozen=True, slots=True)
class DueItem:
    site: str
    what: str
    due: datetime.date
    status: str
    source: str
    ref: str
    done_on: datetime.date | None = None    # when the duty was met (status done)
    duty: str = ""                          # next-inspection | first-inspection | report-copy | remedial | confirmation
    about: tuple = ()                       # (inspection key,) or (inspection key, observation number from 1)

    def as_json(self) -> dict:
        return {"site": self.site, "what": self.what, "due": self.due.isoformat(), "status": self.status,
                "source": self.source, "ref": self.ref}


def status_on(due: datetime.date, on: datetime.date, soon_days: int, done_on: datetime.date | None) -> str:
    """done once met; overdue the day after the last day; due-soon within `soon_days` of it."""
    if done_on is not None and done_on <= on:
        return DONE
    if on > due:
        return OVERDUE
    if (due - on).days <= soon_days:
        return DUE_SOON
    return OK


def _short(text: str, limit: int = 60) -> str:
    return text if len(text) <= limit else text[:limit - 1].rstrip() + "…"


def _observation_ref(site: Site, x: Inspection, o: Observation) -> str:
    return f"{site.id}/{o.ref}" if o.ref else inspection_ref(site.id, x)


def site_items(site: Site, on: datetime.date, origin=None) -> list[DueItem]:
    """The site's deadlines on the day `on`, soonest first. `origin`: the site's network-operator
    outcome where its checks have been run already (`SiteResult.notification`: the site is then
    not evaluated again)."""
    rules = ruleset_for(site.jurisdiction, site.tenure)
    duties = rules.duties if rules is not None else {}
    items = _next_inspection(site, on, duties)
    reports = [x for x in site.inspections if x.restarts_interval and x.date <= on]
    if reports and "report-copy" in duties:
        items.append(_report_copy(site, reports[-1], on, duties["report-copy"]))
    for x in site.inspections:
        if x.date > on:
            continue
        for n, o in enumerate(x.observations, 1):
            items.extend(_observation_items(site, x, n, o, on, duties))
    items.extend(_network_operator_items(site, on, origin))
    items.sort(key=lambda i: (i.due, i.what))
    return items


def _network_operator_items(site: Site, on: datetime.date, origin=None) -> list[DueItem]:
    """Telling the network operator of a source, charge point or heat pump whose connection date is
    recorded (tracker/checks/notification.py: EREC G98/G99, the operators' connect-and-notify)."""
    from tracker.checks import notification

    out = []
    for x in notification.site_due(site, origin):
        done = datetime.date.fromisoformat(x["notified_on"]) if x["notified_on"] else None
        due = datetime.date.fromisoformat(x["due"])
        out.append(DueItem(site.id, x["what"], due, status_on(due, on, notification.SOON_DAYS, done),
                           x["source"], x["ref"], done))
    return out


def _next_inspection(site: Site, on: datetime.date, duties: dict) -> list[DueItem]:
    done = [x for x in site.inspections if x.restarts_interval and x.date <= on]
    if not done:
        first = duties.get("first-inspection")
        if first is None:
            return []
        return [DueItem(site.id, "first inspection and test (none recorded)", first.by,
                        status_on(first.by, on, NEXT_DUE_SOON_DAYS, None), first.cite(), site.id,
                        duty="first-inspection")]
    last = done[-1]
    rule: Duty | None = duties.get("next-inspection")
    soon = rule.soon_days if rule is not None else NEXT_DUE_SOON_DAYS
    rule_due = period_end(last.date, rule.period) if rule is not None else None
    if rule_due is None and last.next_due is None:
        return []
    if last.next_due is not None and (rule_due is None or last.next_due < rule_due):
        # the stricter of the rule and the inspector's own date
        due = last.next_due
        source = INSPECTOR_SOURCE + (f"; the rule alone: {rule_due.isoformat()} ({rule.cite()})" if rule else "")
    else:
        due, source = rule_due, rule.cite()
    return [DueItem(site.id, f"next inspection and test (last {last.date.isoformat()})", due,
                    status_on(due, on, soon, None), source, site.id, duty="next-inspection", about=(last.key,))]


def _report_copy(site: Site, x: Inspection, on: datetime.date, duty: Duty) -> DueItem:
    due = period_end(x.date, duty.period)
    return DueItem(site.id, f"copy of the {x.date.isoformat()} report to the tenants", due,
                   status_on(due, on, duty.soon_days, x.copy_to_tenant_on), duty.cite(),
                   inspection_ref(site.id, x), x.copy_to_tenant_on, "report-copy", (x.key,))


def remedial_due(x: Inspection, o: Observation, duty: Duty) -> datetime.date:
    """The rule's period from the inspection, or the shorter period the report sets for it."""
    due = period_end(x.date, duty.period)
    if duty.shorter_by_report and o.within_days is not None:
        due = min(due, days_beginning_with(x.date, o.within_days))
    return due


def _observation_items(site: Site, x: Inspection, n: int, o: Observation, on: datetime.date,
                       duties: dict) -> list[DueItem]:
    out = []
    label = f"{o.code} {_short(o.text)}" + (f" ({o.ref})" if o.ref else "")
    ref = _observation_ref(site, x, o)
    remedial = duties.get("remedial")
    if remedial is not None and o.code in remedial.codes:
        due = remedial_due(x, o, remedial)
        late = o.done_on is not None and o.done_on > due
        what = f"remedial work: {label}" + (f" — done late, {o.done_on.isoformat()}" if late else "")
        out.append(DueItem(site.id, what, due, status_on(due, on, remedial.soon_days, o.done_on),
                           remedial.cite(), ref, o.done_on, "remedial", (x.key, n)))
    confirm = duties.get("confirmation")
    if confirm is not None and o.code in ("C1", "C2", "FI") and o.done_on is not None and o.done_on <= on:
        due = period_end(o.done_on, confirm.period)
        out.append(DueItem(site.id, f"written confirmation of the work to {confirm.to}: {label}", due,
                           status_on(due, on, confirm.soon_days, o.confirmed_on), confirm.cite(), ref,
                           o.confirmed_on, "confirmation", (x.key, n)))
    return out


def document(items: list[DueItem]) -> dict:
    """The `izwatch due --json` document (SPEC §7; schema/due-output.schema.json)."""
    return {"schema": SCHEMA, "items": [i.as_json() for i in items]}
