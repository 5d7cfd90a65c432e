"""Text from site files and from users, made safe to show on a terminal.

A name, an author (`--by`) or a note comes from outside. Shown raw, a carriage return lets the
rest of a line overwrite what went before (a failing circuit reads "ok"), an escape sequence can
retitle the terminal or clear the screen, and a bidirectional override reorders what is seen.
Every text surface (check, watch, replace, ack, history, report's messages, the terminal UI)
passes such text through :func:`clean` before showing it: control characters, line and
paragraph separators and the bidirectional formatting characters are shown as visible escapes
(``\\r``, ``\\x1b``, ``\\u202e``), so what is on screen is what is in the file.

Ids are refused outright when they hold any of these (:func:`first_unsafe` says where).
"""
from __future__ import annotations

import unicodedata

# Unicode's bidirectional formatting characters (UAX #9, "Explicit Directional Embeddings,
# Overrides and Isolates", and the implicit marks ALM, LRM, RLM).
BIDI = frozenset("\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069")
# Line and paragraph separators (categories Zl, Zp): some terminals break the line there.
SEPARATORS = frozenset("\u2028\u2029")
_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}


def is_unsafe(ch: str) -> bool:
    """A character that must not reach a terminal as it is: C0 and C1 controls and DEL
    (category Cc), line/paragraph separators and bidirectional formatting characters."""
    return ch in BIDI or ch in SEPARATORS or unicodedata.category(ch) == "Cc"


def _escape(ch: str) -> str:
    if ch in _NAMED:
        return _NAMED[ch]
    code = ord(ch)
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"


def clean(text) -> str:
    """`text` with every unsafe character shown as an escape; anything else unchanged.
    None gives "" (nothing to show); a non-string is shown by its str()."""
    if text is None:
        return ""
    if not isinstance(text, str):
        text = str(text)
    if text.isprintable():   # the common case: no control, separator or format character at all
        return text
    return "".join(_escape(ch) if is_unsafe(ch) else ch for ch in text)


def clean_lines(text) -> str:
    """A message of several lines: each line cleaned, the line breaks kept."""
    return "\n".join(clean(line) for line in ("" if text is None else str(text)).split("\n"))


def first_unsafe(text: str) -> int | None:
    """The index of the first unsafe character of `text` (None: there is none)."""
    if text.isprintable():
        return None
    for i, ch in enumerate(text):
        if is_unsafe(ch):
            return i
    return None
