"""Element-level diffs of a site file: added, removed, modified field by field."""
from __future__ import annotations

from dataclasses import replace

from tests.conftest import DEMO
from tracker.loading import load_estate
from tracker.tracking.diff import diff_file

SITE = load_estate(DEMO).sites["orchard-end"]


def test_no_change_no_diff():
    assert diff_file(SITE, SITE, "orchard-end/site.yaml") == []


def test_field_changes_are_dotted_and_valued():
    c = SITE.circuits[0]
    c2 = replace(c, device=replace(c.device, rating_a=40.0),
                 environment=replace(c.environment, grouped_with=1), name="Ring, downstairs")
    new = replace(SITE, circuits=(c2,) + SITE.circuits[1:])
    changes = {(x.ref, x.change, x.field, x.old, x.new) for x in diff_file(SITE, new, "orchard-end/site.yaml")}
    assert changes == {
        ("orchard-end/CU1/1", "modified", "device.rating_a", 32.0, 40.0),
        ("orchard-end/CU1/1", "modified", "environment.grouped_with", 3, 1),
        ("orchard-end/CU1/1", "modified", "name", "Ring, ground floor", "Ring, downstairs"),
    }


def test_loads_are_elements_of_their_own():
    c = next(x for x in SITE.circuits if x.board == "CU1" and x.id == "5")
    c2 = replace(c, loads=c.loads[:1])
    new = replace(SITE, circuits=tuple(c2 if x is c else x for x in SITE.circuits))
    assert [str(x) for x in diff_file(SITE, new, "orchard-end/site.yaml")] == ["orchard-end/CU1/5/path removed"]


def test_only_the_file_diffed_is_reported():
    ws = [c for c in SITE.circuits if c.board == "WS1"]
    new = replace(SITE, circuits=tuple(c for c in SITE.circuits if c is not ws[0]))
    assert diff_file(SITE, new, "orchard-end/site.yaml") == []
    assert [str(x) for x in diff_file(SITE, new, "orchard-end/workshop.yaml")] == [
        "orchard-end/WS1/1 removed", "orchard-end/WS1/1/sockets removed"]


def test_supply_and_site_fields():
    new = replace(SITE, supply=replace(SITE.supply, ze_ohm=0.8), name="Orchard End (sold)")
    assert {str(x) for x in diff_file(SITE, new, "orchard-end/site.yaml")} == {
        "orchard-end supply.ze_ohm 0.45 → 0.8", "orchard-end site.name Orchard End, 3 Wrenfold Lane, "
        "Oldbridge-on-Wend → Orchard End (sold)"}
