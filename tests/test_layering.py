"""The core never imports Textual or rich: each tracker module is imported in a fresh
interpreter and sys.modules is inspected."""
from __future__ import annotations

import pkgutil
import subprocess
import sys

import tracker

MODULES = sorted(m.name for m in pkgutil.walk_packages(tracker.__path__, "tracker."))


def test_core_modules_do_not_import_the_ui():
    code = (
        "import importlib, sys\n"
        f"for name in {MODULES!r}:\n"
        "    importlib.import_module(name)\n"
        "bad = sorted(m for m in sys.modules if m.split('.')[0] in ('textual', 'rich', 'tui'))\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == ""
