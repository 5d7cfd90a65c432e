"""Telling the network operator (tracker/data/connection.yaml): EREC G98/G99 for generation, the
operators' connect-and-notify process for EV charge points and heat pumps."""
from __future__ import annotations

from datetime import date

import pytest

from tests.upgrade_sites import charger, evaluate, house
from tracker.checks import notification
from tracker.engine import connection as rule


# EREC G98: up to and including 16 A per phase → connect, notify within 28 days; above → G99.
# A 3.68 kW inverter at 230 V: 3680 / 230 = 16.0 A (the figure G98 itself pairs with 16 A);
# a 5 kW inverter: 5000 / 230 = 21.74 A.
@pytest.mark.parametrize("inverter_kw, route", [(3.68, rule.NOTIFY_AFTER), (5.0, rule.APPLY_BEFORE)])
def test_inverters_against_the_small_generator_limit(inverter_kw, route):
    amps = inverter_kw * 1000 / 230
    assert rule.generation_route(rule.aggregate_current_a([amps]), 16.0) == route


def test_aggregate_counts_every_source_pv_and_battery():
    # G98: the aggregate of every unit at the premises — 3.68 kW PV (16 A) + a 2.5 kW battery
    # (10.9 A) = 26.9 A > 16 A: G99
    total = rule.aggregate_current_a([16.0, 2500 / 230])
    assert total == pytest.approx(26.87, abs=0.01)
    assert rule.generation_route(total, 16.0) == rule.APPLY_BEFORE


def test_demand_reasons():
    # ENA process: apply first where MD > cut-out rating, cut-out unknown, looped service, or
    # residential MD > 60 A single-phase
    assert rule.demand_reasons(55, 60, False, True, 60) == []
    assert "exceed the supplier's fuse" in rule.demand_reasons(65, 60, False, True, 60)[0]
    assert "not known" in rule.demand_reasons(30, None, False, True, 60)[0]
    assert "looped" in rule.demand_reasons(30, 60, True, True, 60)[0]
    assert "above 60 A" in rule.demand_reasons(70, 80, False, True, 60)[0]
    assert rule.demand_reasons(70, 80, False, False, 60) == []


def test_deadline_is_28_days_after_connection():
    assert rule.deadline(date(2026, 11, 20), 28) == date(2026, 12, 18)


def _outcome(site_factory, before_text, after_text):
    b = evaluate(site_factory, before_text)
    a_root_text = after_text
    a = evaluate(site_factory, a_root_text)
    return notification.change_outcome(b.site, a.site, b.supply_check.value, a.supply_check.value)


def test_proposed_charge_point_that_overloads_the_supplier_fuse_needs_an_application(site_factory):
    """The house on a 60 A fuse: ring 32 A + 40 % of nothing else (one socket circuit: 32 A) and
    a 10 kW cooker (10 + 30 % × (43.48 − 10) = 20.04 A): 52.04 A before (common UK practice
    allowances, tracker/data/diversity.yaml). Adding a 32 A charge point at 100 % (722.311):
    84.04 A > 60 A."""
    o = _outcome(site_factory, house(fuse=60), house(charger(), fuse=60))
    # 10 000 W / 230 V = 43.478 A; 32 + 10 + 0.3 × 33.478 = 52.043 A (worked above)
    assert o.demand_before_a == pytest.approx(52.043, abs=0.0005)
    assert o.demand_a == pytest.approx(84.043, abs=0.0005)             # 52.043 + 32 A
    assert o.route == rule.APPLY_BEFORE
    assert any("supplier's fuse 60 A" in r for r in o.reasons)


def test_proposed_charge_point_with_load_control_that_fits_is_notified_after(site_factory):
    """With a load control holding it to 6 A (722.311), 52.04 + 6 = 58.04 A ≤ 60 A and ≤ 60 A
    residential: connect, then notify within 28 days."""
    after = house(charger().replace("current_a: 32,", "current_a: 32, load_control_a: 6, connected_on: 2026-12-01,"),
                  fuse=60)
    o = _outcome(site_factory, house(fuse=60), after)
    assert o.route == rule.NOTIFY_AFTER and o.reasons == ()
    dev = o.devices[0]
    assert o.deadline(dev) == "2026-12-29"          # 2026-12-01 + 28 days
    items = notification.due_items(evaluate(site_factory, after).site, o, date(2026, 12, 20))
    assert items == [{"site": "test-house", "what": items[0]["what"], "due": "2026-12-29", "status": "due-soon",
                      "source": items[0]["source"], "ref": "test-house/CU1/3/car"}]


def test_looped_service_needs_an_application(site_factory):
    after = house(charger().replace("current_a: 32,", "current_a: 32, load_control_a: 6,"), fuse=60, looped="true")
    o = _outcome(site_factory, house(fuse=60, looped="true"), after)
    assert o.route == rule.APPLY_BEFORE and any("looped" in r for r in o.reasons)


def test_due_states(site_factory):
    text = house(charger().replace("current_a: 32,", "current_a: 32, load_control_a: 6, connected_on: 2026-10-01,"),
                 fuse=100)
    sr = evaluate(site_factory, text)
    o = sr.notification
    assert o.route == rule.NOTIFY_AFTER
    [item] = notification.due_items(sr.site, o, date(2026, 12, 3))
    assert (item["due"], item["status"]) == ("2026-10-29", "overdue")
    sr = evaluate(site_factory, text.replace("connected_on: 2026-10-01,", "connected_on: 2026-10-01, "
                                                                         "notified_on: 2026-10-20,"))
    [item] = notification.due_items(sr.site, sr.notification, date(2026, 12, 3))
    assert item["status"] == "done"


def test_due_lists_the_network_operator_deadline(site_factory, capsys):
    """`izwatch due` carries the notification deadline: connected 2026-11-20, notify within 28
    days (the operators' connect-and-notify process) → 2026-12-18; on 2026-12-05, 13 days before, it is
    due soon (within 14 days, common practice)."""
    import json

    from tracker.cli import main
    text = house(charger().replace("current_a: 32,", "current_a: 32, load_control_a: 6, connected_on: 2026-11-20,"),
                 fuse=100)
    root = site_factory(text, folder="test-house")
    main(["due", str(root), "--on", "2026-12-05", "--json"])
    doc = json.loads(capsys.readouterr().out)
    [item] = [i for i in doc["items"] if i["ref"] == "test-house/CU1/3/car"]
    assert (item["due"], item["status"]) == ("2026-12-18", "due-soon")
    assert "network operator" in item["what"]


def test_report_carries_the_network_operator_route(site_factory, capsys):
    """The landlord's report states the origin's route: a 32 A charge point on a 60 A fuse with
    52.04 A already (common UK practice allowances) needs the operator first."""
    import json

    from tracker.cli import main
    root = site_factory(house(charger(), fuse=60), folder="test-house")
    assert main(["report", str(root), "--site", "test-house", "--format", "json", "-o", "-"]) == 0
    doc = json.loads(capsys.readouterr().out)
    note = doc["origin"]["network_operator"]
    assert note["route"] == "apply-before" and any("60 A" in r for r in note["reasons"])
    assert main(["report", str(root), "--site", "test-house", "--format", "html", "-o", "-"]) == 0
    assert "Network operator" in capsys.readouterr().out
