"""Random edits to a valid site file never produce a traceback: the loader gives a site or
clean errors with file:line:col (hypothesis)."""
from __future__ import annotations

import re
import string

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tests.conftest import MINIMAL
from tracker.loading import load_estate
from tracker.loading.estate import read_content, sha256_hex

ERROR_RE = re.compile(r"^[^:]+:\d+:\d+: ")

LINES = MINIMAL.splitlines(keepends=True)
TOKENS = ["", "-", ":", "{", "}", "[", "]", "'", '"', "&a", "*a", "!!str", "!!python/object:os.system", "~",
          "null", "1e999", ".nan", "-7", "0", "true", "x: y", "\t", "\x00", "é", "%YAML 1.1", "---", "..."]


@st.composite
def mutated(draw):
    lines = list(LINES)
    for _ in range(draw(st.integers(1, 4))):
        i = draw(st.integers(0, len(lines) - 1))
        action = draw(st.sampled_from(["delete", "duplicate", "insert", "replace_char", "swap"]))
        if action == "delete":
            del lines[i]
        elif action == "duplicate":
            lines.insert(i, lines[i])
        elif action == "insert":
            pos = draw(st.integers(0, len(lines[i])))
            lines[i] = lines[i][:pos] + draw(st.sampled_from(TOKENS)) + lines[i][pos:]
        elif action == "replace_char" and lines[i]:
            pos = draw(st.integers(0, len(lines[i]) - 1))
            lines[i] = lines[i][:pos] + draw(st.sampled_from(string.printable)) + lines[i][pos + 1:]
        elif action == "swap" and len(lines) > 1:
            j = draw(st.integers(0, len(lines) - 1))
            lines[i], lines[j] = lines[j], lines[i]
        if not lines:
            lines = [""]
    return "".join(lines)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(mutated())
def test_random_edits_never_traceback(text):
    raw = text.encode("utf-8", errors="surrogatepass")
    result = read_content(raw, "flat-1/site.yaml", sha256_hex(raw))
    for err in result.errors:
        assert ERROR_RE.match(str(err)), str(err)
        assert err.line >= 1 and err.col >= 1


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(mutated())
def test_random_edits_through_the_whole_loader(tmp_path_factory, text):
    root = tmp_path_factory.mktemp("fuzz")
    (root / "flat-1").mkdir()
    (root / "flat-1" / "site.yaml").write_text(text, encoding="utf-8", errors="surrogatepass")
    estate = load_estate(root)
    assert bool(estate.errors) != bool(estate.sites)
    for err in estate.errors:
        assert ERROR_RE.match(str(err)), str(err)
