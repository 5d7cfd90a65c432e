"""The terminal UI's deadlines view: every site's deadlines, overdue first, each with its rule."""
from __future__ import annotations

import datetime

from tests.test_tui_app import plain
from tests.tui_helpers import loaded, make_app, run
from tui import deadlines
from tui.components.deadlines_screen import DeadlinesScreen

DEMO_DAY = datetime.datetime(2026, 12, 3, 9, 0, tzinfo=datetime.timezone.utc)


def test_deadlines_model_orders_overdue_first(demo_copy):
    async def go():
        app = make_app(demo_copy, clock=lambda: DEMO_DAY)
        async with app.run_test(size=(120, 40)) as pilot:
            await loaded(pilot)
            found = deadlines.rows(app.snapshot, DEMO_DAY.date())
            # demo_site/tansy-walk-9a: the inspector's next date, 2024-01-18, has passed
            assert (found[0].site, found[0].status, found[0].due) == ("tansy-walk-9a", "overdue", "2024-01-18")
            assert all(r.status != "done" for r in found)
            assert len(deadlines.rows(app.snapshot, DEMO_DAY.date(), show_done=True)) > len(found)
    run(go())


def test_d_opens_the_deadlines_and_escape_closes_them(demo_copy):
    async def go():
        app = make_app(demo_copy, clock=lambda: DEMO_DAY)
        async with app.run_test(size=(120, 40)) as pilot:
            await loaded(pilot)
            await pilot.press("d")
            await pilot.pause()
            assert isinstance(app.screen, DeadlinesScreen)
            body = plain(app.screen.query_one("#deadlines-body"))
            assert "1 overdue" in body and "OVERDUE" in body and "SI 2020/312" in body
            await pilot.press("a")      # the done ones too
            await pilot.pause()
            assert "done" in plain(app.screen.query_one("#deadlines-body"))
            await pilot.press("escape")
            await pilot.pause()
            assert not isinstance(app.screen, DeadlinesScreen)
    run(go())


def test_details_show_readings_beside_the_model_and_the_suggested_code():
    from tests.conftest import DEMO
    from tracker.checks.site import evaluate_site
    from tracker.loading import load_estate
    from tui.snapshot import Row
    from tui.working import circuit_working

    sr = evaluate_site(load_estate(DEMO).sites["larkspur-yard-4"])
    row = Row("larkspur-yard-4/DB1/3", "circuit", "larkspur-yard-4", "", "DB1", "3", "Dust extractor", "fail",
              "new", (), ())
    measured = next(s for s in circuit_working(row, sr).sections if s.title == "As measured")
    lines = {ln.label: ln for ln in measured.lines}
    # demo: Zs 1.29 Ω read on 2026-06-30; the model's 1.488 Ω at 70 °C (Ze 0.2 + 19.51 mΩ/m × 55 m × 1.2)
    assert lines["Zs"].text.startswith("1.290 Ω measured — calculated 1.488 Ω") and lines["Zs"].status == "fail"
    assert lines["suggested code"].text.startswith("C2 for measured-zs")
