"""Standard output and error for the command line, made hard to break and hard to abuse.

* A reader that goes away (`izwatch check | head -1`) does not change the answer: the rest of
  the output is dropped and the command finishes its work and exits with its real code.
* A closed standard output or error (`>&-`) is written to nowhere, not a crash.
* A terminal or pipe whose encoding cannot show a character (`PYTHONIOENCODING=latin-1`, an old
  locale) gets an escape for it instead of an error.
* As a last line of defence behind the escaping of each field (tracker.output.terminal_text),
  a control, separator or bidirectional character that reaches the stream is written as a
  ``\\uXXXX`` escape (valid inside JSON too); only the line break passes.
"""
from __future__ import annotations

import errno
import os
import re
import sys

from tracker.output.terminal_text import BIDI, SEPARATORS

# Every unsafe character but the line break (terminal_text.is_unsafe, as one pattern).
_UNSAFE = re.compile("[\x00-\x09\x0b-\x1f\x7f-\x9f" + "".join(sorted(BIDI | SEPARATORS)) + "]")
_GONE = (errno.EPIPE, errno.EBADF, errno.ECONNRESET, errno.EINVAL)


def _escape(m: re.Match) -> str:
    return f"\\u{ord(m.group()):04x}"


class CommandStream:
    """A text stream for stdout or stderr (see the module's note)."""

    def __init__(self, inner):
        self._inner = inner
        self.gone = inner is None     # nothing more is written (the reader has gone, or there never was one)
        self.broken = False           # the reader went away while we wrote

    # -- writing --------------------------------------------------------------------------

    def write(self, text: str) -> int:
        if self.gone:
            return len(text)
        safe = _UNSAFE.sub(_escape, text)
        try:
            try:
                self._inner.write(safe)
            except UnicodeEncodeError:
                enc = self._inner.encoding or "ascii"
                self._inner.write(safe.encode(enc, "backslashreplace").decode(enc))
        except (BrokenPipeError, ConnectionResetError):
            self._drop()
        except OSError as exc:
            if exc.errno not in _GONE:
                raise
            self._drop()
        except ValueError:      # the stream was closed under us
            self._drop()
        return len(text)

    def write_control(self, text: str) -> None:
        """Write `text` as it is (the progress line's carriage return): for our own output only."""
        if self.gone:
            return
        try:
            self._inner.write(text)
        except (OSError, ValueError):
            self._drop()

    def writelines(self, lines) -> None:
        for line in lines:
            self.write(line)

    def flush(self) -> None:
        if self.gone:
            return
        try:
            self._inner.flush()
        except (OSError, ValueError):
            self._drop()

    def _drop(self) -> None:
        """The reader has gone: say nothing more, and point the descriptor at /dev/null so that
        the interpreter's own last flush finds nowhere to fail."""
        self.gone = self.broken = True
        try:
            fd = self._inner.fileno()
        except (AttributeError, OSError, ValueError):
            return          # not a real descriptor (a test's capture): nothing will flush to it
        try:
            null = os.open(os.devnull, os.O_WRONLY)
            os.dup2(null, fd)
            os.close(null)
        except OSError:
            pass

    # -- what the rest of the code asks of a stream -----------------------------------------

    def isatty(self) -> bool:
        if self.gone:
            return False
        try:
            return self._inner.isatty()
        except (OSError, ValueError):
            return False

    def fileno(self) -> int:
        if self._inner is None:
            raise OSError(errno.EBADF, "no such stream")
        return self._inner.fileno()

    @property
    def encoding(self) -> str:
        return getattr(self._inner, "encoding", None) or "utf-8"

    def __getattr__(self, name):
        return getattr(self._inner, name)


def _fill_closed_descriptors() -> None:
    """Descriptors 0-2 closed at start are opened on /dev/null, so that no file we open later
    (a report, a temporary file) takes their number and receives what was meant for them."""
    for fd in (0, 1, 2):
        try:
            os.fstat(fd)
        except OSError:
            try:
                got = os.open(os.devnull, os.O_RDWR)
            except OSError:
                return
            if got != fd:
                os.dup2(got, fd)
                os.close(got)


class guarded:
    """`with guarded():` — sys.stdout and sys.stderr are CommandStreams inside, restored after."""

    def __enter__(self):
        _fill_closed_descriptors()
        self._saved = sys.stdout, sys.stderr
        if not isinstance(sys.stdout, CommandStream):
            sys.stdout = CommandStream(sys.stdout)
        if not isinstance(sys.stderr, CommandStream):
            sys.stderr = CommandStream(sys.stderr)
        return sys.stdout

    def __exit__(self, *exc):
        try:
            sys.stdout.flush()
            sys.stderr.flush()
        finally:
            sys.stdout, sys.stderr = self._saved
        return False


def stdout_gone() -> bool:
    """True once standard output's reader has gone away (a watcher then stops, as a pipeline
    expects); a standard output closed from the start is not a reader going away."""
    return bool(getattr(sys.stdout, "broken", False))
