"""A progress line on stderr for long runs: drawn only on a terminal, only once a run has taken
more than a second, at most ten times a second; silent when stderr is not a terminal.
A subclass may draw it elsewhere (the terminal UI's status line)."""
from __future__ import annotations

import sys
import time


class Progress:
    def __init__(self, total: int, label: str, stream=None, delay_s: float = 1.0):
        self.total, self.label = total, label
        self.stream = stream or sys.stderr
        self.live = bool(getattr(self.stream, "isatty", lambda: False)())
        self.start = time.monotonic()
        self.delay_s = delay_s
        self._last = 0.0
        self._drawn = False
        self.done = 0

    def advance(self, n: int = 1) -> None:
        self.done += n
        if not self.live:
            return
        now = time.monotonic()
        if now - self.start < self.delay_s or now - self._last < 0.1:
            return
        self._last = now
        self.draw(self.line())
        self._drawn = True

    def bar(self, width: int) -> str:
        frac = min(1.0, self.done / self.total) if self.total else 1.0
        return "#" * int(frac * width) + "-" * (width - int(frac * width))

    def line(self) -> str:
        return f"{self.label} [{self.bar(30)}] {self.done}/{self.total}"

    def _write(self, text: str) -> None:
        # the command line's stream escapes control characters; the carriage return is ours
        getattr(self.stream, "write_control", self.stream.write)(text)

    def draw(self, line: str) -> None:
        self._write("\r" + line)
        self.stream.flush()

    def close(self) -> None:
        if self._drawn:
            self._write("\r" + " " * (len(self.label) + 50) + "\r")
            self.stream.flush()
