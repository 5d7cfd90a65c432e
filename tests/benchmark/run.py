"""The izwatch benchmark (not part of the test suite).

    python -m tests.benchmark.run [--sizes 1000,10000,100000] [--edits 50] [--workdir DIR] [--out FILE]

For each estate size (synthetic, seeded: tests/benchmark/generate.py) it measures, each in a fresh
process so that one measurement cannot warm the next:

- the bare parse: every site file read and parsed with libyaml's safe loader, nothing else —
  the baseline the other figures are divided by (absolute times on a shared machine drift; the
  ratios hold);
- a cold `izwatch check --json` (wall time and peak resident memory), and the same in one
  process (`--jobs 1`) for comparison; at 1k and 10k circuits, where a run takes seconds, each of
  these three is the best of three runs;
- one incremental re-check in-process after a one-load edit: the median of 100 re-checks (50
  edits on 50 sites, each then undone), with every estate's state held at once as the watcher
  holds it and the edits alternating between the sizes, so that the machine's drift falls on all
  of them alike; and the terminal UI's new snapshot after each;
- at the smallest size and at every size from 10k: the watcher (`izwatch watch --json`): its first
  start (which makes the history's first record) and its resident memory once idle; end-to-end
  latency from a saved file to its event (p50 and p95 over --edits edits, alternating a plain
  write and an atomic rename, each then undone); a few saves written in two halves with a pause
  between (the count of input errors they caused, which must be 0); its start on the unchanged
  estate with that history; and a burst of 50 saves of one file paced at 50 a second: how long
  the saves took, and the time from the last save to its event;
- at the same sizes, the terminal UI driven headless on the estate and its history
  (tests/benchmark/tui_pilot.py): its start until the first snapshot is on screen, its idle
  memory, and save → row on screen (p50 and p95 over --ui-edits saves);
- at every size from 10k, after the watcher's runs (its history then holds them): `report --site`
  for one site and `report --all-sites` into a folder (wall time, the peak memory of all the
  report's processes together — their proportional set sizes summed — and of the largest one);
  each report must exit 0, or the benchmark stops instead of timing a failure;
- `report --site` as the history grows: on a copy of the smallest estate, the history grown by
  edits to each size of --growth (1,000 and 10,000 revisions; tests/benchmark/grow.py), the report
  timed at each (best of three) as it comes and again after `izwatch verify` has recorded the head
  it found intact (a report then recomputes only the revisions after that head);
- once: every hostile input of tests/reliability/test_hostile_yaml.py refused by `izwatch check`
  (the slowest refusal; the reliability suite checks that each is refused, this how quickly);
  every file past the size limits of tests/reliability/test_size_limits.py (the slowest refusal
  and its peak memory), and the costliest files within them: 50,000 keys under an ignored key
  (100,000 marks, the most a file holds) and a site file of 1,500 generated circuits.

It prints one JSON document: the figures, the ratios and each target with whether it is met (and
if not, by how much); and on stderr one line per target: the figure, its limit, the ratio to the
limit, met or missed by how much. The targets are the performance issue's table, row by row,
then the earlier ones kept so that a regression shows.
"""
from __future__ import annotations

import argparse
import json
import os
import platform
import queue
import re
import resource
import shutil
import signal
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

from tests.benchmark.generate import generate

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent.parent
PER_SITE = 20

PARSE = """
import sys, time, glob, yaml
t = time.perf_counter()
for path in sorted(glob.glob(sys.argv[1] + '/*/*.yaml')):
    with open(path, 'rb') as fh:
        yaml.load(fh.read(), Loader=yaml.CSafeLoader)
print(time.perf_counter() - t)
"""

INCREMENTAL = """
import gc, json, random, statistics, sys, time
from pathlib import Path
from tracker.history import History
from tracker.tracking.state import EstateState
from tracker.tracking.outcome import to_revision
from tui.snapshot import SHOW_FAILING, RowCache, build, visible

# Every estate is held at once, as the watcher holds its state (tracker/watcher.py), and the
# edits alternate between them, so that a machine's drift (other load, clock changes) falls on
# every size alike instead of on whichever was measured at a bad moment.
estates = []
for arg in sys.argv[1:]:
    root = Path(arg)
    st = EstateState(root)
    gc.disable()
    st.seed({rel: p.read_bytes() for rel, p in st.disk_files().items()})
    gc.freeze()
    gc.enable()
    history = History.open(None)        # in memory: the UI's snapshot needs a history to read
    cache = RowCache()
    build(st, history, cache)
    folders = random.Random(3).sample(sorted(st.sites), min(50, len(st.sites)))
    estates.append((arg, root, st, history, cache, folders, {"times": [], "rechecked": [], "ui": [], "row": []}))
for i in range(50):
    for arg, root, st, history, cache, folders, acc in estates:
        rel = folders[i % len(folders)] + '/site.yaml'
        text = (root / rel).read_text()
        new = text.replace('kind: lighting, power_kw: ', 'kind: lighting, power_kw: 1', 1)
        for raw in (new, text):             # the edit, then its undoing: two re-checks
            t = time.perf_counter()
            out = st.apply_bytes(rel, raw.encode())
            acc["times"].append(time.perf_counter() - t)
            acc["rechecked"].append(out.rechecked)
            history.record(to_revision(out, "watch", "benchmark"))
            t = time.perf_counter()
            snap = build(st, history, cache)  # what the terminal UI then shows
            acc["ui"].append(time.perf_counter() - t)
            visible(snap.rows, SHOW_FAILING, counts=snap.counts)  # the problem list's default filter
            acc["row"].append(acc["times"][-1] + time.perf_counter() - t)
print(json.dumps({arg: {"median_s": statistics.median(acc["times"]), "min_s": min(acc["times"]),
                        "edits": len(acc["times"]), "circuits_rechecked_median": statistics.median(acc["rechecked"]),
                        "ui_snapshot_median_s": statistics.median(acc["ui"]),
                        "ui_recheck_snapshot_list_median_s": statistics.median(acc["row"])}
                  for arg, *_, acc in estates}))
"""


def run_timed(cmd: list[str], stdout=subprocess.DEVNULL, ok=(0, 1)) -> tuple[float, float, str]:
    """(wall seconds, peak RSS MiB, stdout) of a child process."""
    t = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.PIPE if stdout is None else stdout, stderr=subprocess.PIPE,
                            text=True, cwd=ROOT)
    out = proc.stdout.read() if proc.stdout else ""
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t
    if os.WEXITSTATUS(status) not in ok:
        raise RuntimeError(f"{cmd[:4]} failed: {proc.stderr.read()[-2000:]}")
    return wall, usage.ru_maxrss / 1024.0, out


def _tree(pid: int) -> list[int]:
    """The process and its descendants (Linux /proc)."""
    found = [pid]
    try:
        for tid in os.listdir(f"/proc/{pid}/task"):
            with open(f"/proc/{pid}/task/{tid}/children") as fh:
                for child in fh.read().split():
                    found += _tree(int(child))
    except OSError:
        pass
    return found


def _pss_kib(pid: int) -> int:
    """A process's proportional set size (its own pages, and its share of pages it shares)."""
    try:
        with open(f"/proc/{pid}/smaps_rollup") as fh:
            for line in fh:
                if line.startswith("Pss:"):
                    return int(line.split()[1])
    except OSError:
        pass
    return 0


def run_tree(cmd: list[str], ok=(0,)) -> tuple[float, float, float]:
    """(wall seconds, peak MiB of the process and all its workers together, peak RSS MiB of the
    largest single process) of a child process: the tree's proportional set sizes summed every
    50 ms, so that worker processes count and pages they share are counted once."""
    t = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True, cwd=ROOT)
    err: list[str] = []
    reader = threading.Thread(target=lambda: err.append(proc.stderr.read()), daemon=True)
    reader.start()
    peak = 0
    while True:
        done = proc.poll() is not None
        if not done:
            peak = max(peak, sum(_pss_kib(p) for p in _tree(proc.pid)))
            time.sleep(0.05)
        else:
            break
    wall = time.perf_counter() - t
    reader.join()
    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    if proc.returncode not in ok:
        raise RuntimeError(f"{cmd[:4]} failed (exit {proc.returncode}): {''.join(err)[-2000:]}")
    return wall, peak / 1024.0, usage.ru_maxrss / 1024.0


def estate_path(workdir: Path, n: int) -> Path:
    return workdir / f"estate-{n}"


def estate(workdir: Path, n: int) -> Path:
    path = estate_path(workdir, n)
    marker = path / ".generated"
    if not marker.exists():
        shutil.rmtree(path, ignore_errors=True)
        generate(path, n // PER_SITE, PER_SITE, seed=7)
        marker.write_text("seed 7\n")
    shutil.rmtree(path / ".izwatch", ignore_errors=True)
    return path


def bare_parse(path: Path) -> float:
    wall, _, out = run_timed([sys.executable, "-c", PARSE, str(path)], stdout=None, ok=(0,))
    return wall


def cold_check(path: Path, jobs: int | None = None) -> tuple[float, float]:
    extra = ["--jobs", str(jobs)] if jobs else []
    wall, rss, _ = run_timed([sys.executable, "-m", "tracker.cli", "check", str(path), "--json", *extra])
    return wall, rss


def incremental(paths: list[Path]) -> tuple[dict, float]:
    """{path: figures} of the incremental re-checks, all sizes in one process; and its peak MiB."""
    _, rss, out = run_timed([sys.executable, "-c", INCREMENTAL, *map(str, paths)], stdout=None, ok=(0,))
    return json.loads(out), rss


class WatchProcess:
    def __init__(self, path: Path):
        self.t0 = time.perf_counter()
        self.proc = subprocess.Popen([sys.executable, "-m", "tracker.cli", "watch", str(path), "--json"],
                                     stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True, cwd=ROOT)
        self.lines: queue.Queue = queue.Queue()
        self.input_errors = 0               # input-error events seen on the whole run
        threading.Thread(target=self._read, daemon=True).start()

    def _read(self):
        for line in self.proc.stdout:
            doc = json.loads(line)
            if doc.get("transition") == "input-error":
                self.input_errors += 1
            self.lines.put((time.perf_counter(), doc))

    def wait_for(self, pred, timeout: float = 900.0):
        deadline = time.perf_counter() + timeout
        while True:
            t, doc = self.lines.get(timeout=max(0.1, deadline - time.perf_counter()))
            if pred(doc):
                return t, doc

    def rss_mib(self) -> float:
        """The watcher's resident memory now (Linux)."""
        for line in Path(f"/proc/{self.proc.pid}/status").read_text().splitlines():
            if line.startswith("VmRSS:"):
                return int(line.split()[1]) / 1024.0
        return float("nan")

    def stop(self) -> float:
        self.proc.send_signal(signal.SIGINT)
        _, _, usage = os.wait4(self.proc.pid, 0)
        return usage.ru_maxrss / 1024.0


def save(path: Path, text: str, how: str) -> None:
    """A save as an editor makes it: `plain` (written in place, one open and close), `rename`
    (written beside it, then moved into place), or `halves` (the first half written, a pause,
    then the rest before the close: a watcher looking in between sees a file that does not load)."""
    if how == "rename":
        tmp = path.with_name("." + path.name + ".part")
        tmp.write_text(text)
        os.replace(tmp, path)
    elif how == "halves":
        with path.open("w") as fh:
            fh.write(text[: len(text) // 2])
            fh.flush()
            time.sleep(0.03)
            fh.write(text[len(text) // 2:])
    else:
        path.write_text(text)


def burst(w: WatchProcess, path: Path) -> dict:
    """50 saves of one site file paced at 50 a second, the last one breaking a circuit: how long
    the saves took, and the time from the last save to its event; then the file is put back."""
    site = sorted(p for p in path.iterdir() if p.is_dir() and not p.name.startswith("."))[0] / "site.yaml"
    text = site.read_text()
    old = re.search(r"kind: lighting, power_kw: ([0-9.]+)", text).group(0)
    rel = site.relative_to(path).as_posix()
    t0 = time.perf_counter()
    for i in range(49):
        site.write_text(text.replace(old, f"kind: lighting, power_kw: {0.01 * (i + 1):.2f}", 1))
        time.sleep(max(0.0, t0 + (i + 1) / 50 - time.perf_counter()))
    site.write_text(text.replace(old, "kind: lighting, power_kw: 60", 1))
    t_last = time.perf_counter()
    t_line, _ = w.wait_for(lambda d: d.get("file") == rel and d.get("transition") == "newly-failing", 60)
    site.write_text(text)
    w.wait_for(lambda d: d.get("file") == rel and d.get("transition") == "cleared", 60)
    return {"saves": 50, "saves_s": t_last - t0, "last_save_to_event_s": t_line - t_last}


def hostile_inputs(workdir: Path) -> dict:
    """Each hostile input of the reliability suite, alone in a site, checked in a fresh process."""
    from tests.reliability.test_hostile_yaml import CASES
    times = {}
    for name, content in sorted(CASES.items()):
        site = workdir / "hostile" / "flat-1"
        site.mkdir(parents=True, exist_ok=True)
        if isinstance(content, str):
            content = content.replace("{marker}", str(workdir / "hostile-ran")).encode("utf-8")
        (site / "site.yaml").write_bytes(content)
        times[name], _, _ = run_timed([sys.executable, "-m", "tracker.cli", "check", str(site.parent)], ok=(2,))
    slowest = max(times, key=times.get)
    return {"cases": len(times), "slowest": slowest, "slowest_s": times[slowest],
            "median_s": statistics.median(times.values())}


def size_limits(workdir: Path) -> dict:
    """Files past the size limits refused by `izwatch check` in a fresh process (wall time, peak
    memory), and the costliest files within the limits read and checked."""
    import random

    from tests.benchmark.generate import site_text
    from tests.conftest import MINIMAL
    from tests.reliability.test_size_limits import PAST_THE_LIMITS
    site = workdir / "limits" / "flat-1"
    site.mkdir(parents=True, exist_ok=True)
    (site / "site.yaml").write_text(MINIMAL)
    past = {}
    for name, make in sorted(PAST_THE_LIMITS.items()):
        (site / "big.yaml").write_text(make(), newline="")
        wall, peak, _ = run_timed([sys.executable, "-m", "tracker.cli", "check", str(site.parent)], ok=(2,))
        past[name] = {"s": round(wall, 3), "peak_mib": round(peak, 1)}
    within = {}
    (site / "big.yaml").write_text("x_notes:\n" + "".join(f"  k{i}: 1\n" for i in range(49_990)))
    wall, peak, _ = run_timed([sys.executable, "-m", "tracker.cli", "check", str(site.parent)])
    within["50,000 keys under an ignored key"] = {"s": round(wall, 3), "peak_mib": round(peak, 1)}
    (site / "big.yaml").unlink()
    big = workdir / "limits" / "big-site"
    big.mkdir(parents=True, exist_ok=True)
    for name, text in site_text(random.Random(5), 1, 1_500).items():
        (big / name).write_text(text)
    wall, peak, _ = run_timed([sys.executable, "-m", "tracker.cli", "check", str(big), "--jobs", "1"])
    within["a site file of 1,500 circuits"] = {"s": round(wall, 3), "peak_mib": round(peak, 1)}
    slowest = max(past, key=lambda k: past[k]["s"])
    costliest = max(within, key=lambda k: within[k]["s"])
    return {"past": past, "within": within, "slowest_refusal": slowest, "slowest_refusal_s": past[slowest]["s"],
            "refusal_peak_mib": max(v["peak_mib"] for v in past.values()),
            "costliest_within": costliest, "costliest_within_s": within[costliest]["s"],
            "within_peak_mib": max(v["peak_mib"] for v in within.values())}


def end_to_end(path: Path, edits: int) -> dict:
    """The watcher on the estate: its first start; `edits` saves alternating between a plain
    write and an atomic rename (each breaks a circuit, then is undone), timed from the save to its
    event; its idle memory; a few saves written in two halves (none may be taken as an input
    error); its start on the unchanged estate with that history; and a burst of saves."""
    w = WatchProcess(path)
    t_ready, ready = w.wait_for(lambda d: d.get("event") == "ready")
    first_start = t_ready - w.t0
    time.sleep(1.0)
    idle_mib = w.rss_mib()
    sites = sorted(p for p in path.iterdir() if p.is_dir() and not p.name.startswith("."))
    step = max(1, len(sites) // max(1, edits // 2))
    latencies = {"plain": [], "rename": []}
    halves = 0
    for k in range(edits // 2 + 4):
        site = sites[(k * step) % len(sites)] / "site.yaml"
        text = site.read_text()
        match = re.search(r"kind: lighting, power_kw: ([0-9.]+)", text)
        if not match:
            continue
        old = match.group(0)
        rel = site.relative_to(path).as_posix()
        how = "halves" if k >= edits // 2 else ("plain", "rename")[k % 2]
        for new_text, transition in ((text.replace(old, "kind: lighting, power_kw: 60", 1), "newly-failing"),
                                     (text, "cleared")):
            t = time.perf_counter()
            save(site, new_text, how)
            t_line, _ = w.wait_for(lambda d, rel=rel, tr=transition: d.get("file") == rel
                                   and d.get("transition") == tr, 60)
            if how == "halves":
                halves += 1
            else:
                latencies[how].append(t_line - t)
            time.sleep(0.05)
    watch_rss = w.stop()
    w2 = WatchProcess(path)
    t_ready2, ready2 = w2.wait_for(lambda d: d.get("event") == "ready")
    restart = t_ready2 - w2.t0
    time.sleep(1.0)                         # (its first look at the date's deadlines, after the ready line)
    restart_idle = w2.rss_mib()             # sites taken from their briefs are not read until needed
    bursts = burst(w2, path)
    w2.stop()
    both = latencies["plain"] + latencies["rename"]

    def p95(xs):
        return statistics.quantiles(xs, n=20)[18] if len(xs) >= 2 else max(xs)

    return {"edits": len(both), "p50_s": statistics.median(both), "p95_s": p95(both), "max_s": max(both),
            "plain_p95_s": p95(latencies["plain"]), "rename_p95_s": p95(latencies["rename"]),
            "half_written_saves": halves, "input_errors_recorded": w.input_errors + w2.input_errors,
            "first_start_s": first_start, "restart_unchanged_s": restart,
            "restart_recorded_nothing": ready2.get("revisions") == ready.get("revisions") + len(both) + halves,
            "watch_idle_mib": idle_mib, "restart_idle_mib": restart_idle, "watch_peak_mib": watch_rss,
            "burst": bursts}


def terminal_ui(path: Path, edits: int) -> dict:
    """The terminal UI driven headless on the estate with its history (tests/benchmark/tui_pilot.py)."""
    _, _, out = run_timed([sys.executable, "-m", "tests.benchmark.tui_pilot", str(path), "--edits", str(edits)],
                          stdout=None, ok=(0,))
    return json.loads(out.strip().splitlines()[-1])


def report_growth(path: Path, workdir: Path, counts: list[int]) -> dict:
    """`report --site` of one site on a copy of the estate whose history is grown by edits to
    each of `counts` revisions in turn (tests/benchmark/grow.py): at each size first as it comes
    (the revisions since the last `verify` recomputed: at the first size, all of them), then after
    `izwatch verify` has recorded the head it found intact (a nightly verify: only what came after
    it recomputed). Each report must exit 0 (best of three)."""
    copy = workdir / f"{path.name}-growth"
    shutil.rmtree(copy, ignore_errors=True)
    shutil.copytree(path, copy, ignore=shutil.ignore_patterns(".izwatch"))
    site_id = sorted(p.name for p in copy.iterdir() if p.is_dir() and not p.name.startswith("."))[0]
    report = [sys.executable, "-m", "tracker.cli", "report", str(copy), "--site", site_id,
              "-o", str(workdir / "report-growth.html")]
    out = []
    for n in counts:
        _, _, grown = run_timed([sys.executable, "-m", "tests.benchmark.grow", str(copy), "--to", str(n)],
                                stdout=None, ok=(0,))
        held = json.loads(grown)["revisions"]
        before = min(run_timed(report, ok=(0,))[0] for _ in range(3))
        verify_s = run_timed([sys.executable, "-m", "tracker.cli", "verify", str(copy)], ok=(0,))[0]
        after = min(run_timed(report, ok=(0,))[0] for _ in range(3))
        out.append({"revisions": held, "report_site_unverified_tail_s": before, "verify_s": verify_s,
                    "report_site_s": after})
    return {"site": site_id, "steps": out, "last_over_first": out[-1]["report_site_s"] / out[0]["report_site_s"],
            "last_over_first_unverified_tail": (out[-1]["report_site_unverified_tail_s"]
                                                / out[0]["report_site_unverified_tail_s"])}


def reports(path: Path, workdir: Path) -> dict:
    """`report --site` of the first site and `report --all-sites` of the whole estate, on the
    history the watcher's runs left: wall seconds, the peak memory of all the report's processes
    together and of the largest one. Each must exit 0 (a report that failed is not timed)."""
    site_id = sorted(p.name for p in path.iterdir() if p.is_dir() and not p.name.startswith("."))[0]
    one, one_mib, _ = run_tree([sys.executable, "-m", "tracker.cli", "report", str(path), "--site", site_id,
                                "-o", str(workdir / "report-one.html")])
    out = workdir / "report-all"
    shutil.rmtree(out, ignore_errors=True)
    every, every_mib, largest = run_tree([sys.executable, "-m", "tracker.cli", "report", str(path), "--all-sites",
                                          "-o", str(out)])
    pages = len(list(out.glob("*.html"))) - 1
    shutil.rmtree(out, ignore_errors=True)
    return {"site_s": one, "site_peak_mib": one_mib, "all_sites_s": every, "all_sites_peak_mib": every_mib,
            "all_sites_largest_process_mib": largest, "all_sites_pages": pages}


def main() -> None:
    ap = argparse.ArgumentParser(description="izwatch benchmark")
    ap.add_argument("--sizes", default="1000,10000,100000")
    ap.add_argument("--edits", type=int, default=50)
    ap.add_argument("--ui-edits", type=int, default=20, help="saves timed in the terminal UI at each size")
    ap.add_argument("--growth", default="1000,10000",
                    help="history sizes (revisions) at which `report --site` is timed, on the smallest estate; 0: none")
    ap.add_argument("--workdir", default=None, help="where the synthetic estates go (kept between runs)")
    ap.add_argument("--out", default=None, help="also write the JSON here")
    a = ap.parse_args()
    sizes = [int(x) for x in a.sizes.split(",")]
    growth = [int(x) for x in a.growth.split(",") if int(x) > 0]
    workdir = Path(a.workdir) if a.workdir else Path(tempfile.gettempdir()) / "izwatch-benchmark"
    workdir.mkdir(parents=True, exist_ok=True)
    t_all = time.perf_counter()
    res: dict = {}
    lo, hi = min(sizes), max(sizes)
    for n in sizes:
        path = estate(workdir, n)
        r = res[n] = {"circuits": n, "sites": n // PER_SITE, "files": len(list(path.glob("*/*.yaml")))}
        # the smaller sizes take seconds, where a shared machine's noise is large: best of three
        repeats = 3 if n <= 10000 else 1
        r["repeats"] = repeats
        r["bare_parse_s"] = min(bare_parse(path) for _ in range(repeats))
        checks = [cold_check(path) for _ in range(repeats)]
        r["check_s"], r["check_peak_mib"] = min(c[0] for c in checks), max(c[1] for c in checks)
        r["check_over_parse"] = r["check_s"] / r["bare_parse_s"]
        # the same in one process (`--jobs 1`), for comparison with the one-process parse
        r["check_one_process_s"] = min(cold_check(path, jobs=1)[0] for _ in range(repeats))
        r["check_one_process_over_parse"] = r["check_one_process_s"] / r["bare_parse_s"]
        if n == lo or n >= 10000:
            r["end_to_end"] = end_to_end(path, a.edits)
            r["end_to_end"]["restart_over_check"] = r["end_to_end"]["restart_unchanged_s"] / r["check_s"]
            # the terminal UI on the history the watcher's runs left: a restart, as a user has it
            r["terminal_ui"] = terminal_ui(path, a.ui_edits)
        if n >= 10000:
            r["reports"] = reports(path, workdir)
        print(f"# {n} circuits done ({time.perf_counter() - t_all:.0f} s)", file=sys.stderr, flush=True)
    paths = {n: estate_path(workdir, n) for n in sizes}
    inc, inc_peak = incremental(list(paths.values()))
    for n in sizes:
        res[n]["incremental"] = inc[str(paths[n])]
    print(f"# incremental re-checks done ({time.perf_counter() - t_all:.0f} s)", file=sys.stderr, flush=True)
    growth_res = report_growth(paths[lo], workdir, growth) if growth else None
    if growth_res:
        print(f"# report --site as the history grows done ({time.perf_counter() - t_all:.0f} s)", file=sys.stderr,
              flush=True)
    hostile = hostile_inputs(workdir)
    limits = size_limits(workdir)
    targets = []

    def target(name, value, limit, unit=""):
        """A figure against its limit (every target is an upper bound): met, or missed by how much."""
        entry = {"target": name, "value": round(value, 4), "limit": limit, "unit": unit,
                 "ratio_to_limit": round(value / limit, 3) if limit else None, "met": value <= limit}
        if not entry["met"]:
            entry["missed_by"] = round(value - limit, 4)
        targets.append(entry)

    # The performance issue's table, row by row.
    for n in sizes:
        if n >= 10000 or n == lo:
            e = res[n]["end_to_end"]
            target(f"saved file -> event p95 at {n}, plain write", e["plain_p95_s"], 0.015, "s")
            target(f"saved file -> event p95 at {n}, atomic rename", e["rename_p95_s"], 0.015, "s")
            target(f"input errors recorded for half-written saves at {n} ({e['half_written_saves']} saves)",
                   e["input_errors_recorded"], 0)
    if 100000 in res:
        r = res[100000]
        target("watch idle memory at 100k", r["end_to_end"]["watch_idle_mib"], 100, "MiB")
        target("watch idle memory at 100k after a restart on the unchanged estate", r["end_to_end"]["restart_idle_mib"],
               100, "MiB")
        target("terminal UI idle memory at 100k", r["terminal_ui"]["idle_mib"], 100, "MiB")
        target("watch restart, unchanged 100k estate with its history", r["end_to_end"]["restart_unchanged_s"], 3.0,
               "s")
        target("terminal UI watching after a restart at 100k", r["terminal_ui"]["watching_s"], 4.0, "s")
        target("terminal UI: save -> row on screen at 100k, median", r["terminal_ui"]["save_to_row_p50_s"], 0.060, "s")
        target("terminal UI: re-check + snapshot + list at 100k, in-process median",
               r["incremental"]["ui_recheck_snapshot_list_median_s"], 0.060, "s")
    if growth_res and len(growth_res["steps"]) >= 2:
        first, last = growth_res["steps"][0], growth_res["steps"][-1]
        target(f"report --site after a verify, {last['revisions']} / {first['revisions']} revisions",
               growth_res["last_over_first"], 1.3, "x")
    for n in sizes:
        if "reports" in res[n]:
            target(f"report --all-sites peak memory at {n}, all its processes", res[n]["reports"]["all_sites_peak_mib"],
                   200, "MiB")
    if 100000 in res:
        r = res[100000]
        target("check --jobs 1 / bare parse at 100k", r["check_one_process_over_parse"], 1.8, "x")
        target("check / bare parse at 100k, default jobs", r["check_over_parse"], 1.3, "x")
    # Earlier targets, kept so that a regression shows.
    for n in sizes:
        if n >= 10000:
            target(f"check / bare parse at {n}", res[n]["check_over_parse"], 2.5, "x")
    if 10000 in res and 100000 in res:
        target("check 100k / check 10k (linear: 10)", res[100000]["check_s"] / res[10000]["check_s"], 11, "x")
    if lo != hi:
        target(f"incremental re-check {hi} / {lo}",
               res[hi]["incremental"]["median_s"] / res[lo]["incremental"]["median_s"], 1.5, "x")
        target(f"end-to-end p95 {hi} / {lo}", res[hi]["end_to_end"]["p95_s"] / res[lo]["end_to_end"]["p95_s"], 1.5,
               "x")
        target(f"watch start, unchanged {hi} with history / cold check", res[hi]["end_to_end"]["restart_over_check"],
               1.2, "x")
    if 100000 in res:
        target("check peak memory at 100k", res[100000]["check_peak_mib"], 600, "MiB")
        target("watch peak memory at 100k", res[100000]["end_to_end"]["watch_peak_mib"], 100, "MiB")
    target("slowest hostile input refused", hostile["slowest_s"], 10, "s")
    target("slowest file past the size limits refused (whole check, fresh process)", limits["slowest_refusal_s"], 1, "s")
    target("costliest file within the size limits read and checked", limits["costliest_within_s"], 5, "s")
    doc = {"benchmark": "izwatch/1", "python": platform.python_version(), "machine": platform.machine(),
           "cpus": os.cpu_count(), "total_s": round(time.perf_counter() - t_all, 1),
           "sizes": res, "incremental_process_peak_mib": inc_peak, "report_growth": growth_res,
           "hostile_inputs": hostile, "size_limits": limits, "targets": targets, "all_met": all(t["met"] for t in targets)}
    text = json.dumps(doc, indent=2)
    print(text)
    print(summary(targets), file=sys.stderr)
    if a.out:
        Path(a.out).write_text(text + "\n")


def summary(targets: list[dict]) -> str:
    """One line per target: the figure, its limit, the ratio, and met or missed by how much."""
    lines = []
    for t in targets:
        unit = {"x": " ×", "": ""}.get(t["unit"], " " + t["unit"])
        verdict = "met" if t["met"] else f"MISSED by {t['missed_by']:g}{unit}"
        ratio = f"; {t['ratio_to_limit']:.2f} of the limit" if t["ratio_to_limit"] is not None else ""
        lines.append(f"{t['target']}: {t['value']:g}{unit} (limit {t['limit']:g}{unit}{ratio}) {verdict}")
    return "\n".join(lines)


if __name__ == "__main__":
    main()
