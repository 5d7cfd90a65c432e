"""Hostile YAML: nothing is constructed from tags, nothing runs, bombs and oversized or strange
files are refused with a located error and exit 2, never a traceback. How quickly is measured by
the benchmark (`python -m tests.benchmark.run`, `hostile_inputs`); the slowest time of this run
is printed with the reliability figures."""
from __future__ import annotations

import re
import subprocess
import sys
import time

import pytest

from tests.conftest import MINIMAL
from tests.reliability.conftest import FIGURES, record

ERROR = re.compile(r"^flat-1/site\.yaml:\d+:\d+: ", re.M)


def _bomb(levels: int = 9, width: int = 9) -> str:
    lines = ["a0: &a0 [lol]"]
    for i in range(1, levels + 1):
        lines.append(f"a{i}: &a{i} [" + ", ".join([f"*a{i - 1}"] * width) + "]")
    return "\n".join(lines) + "\n"


CASES = {
    "python object tag": MINIMAL + "x: !!python/object/apply:os.system ['touch {marker}']\n",
    "python name tag": MINIMAL + "x: !!python/name:os.system\n",
    "python new tag": MINIMAL + "x: !!python/object/new:subprocess.Popen [['touch', '{marker}']]\n",
    "unknown local tag": MINIMAL + "x: !mytag 3\n",
    "billion laughs": _bomb(),
    "alias bomb inside a valid file": MINIMAL + _bomb(8, 10),
    "over the size limit": MINIMAL + "# " + "x" * (9 * 1024 * 1024) + "\n",
    "latin-1": "site:\n  name: caf\xe9\n".encode("latin-1"),
    "utf-16 with bom": MINIMAL.encode("utf-16"),
    "empty": "",
    "only whitespace": "   \n\n\t\n",
    "only a bom": b"\xef\xbb\xbf",
    "binary": bytes(range(256)) * 40,
    "a list": "- 1\n- 2\n",
    "a scalar": "42\n",
    "null document": "~\n",
    "two documents": MINIMAL + "---\nsite: {name: second}\n",
    "nan": MINIMAL.replace("ze_ohm: 0.35", "ze_ohm: .nan"),
    "inf": MINIMAL.replace("length_m: 20", "length_m: .inf"),
    "minus inf": MINIMAL.replace("ze_ohm: 0.35", "ze_ohm: -.inf"),
    "float overflow": MINIMAL.replace("length_m: 20", "length_m: 1.0e400"),
    "huge integer": MINIMAL.replace("rating_a: 20", "rating_a: " + "9" * 400),
    "deep flow nesting": "site: " + "[" * 5000 + "]" * 5000 + "\n",
    "deep block nesting": "".join(" " * i + "a:\n" for i in range(1500)) + " " * 1500 + "b: 1\n",
    "deep inline sequences": "site: " + "- " * 3000 + "x\n",
    "very long line": MINIMAL.replace('name: "Test flat"', 'name: "' + "y" * 1_000_000 + '"') + "bad: [\n",
    "tab indentation": MINIMAL.replace("  system: TN-C-S", "\tsystem: TN-C-S"),
    "duplicate keys": MINIMAL.replace("  ze_ohm: 0.35\n", "  ze_ohm: 0.35\n  ze_ohm: 5\n"),
    "complex key": "site:\n? name: x\n",
    "unclosed quote": MINIMAL.replace('name: "Sockets"', 'name: "Sockets'),
    "nul in the middle": MINIMAL[:40] + "\x00" + MINIMAL[40:],
    "wrong types everywhere": "site: 3\nsupply: []\nboards: {}\ncircuits: yes\n",
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_hostile_input_is_refused_cleanly(name, tmp_path):
    marker = tmp_path / "ran"
    content = CASES[name]
    if isinstance(content, str):
        content = content.replace("{marker}", str(marker)).encode("utf-8")
    site = tmp_path / "estate" / "flat-1"
    site.mkdir(parents=True)
    (site / "site.yaml").write_bytes(content)
    t = time.perf_counter()
    out = subprocess.run([sys.executable, "-m", "tracker.cli", "check", str(tmp_path / "estate")],
                         capture_output=True, text=True, timeout=60)
    elapsed = time.perf_counter() - t
    assert out.returncode == 2, (name, out.stdout[-500:], out.stderr[-500:])
    assert "Traceback" not in out.stderr + out.stdout
    assert ERROR.search(out.stderr), out.stderr[:500]
    assert not marker.exists(), "something ran"
    FIGURES.setdefault("hostile inputs refused (exit 2, located, no traceback)", 0)
    FIGURES["hostile inputs refused (exit 2, located, no traceback)"] += 1
    slowest = FIGURES.get("slowest hostile input (s)", 0.0)
    record("slowest hostile input (s)", round(max(slowest, elapsed), 2))
