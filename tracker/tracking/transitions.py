"""Comparing the results of two states: events (newly-failing, cleared, worse) and the results
that changed."""
from __future__ import annotations

from tracker.checks.result import FAIL, CheckResult
from tracker.checks.site import SiteResult
from tracker.events import CLEARED, INPUT_ERROR, NEWLY_FAILING, TRANSITIONS, WORSE, Event, check_event  # noqa: F401

_EPS = 1e-9


def checks_by_ref(sr: SiteResult | None) -> dict[str, tuple[str, tuple[CheckResult, ...]]]:
    """ref -> (status, checks) for every circuit, board and the origin of a site."""
    if sr is None:
        return {}
    out = {ref: (r.status, r.checks) for ref, r in sr.circuits.items()}
    out.update({ref: (b.status, (b.check,)) for ref, b in sr.boards.items()})
    if sr.supply_check is not None:
        out[sr.site.id] = (sr.supply_check.status, (sr.supply_check,))
    return out


def transition(old: CheckResult | None, new: CheckResult) -> str | None:
    was = old is not None and old.status == FAIL
    now = new.status == FAIL
    if now and not was:
        return NEWLY_FAILING
    if was and not now:
        return CLEARED
    if was and now:
        om, nm = old.margin(), new.margin()
        if om is not None and nm is not None and nm < om - _EPS:
            return WORSE
    return None


def compare(old: SiteResult | None, new: SiteResult | None) -> tuple[list[Event], list[tuple]]:
    """(events, changed results as (ref, status, {check: [status, value, limit, unit]}))."""
    before, after = checks_by_ref(old), checks_by_ref(new)
    events, changed = [], []
    for ref, (status, checks) in after.items():
        prior = {c.id: c for c in before.get(ref, (None, ()))[1]}
        for c in checks:
            kind = transition(prior.get(c.id), c)
            if kind:
                events.append(check_event(ref, c, kind))
        if ref not in before or _snapshot(checks) != _snapshot(before[ref][1]):
            changed.append((ref, status, _snapshot(checks)))
    for ref, (_, checks) in before.items():
        if ref not in after:
            for c in checks:
                if c.status == FAIL:   # a failing element removed: its problem is gone with it
                    events.append(check_event(ref, c, CLEARED, detail="removed from the site files"))
    return events, changed


def _snapshot(checks) -> dict:
    return {c.id: [c.status, c.value, c.limit, c.unit] for c in checks}
