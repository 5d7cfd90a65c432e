"""Shared fixtures: the demo estate, and small site folders written on the fly."""
from __future__ import annotations

import os
import shutil
import textwrap
import time
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "demo_site"


def pytest_configure(config):
    # Times are shown in the local zone with their offset (tracker/output/times.py): the suite runs
    # in UTC whatever the machine's zone, so that what it expects to see does not move with it.
    os.environ["TZ"] = "UTC"
    time.tzset()


def pytest_addoption(parser):
    parser.addoption("--soak", action="store_true", default=False, help="run the long soak tests")


def pytest_terminal_summary(terminalreporter):
    from tests.reliability.conftest import FIGURES
    if FIGURES:
        terminalreporter.section("reliability figures")
        for name, value in FIGURES.items():
            terminalreporter.write_line(f"{name}: {value}")


def pytest_collection_modifyitems(config, items):
    if config.getoption("--soak"):
        return
    skip = pytest.mark.skip(reason="long soak: run with --soak")
    for item in items:
        if "slow" in item.keywords:
            item.add_marker(skip)


@pytest.fixture
def demo_copy(tmp_path) -> Path:
    """A private copy of the demo estate (tests may edit it)."""
    dest = tmp_path / "estate"
    shutil.copytree(DEMO, dest, ignore=shutil.ignore_patterns(".izwatch"))
    return dest


MINIMAL = """\
site:
  name: "Test flat"
supply:
  system: TN-C-S
  ze_ohm: 0.35
  pfc_ka: 1.6
  service_fuse_a: 100
boards:
  - id: CU1
    fed_by: supply
    main_switch_a: 100
circuits:
  - id: "1"
    board: CU1
    name: "Sockets"
    device: {kind: rcbo, curve: B, rating_a: 20, breaking_ka: 6}
    rcd_ma: 30
    cable: {kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 20, method: C}
    loads:
      - {id: sockets, kind: socket-outlets}
"""


def write_site(root: Path, files: dict[str, str], folder: str = "flat-1") -> Path:
    """Write a site folder under `root`; returns the estate root."""
    site = root / folder
    site.mkdir(parents=True, exist_ok=True)
    for name, text in files.items():
        (site / name).write_text(textwrap.dedent(text), encoding="utf-8")
    return root


@pytest.fixture
def site_factory(tmp_path):
    def make(files: dict[str, str] | str, folder: str = "flat-1") -> Path:
        if isinstance(files, str):
            files = {"site.yaml": files}
        return write_site(tmp_path / "estate", files, folder)
    return make


from tests.pg_server import pg_schema, pg_server  # noqa: E402,F401  (fixtures for the team history)
