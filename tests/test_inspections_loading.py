"""Site files with `site.jurisdiction`, `site.tenure` and `inspections:` (SPEC §7): the model, and
clear FILE:LINE:COL errors for what is wrong."""
from __future__ import annotations

import datetime

from tests.conftest import MINIMAL
from tracker.loading import load_estate

INSPECTED = MINIMAL.replace('  name: "Test flat"\n', '  name: "Test flat"\n  jurisdiction: wales\n'
                                                    '  tenure: private-rented\n') + """\
inspections:
  - date: 2026-03-11
    by: "A. Tester"
    kind: periodic
    next_due: "2031-03-10"
    ze_ohm: 0.31
    results:
      - ref: CU1/1
        r1_r2_ohm: 0.39
        zs_ohm: 0.72
        ir_mohm: 200
        ir_test_v: 500
        rcd_ms: 24
    observations:
      - {code: C2, text: "No RCD for sockets used outdoors", ref: CU1/1, done_on: 2026-03-30}
      - {code: C3, text: "No surge protection"}
"""


def _site(site_factory, text):
    estate = load_estate(site_factory(text))
    return estate, (estate.sites.get("flat-1"))


def test_inspection_read_into_the_model(site_factory):
    estate, site = _site(site_factory, INSPECTED)
    assert estate.errors == []
    assert (site.jurisdiction, site.tenure) == ("wales", "private-rented")
    (x,) = site.inspections
    assert x.date == datetime.date(2026, 3, 11) and x.next_due == datetime.date(2031, 3, 10)   # quoted or not
    assert x.key == "2026-03-11" and x.kind == "periodic" and x.ze_ohm == 0.31
    (m,) = x.results
    assert (m.ref, m.zs_ohm, m.ir_mohm, m.rcd_ms) == ("CU1/1", 0.72, 200.0, 24.0)
    assert [o.code for o in x.observations] == ["C2", "C3"]
    assert x.observations[0].done_on == datetime.date(2026, 3, 30)


def test_defaults_england_and_no_tenure(site_factory):
    _, site = _site(site_factory, MINIMAL)
    assert (site.jurisdiction, site.tenure, site.inspections) == ("england", None, ())


def test_a_result_naming_no_circuit_is_an_error_at_its_ref(site_factory):
    estate, site = _site(site_factory, INSPECTED.replace("      - ref: CU1/1", "      - ref: CU1/7"))
    assert site is None
    assert [str(e) for e in estate.errors] == [
        "flat-1/site.yaml:30:9: inspections[0].results[0].ref: no circuit 'CU1/7' in this site "
        "(circuits of CU1: CU1/1)"]


def test_an_observation_naming_no_circuit_is_an_error(site_factory):
    estate, _ = _site(site_factory, INSPECTED.replace("ref: CU1/1, done_on", "ref: CU2/1, done_on"))
    assert [e.message for e in estate.errors] == ["no circuit 'CU2/1' in this site"]
    assert estate.errors[0].path == ("inspections", 0, "observations", 0, "ref")


def test_dates_that_are_not_days_of_the_calendar(site_factory):
    estate, _ = _site(site_factory, INSPECTED.replace("done_on: 2026-03-30", "done_on: 2026-02-30"))
    assert [str(e) for e in estate.errors] == [
        "flat-1/site.yaml:37:83: '2026-02-30' is not a date of the calendar (YYYY-MM-DD)"]
    estate, _ = _site(site_factory, INSPECTED.replace('next_due: "2031-03-10"', 'next_due: "2031-02-29"'))
    assert [str(e) for e in estate.errors] == [
        "flat-1/site.yaml:27:5: inspections[0].next_due: '2031-02-29' is not a date of the calendar (YYYY-MM-DD)"]
    estate, _ = _site(site_factory, INSPECTED.replace('next_due: "2031-03-10"', 'next_due: "10/03/2031"'))
    assert [e.message for e in estate.errors] == ["'10/03/2031' is not a date in the form YYYY-MM-DD"]


def test_unknown_code_kind_and_jurisdiction(site_factory):
    bad = (INSPECTED.replace("code: C3", "code: C4").replace("kind: periodic", "kind: annual")
           .replace("jurisdiction: wales", "jurisdiction: france"))
    estate, _ = _site(site_factory, bad)
    assert sorted(e.message for e in estate.errors) == [
        "'C4' is not a classification code (C1, C2, C3, FI)",
        "'annual' is not a known kind of inspection (periodic, initial, minor-works, remedial)",
        "'france' is not a known jurisdiction (england, wales, scotland, northern-ireland)"]


def test_a_circuit_measured_twice_in_one_inspection(site_factory):
    twice = INSPECTED.replace("    observations:", "      - {ref: CU1/1, zs_ohm: 0.8}\n    observations:")
    estate, _ = _site(site_factory, twice)
    assert [e.message for e in estate.errors] == ["circuit CU1/1 is already measured in this inspection (results[0])"]


def test_a_misspelt_reading_is_warned_about(site_factory):
    estate, site = _site(site_factory, INSPECTED.replace("zs_ohm: 0.72", "zs_ohms: 0.72"))
    assert site is not None and estate.errors == []
    assert [w.message for w in estate.warnings] == ["unknown key, ignored (did you mean 'zs_ohm'?)"]


def test_inspections_in_a_board_file(site_factory):
    board = """\
    boards:
      - {id: CU2, fed_by: supply}
    circuits:
      - id: "1"
        board: CU2
        device: {kind: mcb, curve: B, rating_a: 6}
        cable: {kind: twin-earth-70, csa_mm2: 1.5, cpc_mm2: 1, length_m: 10, method: C}
        loads: [{id: l, kind: lighting, power_kw: 0.2}]
    inspections:
      - date: 2025-01-02
        by: "B. Tester"
        kind: minor-works
        results: [{ref: CU2/1, r1_r2_ohm: 0.33}]
    """
    estate = load_estate(site_factory({"site.yaml": INSPECTED, "cu2.yaml": board}))
    assert estate.errors == []
    site = estate.sites["flat-1"]
    assert [x.key for x in site.inspections] == ["2025-01-02", "2026-03-11"]   # oldest first


def test_two_inspections_on_one_day_get_distinct_keys(site_factory):
    second = INSPECTED + """\
  - date: 2026-03-11
    by: "A. Tester"
    kind: remedial
"""
    _, site = _site(site_factory, second)
    assert [x.key for x in site.inspections] == ["2026-03-11", "2026-03-11.2"]


def test_an_added_inspection_and_a_completion_are_element_changes(site_factory):
    from tracker.tracking.diff import diff_file
    root = site_factory(MINIMAL)
    before = load_estate(root).sites["flat-1"]
    after = load_estate(site_factory(INSPECTED)).sites["flat-1"]
    added = {str(c) for c in diff_file(before, after, "flat-1/site.yaml")}
    assert {"flat-1/inspection:2026-03-11 added", "flat-1/inspection:2026-03-11/CU1/1 added",
            "flat-1/inspection:2026-03-11/observation:1 added",
            "flat-1/inspection:2026-03-11/observation:2 added",
            "flat-1 site.jurisdiction england → wales", "flat-1 site.tenure (none) → private-rented"} == added
    later = load_estate(site_factory(INSPECTED.replace("done_on: 2026-03-30", "done_on: 2026-04-01"))).sites["flat-1"]
    (change,) = diff_file(after, later, "flat-1/site.yaml")
    assert (change.ref, change.field, change.old, change.new) == (
        "flat-1/inspection:2026-03-11/observation:1", "done_on", "2026-03-30", "2026-04-01")
