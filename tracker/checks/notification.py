"""Telling the network operator: the origin's state for generation (EREC G98/G99) and for EV
charge points and heat pumps (the operators' connect-and-notify process), from the maximum demand
before and after a change and the sources. Thresholds: tracker/data/connection.yaml; the rules:
tracker.engine.connection.

A site as it stands (`origin_state`) says which route each device it holds needed and, where the
site file records when it was connected, by when the operator must hear of it (the `due` items).
A proposed change (`change_outcome`) says whether it may be connected first and notified after,
with the deadline, or needs an application before connecting.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from datetime import date

from tracker import catalogue
from tracker.checks.design_current import load_current_a
from tracker.engine import connection as rule
from tracker.model import Site, load_ref, source_ref

GENERATION, DEMAND = "generation", "demand"


@dataclass(frozen=True, slots=True)
class Device:
    """Something the network operator must hear of: a source, an EV charge point, a heat pump."""

    ref: str
    what: str
    kind: str                    # generation | demand
    current_a: float
    connected_on: str | None = None
    notified_on: str | None = None


@dataclass(frozen=True, slots=True)
class Outcome:
    route: str                                  # none | notify-after | apply-before
    reasons: tuple[str, ...]                    # why an application is needed first
    generation_a: float                         # aggregate rating of generation and storage, A per phase
    generation_route: str | None                # route of the generation (None: there is none)
    demand_a: float | None                      # maximum demand at the origin, A
    demand_before_a: float | None
    capacity_a: float | None                    # the supplier's fuse
    demand_route: str | None                    # route of the EV charge points and heat pumps
    devices: tuple[Device, ...] = field(default=())
    notify_days: int = 28
    as_built: bool = False                      # the site as it stands (else a proposed change)

    def device_route(self, d: Device) -> str:
        return (self.generation_route if d.kind == GENERATION else self.demand_route) or rule.NOTHING

    def deadline(self, d: Device) -> str | None:
        """The last day for the operator to hear of `d` (ISO), where its connection date is known."""
        if d.connected_on is None:
            return None
        on = date.fromisoformat(d.connected_on)
        if self.device_route(d) == rule.APPLY_BEFORE:
            return on.isoformat()                 # the application was due before connecting
        return rule.deadline(on, self.notify_days).isoformat()

    def detail(self) -> str:
        return describe(self)

    def as_json(self) -> dict:
        return {
            "route": self.route, "reasons": list(self.reasons),
            "generation_a": round(self.generation_a, 2), "generation_route": self.generation_route,
            "demand_a": None if self.demand_a is None else round(self.demand_a, 2),
            "demand_before_a": None if self.demand_before_a is None else round(self.demand_before_a, 2),
            "capacity_a": self.capacity_a, "demand_route": self.demand_route,
            "devices": [{"ref": d.ref, "what": d.what, "route": self.device_route(d),
                         "connected_on": d.connected_on, "notified_on": d.notified_on,
                         "deadline": self.deadline(d)} for d in self.devices],
            "detail": self.detail(),
        }


def devices(site: Site) -> list[Device]:
    kinds = set(catalogue.connection()["demand"]["kinds"])
    out = []
    for c in site.circuits:
        for s in c.sources:
            label = "PV inverter" if s.kind == "pv" else "battery inverter"
            out.append(Device(source_ref(site.id, c, s), f"{label} {s.id} ({s.inverter_a:g} A)", GENERATION,
                              s.inverter_a, s.connected_on, s.notified_on))
        for ld in c.loads:
            if ld.kind in kinds:
                label = "EV charge point" if ld.kind == "ev-charger" else "heat pump"
                amps, _ = load_current_a(ld, site.supply.u0_v)
                out.append(Device(load_ref(site.id, c, ld), f"{label} {ld.id} ({amps:g} A)", DEMAND, amps,
                                  ld.connected_on, ld.notified_on))
    return out


def _routes(site: Site, demand_a: float | None, gen_devices, demand_devices, demand_grew: bool):
    data = catalogue.connection()
    small = data["generation"]["small_limit_a_per_phase"][0]
    gen_a = rule.aggregate_current_a(d.current_a for d in devices(site) if d.kind == GENERATION)
    gen_route = rule.generation_route(gen_a, small) if gen_devices else None
    reasons = []
    if gen_route == rule.APPLY_BEFORE:
        reasons.append(f"generation {gen_a:g} A per phase is above the {small:g} A of "
                       f"{data['generation']['small_source']}: {data['generation']['large_source']}")
    cap = site.supply.service_fuse_a
    demand_route = None
    if demand_devices or demand_grew:
        if demand_a is None:
            why = ["the maximum demand at the origin is not known"]
        else:
            why = rule.demand_reasons(demand_a, cap, site.supply.looped, site.premises == "domestic",
                                      data["demand"]["residential_limit_a"][0])
            if not demand_devices:
                # other new demand: only the supplier's fuse is in question
                why = [reason for reason in why if "supplier's fuse" in reason and "exceed" in reason]
        demand_route = rule.APPLY_BEFORE if why else (rule.NOTIFY_AFTER if demand_devices else None)
        reasons += why
    if rule.APPLY_BEFORE in (gen_route, demand_route):
        route = rule.APPLY_BEFORE
    elif rule.NOTIFY_AFTER in (gen_route, demand_route):
        route = rule.NOTIFY_AFTER
    else:
        route = rule.NOTHING
    return route, tuple(reasons), gen_a, gen_route, demand_route


def origin_state(site: Site, demand_a: float | None) -> Outcome:
    """The site as it stands: the routes its sources, charge points and heat pumps needed."""
    held = devices(site)
    gen = [d for d in held if d.kind == GENERATION]
    dem = [d for d in held if d.kind == DEMAND]
    route, reasons, gen_a, gen_route, dem_route = _routes(site, demand_a, gen, dem, False)
    return Outcome(route, reasons, gen_a, gen_route, demand_a, None, site.supply.service_fuse_a, dem_route,
                   tuple(held), int(catalogue.connection()["generation"]["small_notify_days"][0]), as_built=True)


def change_outcome(before: Site, after: Site, demand_before_a: float | None,
                   demand_after_a: float | None) -> Outcome:
    """A proposed change: what it adds (devices new or larger than before) decides the route."""
    old = {d.ref: d for d in devices(before)}
    new = [d for d in devices(after) if d.ref not in old or d.current_a > old[d.ref].current_a]
    gen = [d for d in new if d.kind == GENERATION]
    dem = [d for d in new if d.kind == DEMAND]
    grew = (demand_after_a is not None and demand_before_a is not None and demand_after_a > demand_before_a + 1e-9)
    route, reasons, gen_a, gen_route, dem_route = _routes(after, demand_after_a, gen, dem, grew)
    return Outcome(route, reasons, gen_a, gen_route, demand_after_a, demand_before_a,
                   after.supply.service_fuse_a, dem_route, tuple(new),
                   int(catalogue.connection()["generation"]["small_notify_days"][0]))


def describe(o: Outcome) -> str:
    data = catalogue.connection()
    days = o.notify_days
    if o.route == rule.NOTHING:
        return "nothing for the network operator"
    parts = []
    if o.generation_route == rule.NOTIFY_AFTER:
        parts.append(f"generation {o.generation_a:g} A per phase ≤ {data['generation']['small_limit_a_per_phase'][0]:g} A: "
                     f"connect, then notify within {days} days of commissioning ({data['generation']['small_source']})")
    if o.demand_route == rule.NOTIFY_AFTER:
        md = f"maximum demand {o.demand_a:.1f} A" if o.demand_a is not None else "maximum demand"
        cap = f" ≤ supplier's fuse {o.capacity_a:g} A" if o.capacity_a is not None else ""
        parts.append(f"EV charge point / heat pump with {md}{cap}: connect, then notify within "
                     f"{data['demand']['notify_days'][0]:g} days ({data['demand']['source']})")
    if o.route == rule.APPLY_BEFORE:
        lead = ("these needed an application to the network operator before connecting" if o.as_built
                else "apply to the network operator before connecting")
        parts.insert(0, f"{lead}: " + "; ".join(o.reasons))
    if o.as_built:
        told = [f"{d.what} told {d.notified_on}" for d in o.devices if d.notified_on]
        untold = [d.what for d in o.devices if not d.notified_on]
        if told:
            parts.append("recorded: " + ", ".join(told))
        if untold:
            parts.append("not recorded as told (notified_on): " + ", ".join(untold))
    return "; ".join(parts)


SOON_DAYS = 14   # a notification deadline within this many days is due soon (common practice)


def deadlines(site: Site, outcome: Outcome) -> list[dict]:
    """One entry per device whose connection date is recorded: {what, due, source, ref,
    notified_on} — the `due` command's items before their status on a given day."""
    data = catalogue.connection()
    out = []
    for d in outcome.devices:
        deadline = outcome.deadline(d)
        if deadline is None:
            continue
        route = outcome.device_route(d)
        if d.kind == GENERATION:
            source = data["generation"]["small_source" if route == rule.NOTIFY_AFTER else "large_source"]
        else:
            source = data["demand"]["source"]
        if route == rule.APPLY_BEFORE:
            what = f"apply to the network operator for the {d.what} (needed before connecting)"
        else:
            what = f"notify the network operator of the {d.what}, connected {d.connected_on}"
        out.append({"what": what, "due": deadline, "source": source, "ref": d.ref, "notified_on": d.notified_on})
    return out


def site_due(site: Site, outcome: Outcome | None = None) -> list[dict]:
    """`deadlines` of a site as it stands. `outcome`: the site's `origin_state` where its checks
    have been run already (`SiteResult.notification`); without it the site is evaluated, and only
    where a device has a connection date."""
    if not any(d.connected_on for d in devices(site)):
        return []
    if outcome is None:
        from tracker.checks.site import evaluate_site

        outcome = evaluate_site(site, explain=False).notification
    return deadlines(site, outcome)


def due_items(site: Site, outcome: Outcome, on: date, soon_days: int = SOON_DAYS) -> list[dict]:
    """`deadlines` with their status on the day `on` (ok | due-soon | overdue | done), in the
    `due` command's item shape {site, what, due, status, source, ref} (SPEC §7)."""
    items = []
    for x in deadlines(site, outcome):
        due = date.fromisoformat(x["due"])
        if x["notified_on"] is not None and date.fromisoformat(x["notified_on"]) <= on:
            status = "done"
        elif due < on:
            status = "overdue"
        elif (due - on).days <= soon_days:
            status = "due-soon"
        else:
            status = "ok"
        items.append({"site": site.id, "what": x["what"], "due": x["due"], "status": status,
                      "source": x["source"], "ref": x["ref"]})
    return items
