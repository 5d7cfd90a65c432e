"""The deadline rules of the inspection cycle (tracker/data/deadlines.yaml), each with a dated
example worked from the regulation's own wording, and the outcome rule."""
from __future__ import annotations

import datetime

import pytest

from tracker.inspection import dates, due, outcome
from tracker.inspection.rules import ruleset_for, rulesets
from tracker.model import Inspection, Observation, Site, Supply

D = datetime.date


def _site(jurisdiction="england", tenure="private-rented", inspections=()) -> Site:
    return Site(id="flat-1", supply=Supply(system="TN-C-S"), jurisdiction=jurisdiction, tenure=tenure,
                inspections=tuple(inspections))


def _inspection(day=D(2026, 3, 11), kind="periodic", observations=(), **kw) -> Inspection:
    return Inspection(date=day, by="A. Tester", kind=kind, observations=tuple(observations),
                      key=day.isoformat(), **kw)


def _item(items, starts):
    found = [i for i in items if i.what.startswith(starts)]
    assert len(found) == 1, [i.what for i in items]
    return found[0]


# -- counting, exactly as worded ----------------------------------------------------------

def test_days_starting_with_the_date_of_the_inspection():
    # SI 2020/312 reg. 3(4)(a), "within 28 days ... starting with the date of the inspection":
    # 11 March is day 1, so day 28 is 7 April.
    assert dates.days_beginning_with(D(2026, 3, 11), 28) == D(2026, 4, 7)


def test_within_days_of_an_event_does_not_count_its_day():
    # "within 28 days of completion" (reg. 3(4)(b)): the day of completion is not counted (common
    # practice reading of "within N days of"): 30 March + 28 days = 27 April.
    assert dates.days_after(D(2026, 3, 30), 28) == D(2026, 4, 27)


def test_intervals_of_no_more_than_five_years():
    # SI 2020/312 reg. 3(2)(a): "intervals of no more than 5 years": the same day 5 years on.
    assert dates.years_interval(D(2026, 3, 11), 5) == D(2031, 3, 11)
    # 29 February has no anniversary in 2033: the earlier day, 28 February, so the date is never late.
    assert dates.years_interval(D(2028, 2, 29), 5) == D(2033, 2, 28)


def test_period_of_five_years_beginning_with_the_day():
    # WSI 2022/6 reg. 6(2)(b)(i): "the period of 5 years beginning with the day on which the
    # inspection is carried out": 2026-03-11 is its first day, 2031-03-10 its last.
    assert dates.years_beginning_with(D(2026, 3, 11), 5) == D(2031, 3, 10)


def test_every_rule_has_a_source_and_a_known_counting():
    for rs in rulesets().values():
        for duty in rs.duties.values():
            assert duty.source and duty.status in ("seen", "recalled")
            if duty.period is not None:
                dates.period_end(D(2026, 1, 1), duty.period)   # raises on an unknown counting
            else:
                assert isinstance(duty.by, datetime.date)


# -- England, private rented (SI 2020/312) ------------------------------------------------

def test_england_private_rented_inspection_dated_example():
    x = _inspection(observations=[Observation("C2", "No RCD for sockets used outdoors", "CU1/5"),
                                  Observation("C3", "No surge protection")])
    items = due.site_items(_site(inspections=[x]), D(2026, 3, 20))
    # reg. 3(4)(a): 28 days starting with 2026-03-11 → 2026-04-07
    remedial = _item(items, "remedial work: C2")
    assert remedial.due == D(2026, 4, 7) and remedial.status == due.OK
    assert remedial.ref == "flat-1/CU1/5" and "3(4)(a)" in remedial.source
    # reg. 3(3)(b): a copy to each tenant within 28 days of the inspection → 2026-04-08
    copy = _item(items, "copy of the 2026-03-11 report")
    assert copy.due == D(2026, 4, 8) and "3(3)(b)" in copy.source
    # reg. 3(2)(a): next by 2031-03-11
    assert _item(items, "next inspection").due == D(2031, 3, 11)
    # a C3 sets no deadline
    assert not [i for i in items if "C3" in i.what]


def test_england_remedial_done_on_time_then_confirmation_due():
    x = _inspection(observations=[Observation("C2", "Loose neutral at CU", done_on=D(2026, 3, 30))])
    items = due.site_items(_site(inspections=[x]), D(2026, 4, 20))
    assert _item(items, "remedial work").status == due.DONE
    confirm = _item(items, "written confirmation")
    # reg. 3(4)(b), (c): within 28 days of completion (2026-03-30) → 2026-04-27
    assert confirm.due == D(2026, 4, 27) and confirm.status == due.DUE_SOON   # 7 days before
    assert "local housing authority" in confirm.what


def test_england_remedial_overdue_the_day_after_the_last_day():
    x = _inspection(observations=[Observation("FI", "Unknown circuit at the cooker")])
    on_last_day = due.site_items(_site(inspections=[x]), D(2026, 4, 7))
    day_after = due.site_items(_site(inspections=[x]), D(2026, 4, 8))
    assert _item(on_last_day, "remedial").status == due.DUE_SOON
    assert _item(day_after, "remedial").status == due.OVERDUE


def test_england_shorter_period_set_by_the_report():
    # reg. 3(4)(a)(ii): the period the report specifies, if less than 28 days: 7 days starting
    # with 2026-03-11 → 2026-03-17.
    x = _inspection(observations=[Observation("C1", "Exposed live parts", within_days=7)])
    assert _item(due.site_items(_site(inspections=[x]), D(2026, 3, 12)), "remedial").due == D(2026, 3, 17)


def test_stricter_of_the_rule_and_the_inspectors_date():
    sooner = _inspection(next_due=D(2031, 3, 10))
    item = _item(due.site_items(_site(inspections=[sooner]), D(2026, 4, 1)), "next inspection")
    assert item.due == D(2031, 3, 10) and item.source.startswith(due.INSPECTOR_SOURCE)
    later = _inspection(next_due=D(2032, 1, 1))
    item = _item(due.site_items(_site(inspections=[later]), D(2026, 4, 1)), "next inspection")
    assert item.due == D(2031, 3, 11) and "3(2)" in item.source


def test_england_private_rented_with_no_inspection_recorded():
    # reg. 1(3)(b): existing tenancies from 1 April 2021
    item = _item(due.site_items(_site(), D(2026, 1, 1)), "first inspection")
    assert item.due == D(2021, 4, 1) and item.status == due.OVERDUE


def test_minor_works_does_not_restart_the_interval():
    items = due.site_items(_site(inspections=[_inspection(), _inspection(D(2027, 5, 2), "minor-works")]),
                           D(2027, 6, 1))
    assert _item(items, "next inspection").due == D(2031, 3, 11)


# -- England, social rented (SI 2020/312 as amended by SI 2025/1043) ----------------------

def test_england_social_rented_first_inspection_before_1_november_2026():
    # SI 2025/1043: tenancies granted before 1 December 2025 inspected before 1 November 2026.
    items = due.site_items(_site(tenure="social-rented"), D(2026, 10, 1))
    first = _item(items, "first inspection")
    assert first.due == D(2026, 10, 31) and first.status == due.DUE_SOON
    assert "2025/1043" in first.source


def test_england_social_rented_remedial_as_private():
    x = _inspection(observations=[Observation("C2", "Damaged socket", "CU1/2")])
    items = due.site_items(_site(tenure="social-rented", inspections=[x]), D(2026, 3, 11))
    assert _item(items, "remedial").due == D(2026, 4, 7)


# -- Wales (WSI 2022/6) -------------------------------------------------------------------

def test_wales_dated_example():
    x = _inspection(observations=[Observation("C2", "No main bonding to the gas pipe")])
    items = due.site_items(_site("wales", "private-rented", [x]), D(2026, 3, 12))
    # reg. 6(2)(b)(i): valid to the end of 5 years beginning with 2026-03-11 → 2031-03-10
    assert _item(items, "next inspection").due == D(2031, 3, 10)
    # reg. 6(4): a copy before the end of 7 days starting with 2026-03-11 → 2026-03-17
    assert _item(items, "copy of the").due == D(2026, 3, 17)
    # no period for the remedial work itself in these regulations: no invented date
    assert not [i for i in items if i.what.startswith("remedial")]


# -- Scotland (Housing (Scotland) Act 2006 s. 19A) ----------------------------------------

def test_scotland_dated_example():
    x = _inspection(observations=[Observation("C2", "No RCD on the socket circuits")])
    items = due.site_items(_site("scotland", "private-rented", [x]), D(2026, 3, 12))
    # s. 19A and statutory guidance D.55: intervals of no more than 5 years → 2031-03-11
    assert [i.what.split(" (")[0] for i in items] == ["next inspection and test"]
    assert items[0].due == D(2031, 3, 11) and "19A" in items[0].source


# -- Northern Ireland (SR 2024/201) --------------------------------------------------------

def test_northern_ireland_dated_example():
    x = _inspection(observations=[Observation("C2", "Borrowed neutral")])
    items = due.site_items(_site("northern-ireland", "private-rented", [x]), D(2026, 3, 12))
    assert _item(items, "next inspection").due == D(2031, 3, 11)
    assert _item(items, "copy of the").due == D(2026, 4, 8)
    remedial = _item(items, "remedial")
    assert remedial.due == D(2026, 4, 7) and "[recalled]" in remedial.source


def test_no_rules_for_owner_occupied_only_the_inspectors_date():
    assert ruleset_for("england", "owner-occupied") is None
    x = _inspection(next_due=D(2036, 3, 10), observations=[Observation("C2", "Old board")])
    items = due.site_items(_site(tenure="owner-occupied", inspections=[x]), D(2026, 4, 1))
    assert [(i.due, i.source) for i in items] == [(D(2036, 3, 10), due.INSPECTOR_SOURCE)]


# -- the outcome rule ----------------------------------------------------------------------

@pytest.mark.parametrize("codes, done, expected", [
    (["C3"], [None], outcome.SATISFACTORY),
    (["C2", "C3"], [None, None], outcome.UNSATISFACTORY),
    (["C1"], [D(2026, 3, 11)], outcome.SATISFACTORY),
    (["FI"], [None], outcome.UNSATISFACTORY),
    (["C2"], [D(2026, 5, 1)], outcome.UNSATISFACTORY),   # done after the day judged: open then
    ([], [], outcome.SATISFACTORY),
])
def test_outcome_unsatisfactory_while_a_c1_c2_or_fi_is_open(codes, done, expected):
    x = _inspection(observations=[Observation(c, "x", done_on=d) for c, d in zip(codes, done)])
    assert outcome.outcome(x, D(2026, 4, 1)) == expected


# -- the other tenures: HMOs, and social landlords in Wales and Scotland ---------------------

def test_england_hmo_dated_example():
    # SI 2020/312 applies to a house in multiple occupation let as a specified tenancy: the same
    # duties as any private tenancy. Inspection 2026-03-11 with an FI:
    x = _inspection(observations=[Observation("FI", "Neutral-earth insulation fault on a lighting circuit")])
    items = due.site_items(_site(tenure="hmo", inspections=[x]), D(2026, 3, 12))
    # reg. 3(4)(a): 28 days starting with the date of the inspection → 2026-04-07
    assert _item(items, "remedial").due == D(2026, 4, 7) and "2020/312" in _item(items, "remedial").source
    # reg. 3(3)(b): a copy within 28 days of the inspection (its day not counted) → 2026-04-08
    assert _item(items, "copy of the").due == D(2026, 4, 8)
    # reg. 3(1)(b): intervals of no more than 5 years → 2031-03-11
    assert _item(items, "next inspection").due == D(2031, 3, 11)


def test_england_hmo_overdue_the_day_after_the_last_day():
    x = _inspection(observations=[Observation("C1", "Exposed live parts at a broken accessory")])
    # reg. 3(4)(a): the last day is 2026-04-07, overdue on 2026-04-08
    assert _item(due.site_items(_site(tenure="hmo", inspections=[x]), D(2026, 4, 7)), "remedial").status \
        == due.DUE_SOON
    assert _item(due.site_items(_site(tenure="hmo", inspections=[x]), D(2026, 4, 8)), "remedial").status \
        == due.OVERDUE


def test_wales_social_and_hmo_as_private():
    # The Renting Homes (Wales) Act 2016 covers every occupation contract, community landlords and
    # HMOs alike: WSI 2022/6 reg. 6(4), a copy before the end of 7 days starting with 2026-03-11
    # → 2026-03-17; reg. 6(2)(b), 5 years beginning with 2026-03-11 → 2031-03-10.
    x = _inspection()
    for tenure in ("social-rented", "hmo"):
        items = due.site_items(_site("wales", tenure, [x]), D(2026, 3, 12))
        assert _item(items, "copy of the").due == D(2026, 3, 17), tenure
        assert _item(items, "next inspection").due == D(2031, 3, 10), tenure
        assert "WSI 2022/6" in _item(items, "next inspection").source


def test_scotland_hmo_as_private_and_social_by_the_quality_standard():
    x = _inspection(observations=[Observation("C2", "No RCD on the socket circuits")])
    # Housing (Scotland) Act 2006 s. 19A covers an HMO let privately: intervals of no more than
    # 5 years → 2031-03-11
    hmo = due.site_items(_site("scotland", "hmo", [x]), D(2026, 3, 12))
    assert [(i.due, "19A" in i.source) for i in hmo] == [(D(2031, 3, 11), True)]
    # social landlords: the SHQS's 5 years, held as recalled and said so beside the date
    social = due.site_items(_site("scotland", "social-rented", [x]), D(2026, 3, 12))
    assert [i.due for i in social] == [D(2031, 3, 11)] and "[recalled]" in social[0].source
