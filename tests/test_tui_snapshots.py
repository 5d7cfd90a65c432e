"""SVG snapshots of the main screens at 80×24 and 160×45 (pytest-textual-snapshot).

Time is frozen: every revision is recorded at one fixed instant and the app's clock is fixed
half an hour later, the author is fixed, and the demo's shower swap is recorded before the app
starts (so no announcement is on screen). Review the SVGs before updating them with
`pytest --snapshot-update`.
"""
from __future__ import annotations

import shutil

import pytest

from tests.conftest import DEMO

from tests.tui_helpers import AUTHOR, FIXED_NOW, loaded, make_app, replace_atomically, settle_file, until
from tracker.history import History
from tracker.tracking.authors import Authors
from tracker.watcher import Watcher
from tui.components.history_view import HistoryView
from tui.components.problem_list import ProblemList
from tui.components.working_view import WorkingView

SIZES = {"80x24": (80, 24), "160x45": (160, 45)}
RECORDED_AT = "2026-03-02T09:00:00.000Z"


@pytest.fixture(scope="module")
def recorded(tmp_path_factory):
    """The demo with its first record made and the shower swap recorded, at a fixed time."""
    root = tmp_path_factory.mktemp("recorded") / "estate"
    shutil.copytree(DEMO, root, ignore=shutil.ignore_patterns(".izwatch"))
    with pytest.MonkeyPatch.context() as mp:
        mp.setattr("tracker.history.store.now_iso", lambda: RECORDED_AT)
        h = History.open(root / ".izwatch" / "history.sqlite")
        w = Watcher(root, h, Authors(root, by=AUTHOR), debounce_s=0.1)
        w.start()
        try:
            replace_atomically(root / "quill-court-2" / "site.yaml", "power_kw: 7.5", "power_kw: 8.5")
            settle_file(w, root, "quill-court-2/site.yaml")
        finally:
            w.stop()
            h.close()
        h = History.open(root / ".izwatch" / "history.sqlite")
        try:
            assert h.count() == 10     # nine first records (one per file) and the edit: the same revisions every run
        finally:
            h.close()
    return root


@pytest.fixture
def swapped(recorded, tmp_path):
    """A private copy of `recorded`, history included (the app opens it for writing)."""
    root = tmp_path / "estate"
    shutil.copytree(recorded, root)
    return root


def app_for(root):
    return make_app(root, clock=lambda: FIXED_NOW)


@pytest.mark.parametrize("size", SIZES)
def test_problems(swapped, snap_compare, size):
    async def ready(pilot):
        await loaded(pilot)
        assert pilot.app.screen.query_one(ProblemList).rows[0].ref == "quill-court-2/CU1/3"

    assert snap_compare(app_for(swapped), terminal_size=SIZES[size], run_before=ready)


@pytest.mark.parametrize("size", SIZES)
def test_working(swapped, snap_compare, size):
    async def ready(pilot):
        await loaded(pilot)
        await pilot.press("enter")
        view = pilot.app.screen.query_one(WorkingView)
        await until(pilot, lambda: view.remedy != "")

    assert snap_compare(app_for(swapped), terminal_size=SIZES[size], run_before=ready)


@pytest.mark.parametrize("size", SIZES)
def test_history(swapped, snap_compare, size):
    async def ready(pilot):
        await loaded(pilot)
        await pilot.press("enter", "h")
        view = pilot.app.screen.query_one(HistoryView)
        await until(pilot, lambda: view.entries is not None)

    assert snap_compare(app_for(swapped), terminal_size=SIZES[size], run_before=ready)


@pytest.mark.parametrize("size", SIZES)
def test_estate_tree(swapped, snap_compare, size):
    async def ready(pilot):
        await loaded(pilot)
        await pilot.press("e", "down", "down", "right", "down", "right")

    assert snap_compare(app_for(swapped), terminal_size=SIZES[size], run_before=ready)


def test_help(swapped, snap_compare):
    async def ready(pilot):
        await loaded(pilot)
        await pilot.press("question_mark")

    assert snap_compare(app_for(swapped), terminal_size=(80, 24), run_before=ready)
