"""The terminal UI driven headless on an estate, for the benchmark (not part of the test suite).

    python -m tests.benchmark.tui_pilot ESTATE [--edits 20]

It starts `izwatch tui` in a headless Textual pilot on ESTATE (with whatever history the estate
already has), and prints one JSON line:

- `watching_s`: from the app's start to its first snapshot on screen;
- `idle_mib`: the process's resident memory once the UI watches and is idle;
- save → row on screen: each edit sets one lighting load to 60 kW (the circuit then fails its
  capacity check and comes to the top of the problem list) and is then undone (the row leaves the
  list); the time from the write to the list holding the change, once the UI has handled every
  message the snapshot brought (p50, p95, max over the edits);
- `peak_mib`: the process's peak resident memory.
"""
from __future__ import annotations

import argparse
import asyncio
import json
import re
import statistics
import time
from pathlib import Path

from tracker.tracking.authors import Authors

STEP_S = 0.0005          # how often the list is looked at while waiting for a change


def _status_mib(field: str) -> float:
    for line in Path("/proc/self/status").read_text().splitlines():
        if line.startswith(field + ":"):
            return int(line.split()[1]) / 1024.0
    return float("nan")


async def _until(pilot, condition, timeout: float) -> None:
    t0 = time.perf_counter()
    while not condition():
        if time.perf_counter() - t0 > timeout:
            raise TimeoutError("the UI did not show the change in time")
        await asyncio.sleep(STEP_S)


async def drive(root: Path, edits: int) -> dict:
    from tui.app import IzwatchApp

    t_start = time.perf_counter()
    app = IzwatchApp(root, authors=Authors(root, by="benchmark"))
    out: dict = {}
    async with app.run_test(size=(160, 48)) as pilot:
        await _until(pilot, lambda: app.snapshots >= 1, 1800)
        await pilot.pause()
        out["watching_s"] = time.perf_counter() - t_start
        await asyncio.sleep(1.0)
        out["idle_mib"] = _status_mib("VmRSS")
        lst = app.overview.problem_list
        sites = sorted(p for p in root.iterdir() if p.is_dir() and not p.name.startswith("."))
        step = max(1, len(sites) // max(1, edits // 2))
        times, listed = [], []
        for k in range(edits // 2):
            site = sites[(k * step + 1) % len(sites)] / "site.yaml"
            text = site.read_text()
            match = re.search(r"kind: lighting, power_kw: ([0-9.]+)", text)
            if not match:
                continue
            broken = text.replace(match.group(0), "kind: lighting, power_kw: 60", 1)
            n0 = len(lst.rows)
            for new_text, shown in ((broken, lambda n0=n0: len(lst.rows) > n0),
                                    (text, lambda n0=n0: len(lst.rows) == n0)):
                t = time.perf_counter()
                site.write_text(new_text)
                await _until(pilot, shown, 60)
                listed.append(time.perf_counter() - t)
                await pilot.pause()          # every message the snapshot brought handled
                times.append(time.perf_counter() - t)
                await asyncio.sleep(0.05)
        q = statistics.quantiles(times, n=20) if len(times) >= 2 else times * 19
        out.update({"edits": len(times), "save_to_row_p50_s": statistics.median(times),
                    "save_to_row_p95_s": q[18], "save_to_row_max_s": max(times),
                    "listed_p50_s": statistics.median(listed),
                    "peak_mib": _status_mib("VmHWM")})
        await pilot.press("q")
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description="the terminal UI, headless, timed on an estate")
    ap.add_argument("path")
    ap.add_argument("--edits", type=int, default=20)
    a = ap.parse_args()
    print(json.dumps(asyncio.run(drive(Path(a.path), a.edits))))


if __name__ == "__main__":
    main()
