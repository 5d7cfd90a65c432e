"""The core never imports Textual or rich: each tracker module is imported alone, in a fresh
interpreter of its own, and its sys.modules inspected, so that a leak names the module that
brings it in (one interpreter importing every module in turn would name none)."""
from __future__ import annotations

import os
import pkgutil
import subprocess
import sys

import tracker

MODULES = sorted(m.name for m in pkgutil.walk_packages(tracker.__path__, "tracker."))
UI = ("textual", "rich", "tui")
PROBE = (
    "import importlib, sys\n"
    "importlib.import_module(sys.argv[1])\n"
    f"print(','.join(sorted(m for m in sys.modules if m.split('.')[0] in {UI!r})))\n"
)


def ui_modules_imported_by(modules: list[str]) -> dict[str, str]:
    """module -> what of the UI importing it alone loads (its error output if it does not
    import at all); modules that load none of it are left out. The interpreters run a few at a
    time."""
    found: dict[str, str] = {}
    pending = list(modules)
    running: list[tuple[str, subprocess.Popen]] = []
    at_once = max(1, os.cpu_count() or 1)
    while pending or running:
        while pending and len(running) < at_once:
            name = pending.pop(0)
            running.append((name, subprocess.Popen([sys.executable, "-c", PROBE, name], stdout=subprocess.PIPE,
                                                   stderr=subprocess.PIPE, text=True)))
        name, proc = running.pop(0)
        out, err = proc.communicate(timeout=120)
        if proc.returncode != 0:
            found[name] = f"does not import: {err.strip().splitlines()[-1] if err.strip() else proc.returncode}"
        elif out.strip():
            found[name] = out.strip()
    return found


def test_core_modules_do_not_import_the_ui():
    assert len(MODULES) > 40   # every module of tracker/ is found (74 when this was written)
    assert ui_modules_imported_by(MODULES) == {}


def test_a_leak_is_named_by_its_module(tmp_path, monkeypatch):
    """The check can fail, and says where: a module that imports rich is named, with what it
    brought in; one that does not is left out."""
    (tmp_path / "leaky_probe_module.py").write_text("import rich.text\n")
    (tmp_path / "clean_probe_module.py").write_text("import json\n")
    monkeypatch.setenv("PYTHONPATH", os.pathsep.join([str(tmp_path), os.environ.get("PYTHONPATH", "")]))
    found = ui_modules_imported_by(["leaky_probe_module", "clean_probe_module"])
    assert list(found) == ["leaky_probe_module"] and "rich.text" in found["leaky_probe_module"].split(",")
