"""A history grown by edits, for the benchmark's `report --site` as the history grows.

    python -m tests.benchmark.grow ESTATE --to REVISIONS

Records ESTATE's first record if it has no history yet, then edits one lighting load after
another across the estate's sites (each edit a real change, written to the file and taken by the
watcher's own processing, as a save would be) until the history holds REVISIONS revisions; the
files are left as they were found. Prints one JSON line: the revisions held and the seconds taken.
"""
from __future__ import annotations

import argparse
import json
import re
import time
from pathlib import Path

from tracker.history import History, default_db_path
from tracker.tracking.authors import Authors
from tracker.watcher import Watcher


def grow(root: Path, to: int) -> dict:
    t0 = time.perf_counter()
    history = History.open(default_db_path(root))
    watcher = Watcher(root, history, Authors(root, by="benchmark"))
    try:
        watcher.start()
        sites = sorted(p / "site.yaml" for p in root.iterdir() if p.is_dir() and not p.name.startswith("."))
        texts = {p: p.read_text() for p in sites}
        k = 0
        while history.count() < to:
            site = sites[k % len(sites)]
            text = texts[site]
            match = re.search(r"kind: lighting, power_kw: ([0-9.]+)", text)
            if match:
                site.write_text(text.replace(match.group(0), f"kind: lighting, power_kw: {0.01 * (k % 90 + 1):.2f}", 1))
                watcher.process([site.relative_to(root).as_posix()])
            k += 1
        for site, text in texts.items():
            if site.read_text() != text:
                site.write_text(text)
                watcher.process([site.relative_to(root).as_posix()])
        return {"revisions": history.count(), "seconds": time.perf_counter() - t0}
    finally:
        watcher.stop()
        history.close()


def main() -> None:
    ap = argparse.ArgumentParser(description="grow an estate's history by edits")
    ap.add_argument("path")
    ap.add_argument("--to", type=int, required=True)
    a = ap.parse_args()
    print(json.dumps(grow(Path(a.path), a.to)))


if __name__ == "__main__":
    main()
