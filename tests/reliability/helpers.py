"""Editing site files continuously from a thread, as a busy team would."""
from __future__ import annotations

import random
import re
import threading
import time
from pathlib import Path

LENGTH = re.compile(r"length_m: [0-9.]+")


class Editor(threading.Thread):
    """Rewrites a random `length_m` of a random file every few milliseconds until stopped."""

    def __init__(self, files: list[Path], seed: int, pause_s=(0.005, 0.05), limit: int | None = None):
        super().__init__(daemon=True)
        self.files, self.rng, self.pause_s, self.limit = files, random.Random(seed), pause_s, limit
        self.stop = threading.Event()
        self.edits = 0

    def run(self) -> None:
        while not self.stop.is_set() and (self.limit is None or self.edits < self.limit):
            path = self.rng.choice(self.files)
            text = path.read_text()
            spots = list(LENGTH.finditer(text))
            if spots:
                m = self.rng.choice(spots)
                text = text[:m.start()] + f"length_m: {self.rng.randint(2, 60)}.{self.rng.randint(0, 9)}" + text[m.end():]
                if self.rng.random() < 0.5:
                    tmp = path.with_name("." + path.name + ".tmp")
                    tmp.write_text(text)
                    tmp.replace(path)          # an atomic save
                else:
                    path.write_text(text)      # a save in place
                self.edits += 1
            time.sleep(self.rng.uniform(*self.pause_s))


def recorded_matches_disk(history, root: Path, files: list[Path]) -> list[str]:
    """Files whose latest recorded content is not what is on disk."""
    from tracker.loading.estate import sha256_hex
    latest = history.latest_by_file()
    return [p.relative_to(root).as_posix() for p in files
            if latest.get(p.relative_to(root).as_posix(), (0, None))[1] != sha256_hex(p.read_bytes())]
