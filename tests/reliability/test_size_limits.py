"""Files whose reading alone would take seconds and hundreds of MiB: each is refused before it is
parsed, with its file and the limit it is past (exit 2, never a traceback), and a watcher takes the
other sites' saves at once. A file within the limits, written as site files are written, is never
refused by them. How long each refusal took is printed with the reliability figures (no timing
is asserted)."""
from __future__ import annotations

import os
import random
import subprocess
import sys
import time

import pytest

from tests.benchmark.generate import site_text
from tests.reliability.conftest import FIGURES, record
from tests.watch_helpers import settle, start_watcher
from tracker.cli import main
from tracker.loading import yamlread

# Each was measured on the reader before these limits (one core of the development machine):
# the time and peak memory of reading the file once.
PAST_THE_LIMITS = {
    # 6 MB; 6.7 s and 385 MB: a lone CR breaks lines in YAML (1.1 and 1.2), it was not counted
    "a list of a million items on lines ended by CR": lambda: "circuits:\r" + "  - 1\r" * 1_000_000,
    # 8 MB; 4.4 s and 398 MB: U+2028 is a line break in YAML 1.1, which libyaml reads
    "a list of a million items on lines ended by U+2028": lambda: "circuits:\u2028" + "  - 1\u2028" * 1_000_000,
    # 5 MB; 6.4 s and 469 MB, then taken (the key is not one izwatch reads)
    "a mapping of 390,000 keys under an ignored key": lambda: "x_notes:\n" + "".join(
        f"  k{i}: 1\n" for i in range(390_000)),
    # 7.2 MB; 108 s and 1.4 GB: libyaml's work per token grows with the depth of flow nesting
    "4,000 lines of 900 nested '['": lambda: "x_notes:\n" + ("  - " + "[" * 900 + "]" * 900 + "\n") * 4_000,
    # 4 MB; 44 s and 914 MB, then taken
    "2,000 lines of 400 nested mappings": lambda: "x_notes:\n" + (
        "  - " + "{a: " * 400 + "1" + "}" * 400 + "\n") * 2_000,
    # 7.2 MB; 38 s and 1.4 GB
    "9,000 lines of 400 nested block lists": lambda: "x_notes:\n" + ("  " + "- " * 400 + "1\n") * 9_000,
    # 0.1 MB: more '[' than site files open (three or four a circuit)
    "12,000 one-item flow lists": lambda: "x_notes:\n" + "  - [1]\n" * 12_000,
}


@pytest.mark.parametrize("name", sorted(PAST_THE_LIMITS))
def test_a_file_past_the_limits_is_refused_before_it_is_parsed(demo_copy, capsys, name):
    path = demo_copy / "heron-row" / "big.yaml"
    path.write_text(PAST_THE_LIMITS[name](), newline="")
    capsys.readouterr()
    started = time.perf_counter()
    code = main(["check", str(demo_copy)])
    elapsed = time.perf_counter() - started
    err = capsys.readouterr().err
    assert code == 2, err[-500:]
    assert "heron-row/big.yaml:1:1: too large to read" in err and "split the site" in err, err[-500:]
    assert "Traceback" not in err
    FIGURES["files past the size limits refused (exit 2, file and limit named)"] = FIGURES.get(
        "files past the size limits refused (exit 2, file and limit named)", 0) + 1
    slowest = FIGURES.get("slowest refusal past the size limits, the demo's whole check included (s)", 0.0)
    record("slowest refusal past the size limits, the demo's whole check included (s)",
           round(max(slowest, elapsed), 2))


@pytest.mark.parametrize("line_end", ["\n", "\r\n"])
def test_a_site_file_of_a_thousand_circuits_is_within_the_limits(tmp_path, capsys, line_end):
    """A thousand circuits in one file (as the benchmark's generator writes them, LF or CR LF ends:
    a CR LF is one line break) is read and checked, not refused."""
    files = site_text(random.Random(5), 1, 1_000)
    folder = tmp_path / "estate" / "big-site"
    folder.mkdir(parents=True)
    for name, text in files.items():
        (folder / name).write_bytes(text.replace("\n", line_end).encode())
    started = time.perf_counter()
    code = main(["check", str(tmp_path / "estate"), "--jobs", "1"])
    elapsed = time.perf_counter() - started
    out, err = capsys.readouterr()
    assert code in (0, 1), err[-800:]
    assert "too large" not in err and "a list of" not in err
    total = sum(yamlread.marks(t.replace("\n", line_end))[0] for t in files.values())
    assert total < yamlread.MAX_MARKS / 2       # (the limit is not reached by half)
    record("a site of 1,000 circuits in one file, within the limits: checked in (s)", round(elapsed, 2))


def test_the_watcher_takes_other_saves_at_once_after_a_file_past_the_limits(demo_copy):
    """Found in review: a 2 MB file of a one-million-element list held every other edit of the
    watcher up for 20 s."""
    w, h, _ = start_watcher(demo_copy)
    try:
        (demo_copy / "heron-row" / "big.yaml").write_text("x_notes:\r" + "  - 1\r" * 1_000_000, newline="")
        shower = demo_copy / "quill-court-2" / "site.yaml"
        shower.write_text(shower.read_text().replace("power_kw: 7.5", "power_kw: 9.5"))
        got = settle(w, seconds=60, until=lambda g: {u.outcome.file for u in g} >= {
            "heron-row/big.yaml", "quill-court-2/site.yaml"})
        by_file = {u.outcome.file: u.outcome for u in got}
        big = by_file["heron-row/big.yaml"]
        assert not big.valid and "too large to read" in str(big.errors)
        edited = by_file["quill-court-2/site.yaml"]
        assert edited.valid and edited.events
    finally:
        w.stop()
        h.close()
    record("a file past the size limits under watch: other saves taken", "yes (an input error for that file)")


@pytest.mark.skipif(not hasattr(os, "sched_setaffinity"), reason="no CPU affinity on this system")
def test_jobs_are_bounded_by_the_cores_this_process_may_use(demo_copy):
    """A process allowed one core (a container, `taskset`) takes at most 4 worker processes,
    whatever the machine's count of cores (README, limits)."""
    code = ("import os, sys; os.sched_setaffinity(0, {min(os.sched_getaffinity(0))}); "
            "from tracker.cli import main; sys.exit(main(sys.argv[1:]))")
    many = subprocess.run([sys.executable, "-c", code, "check", str(demo_copy), "--jobs", "5"],
                          capture_output=True, text=True, timeout=120)
    assert many.returncode == 2 and "at most 4 worker processes" in many.stderr and "1 core available" in many.stderr
    four = subprocess.run([sys.executable, "-c", code, "check", str(demo_copy), "--jobs", "4"],
                          capture_output=True, text=True, timeout=120)
    assert four.returncode in (0, 1), four.stderr[-500:]
