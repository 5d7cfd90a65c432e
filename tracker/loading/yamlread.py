"""Safe, bounded YAML reading with exact locations for errors.

The happy path parses with libyaml (PyYAML's ``CSafeLoader``): safe construction only, so a
``!!python/...`` tag is an error and nothing runs. Locations are computed only when an error
needs them, by composing the file into nodes (which carry line and column marks).
"""
from __future__ import annotations

import datetime
import re

import yaml

from tracker.loading.errors import InputError

MAX_FILE_BYTES = 8 * 1024 * 1024  # a board file of 1,000 circuits is about 0.6 MiB
MAX_EXPANDED_NODES = 200_000      # bound on the size of a document once aliases are expanded
MAX_DEPTH = 64                    # for documents with anchors; libyaml itself stops at 1,000 levels
MAX_LIST_ITEMS = 2_000            # items of any one list: circuits per file, boards, loads, results
# Bounds checked on the text before parsing, so that a file whose parsing alone would take seconds
# and hundreds of MiB is refused at once (str.count over 8 MiB: milliseconds). A value in YAML
# begins after a line break (libyaml also breaks lines at a lone CR, NEL, U+2028 and U+2029), ',',
# '-', ':', '?', '[' or '{', so these marks bound the values a document holds (at most two per mark:
# a key and its value). Measured on this project's files: the demo's files carry 50 to 90 marks per
# circuit with their comments, the benchmark's generated ones 43, so 100,000 marks are 1,100 to
# 2,300 circuits; a file of 100,000 marks of anything reads in about 2 s and 120 MiB at most.
# '[' and '{' are bounded apart: libyaml's work per token grows with the depth of flow nesting
# ("[[[[…"), and site files open three or four per circuit.
MAX_MARKS = 100_000
MAX_FLOW_OPENERS = 10_000
_MARK_CHARS = ("\n", "\r", "\x85", "\u2028", "\u2029", ",", "-", ":", "?", "[", "{")
MAX_DIGITS = 30                   # the longest number written in a site file is a few digits

# YAML 1.1, which PyYAML reads, takes number forms that YAML 1.2 and people read otherwise:
# 020 is octal (16), 0x10 hexadecimal, 0b10100 binary, 1:30 base 60 (90), 2_0 is 20; an id
# written 010 becomes "8". Only plain decimal numbers are accepted; the rest are refused with
# what they would have meant.
_DECIMAL_INT = re.compile(r"[-+]?(0|[1-9][0-9]*)")
_DECIMAL_FLOAT = re.compile(r"[-+]?([0-9]+(\.[0-9]*)?|\.[0-9]+)([eE][-+]?[0-9]+)?|[-+]?\.(inf|Inf|INF)|\.(nan|NaN|NAN)")


class _Refused(Exception):
    def __init__(self, message: str, line: int = 1, col: int = 1):
        super().__init__(message)
        self.message, self.line, self.col = message, line, col


_TAG = "tag:yaml.org,2002:"
_STR, _INT, _FLOAT, _BOOL, _NULL = (_TAG + t for t in ("str", "int", "float", "bool", "null"))
_MAP, _SEQ, _MERGE = _TAG + "map", _TAG + "seq", _TAG + "merge"
_TIMESTAMP = _TAG + "timestamp"


class _Unusual(Exception):
    """A node the fast path does not build (merge keys, explicit tags): use the full constructor."""


class _Loader(yaml.CSafeLoader):
    """libyaml's safe loader, faster, and refusing duplicate keys in one mapping.

    Site files repeat the same keys and many of the same values thousands of times, so the
    implicit-tag resolution of plain scalars is cached; documents of plain maps, lists and
    scalars are built by a direct walk of the composed nodes (the result is identical to
    PyYAML's safe constructor, tests/test_loading_fast.py holds it to that). Anything else —
    merge keys, explicit tags — goes through the standard safe constructor, so an unsafe tag
    is still refused.
    """

    _resolved: dict = {}

    def resolve(self, kind, value, implicit):
        if kind is yaml.ScalarNode and implicit[0]:
            tag = self._resolved.get(value)
            if tag is None:
                tag = super().resolve(kind, value, implicit)
                if len(self._resolved) < 200_000:
                    self._resolved[value] = tag
            return tag
        return super().resolve(kind, value, implicit)

    def construct_document(self, node):
        try:
            return self._build(node, {})
        except _Unusual:
            return super().construct_document(node)

    def _build(self, node, memo: dict):
        key = id(node)
        if key in memo:
            return memo[key]
        tag = node.tag
        if tag == _STR:
            out = node.value
        elif tag == _MAP:
            out = {}
            memo[key] = out
            for k, v in node.value:
                if k.tag == _MERGE or not isinstance(k, yaml.ScalarNode):
                    raise _Unusual   # merge keys and complex keys: the standard constructor decides
                name = self._build(k, memo)
                if name in out:
                    m = k.start_mark
                    raise _Refused(f"duplicate key '{k.value}' (the later one would silently win)",
                                   m.line + 1, m.column + 1)
                out[name] = self._build(v, memo)
            return out
        elif tag == _SEQ:
            _short_list(node)
            out = []
            memo[key] = out
            out.extend(self._build(v, memo) for v in node.value)
            return out
        elif tag == _INT:
            out = self.construct_yaml_int(node)
        elif tag == _FLOAT:
            out = self.construct_yaml_float(node)
        elif tag == _BOOL:
            out = self.construct_yaml_bool(node)
        elif tag == _NULL:
            out = None
        elif tag == _TIMESTAMP:
            out = self.construct_yaml_timestamp(node)
        else:
            raise _Unusual
        memo[key] = out
        return out

    def construct_yaml_int(self, node):
        _plain_number(node, _DECIMAL_INT)
        return super().construct_yaml_int(node)

    def construct_yaml_float(self, node):
        _plain_number(node, _DECIMAL_FLOAT)
        return super().construct_yaml_float(node)

    def construct_sequence(self, node, deep=False):
        _short_list(node)
        return super().construct_sequence(node, deep=deep)

    def construct_yaml_timestamp(self, node):
        # A plain scalar shaped like a date but naming no day of the calendar (2026-02-30) would
        # raise from deep inside the constructor: refuse it with its place in the file instead.
        try:
            return super().construct_yaml_timestamp(node)
        except ValueError:
            m = node.start_mark
            raise _Refused(f"'{node.value}' is not a date of the calendar (YYYY-MM-DD)",
                           m.line + 1, m.column + 1) from None

    def construct_mapping(self, node, deep=False):
        # the standard path (documents with merge keys or explicit tags) refuses duplicates too
        seen = set()
        for key_node, _ in node.value:
            if isinstance(key_node, yaml.ScalarNode) and key_node.tag != _MERGE:
                if key_node.value in seen:
                    m = key_node.start_mark
                    raise _Refused(f"duplicate key '{key_node.value}' (the later one would silently win)",
                                   m.line + 1, m.column + 1)
                seen.add(key_node.value)
        return super().construct_mapping(node, deep=deep)


_Loader.add_constructor(_TIMESTAMP, _Loader.construct_yaml_timestamp)   # the standard path too
_Loader.add_constructor(_INT, _Loader.construct_yaml_int)
_Loader.add_constructor(_FLOAT, _Loader.construct_yaml_float)


def _plain_number(node, form: re.Pattern) -> None:
    """Refuse a number not written as a plain decimal (see _DECIMAL_INT), or far too long."""
    text, m = node.value, node.start_mark
    digits = sum(ch.isdigit() for ch in text)
    if digits > MAX_DIGITS:
        raise _Refused(f"a number of {digits:,} digits: numbers in site files are a few digits long",
                       m.line + 1, m.column + 1)
    if form.fullmatch(text):
        return
    plain = text.lstrip("+-")
    if "_" in text:
        why = f"YAML 1.1 would read it as {text.replace('_', '')} (it drops '_')"
    elif ":" in text:
        why = "YAML 1.1 would read it as a base-60 number (1:30 is 90)"
    elif plain[:2].lower() in ("0x", "0o", "0b"):
        why = {"0x": "a hexadecimal", "0o": "an octal", "0b": "a binary"}[plain[:2].lower()] + " number"
    elif plain.startswith("0") and plain[1:2].isdigit():
        why = "YAML 1.1 would read a leading 0 as octal (020 is 16)"
    else:
        why = "not a plain decimal number"
    raise _Refused(f"'{text}': {why}; write the number in plain decimal (or put text in quotes, \"{text}\")",
                   m.line + 1, m.column + 1)


def _short_list(node) -> None:
    if len(node.value) > MAX_LIST_ITEMS:
        m = node.start_mark
        raise _Refused(f"a list of {len(node.value):,} items; a site file's lists hold at most {MAX_LIST_ITEMS:,} "
                       "(circuits per file, boards, loads): split the site into more files (one file per board)",
                       m.line + 1, m.column + 1)


def decode(raw: bytes, rel: str) -> tuple[str | None, list[InputError]]:
    """Bytes → text, refusing oversized, binary and non-UTF-8 files."""
    if len(raw) > MAX_FILE_BYTES:
        return None, [InputError(rel, 1, 1, f"file is {len(raw):,} bytes; site files are limited to "
                                             f"{MAX_FILE_BYTES:,} bytes (split the site into one file per board)")]
    if b"\x00" in raw:
        off = raw.index(b"\x00")
        line, col = _line_col_of_offset(raw, off)
        return None, [InputError(rel, line, col, "binary content (NUL byte): not a YAML text file")]
    if raw.startswith(b"\xef\xbb\xbf"):
        raw = raw[3:]
    try:
        return raw.decode("utf-8"), []
    except UnicodeDecodeError as exc:
        line, col = _line_col_of_offset(raw, exc.start)
        return None, [InputError(rel, line, col, f"not valid UTF-8 (byte 0x{raw[exc.start]:02x}); "
                                                 "save the file as UTF-8")]


def _line_col_of_offset(raw: bytes, offset: int) -> tuple[int, int]:
    line = raw.count(b"\n", 0, offset) + 1
    start = raw.rfind(b"\n", 0, offset) + 1
    return line, offset - start + 1


def marks(text: str) -> tuple[int, int]:
    """(marks that can begin a value, flow openers '[' and '{') of a text; a CR LF is one break."""
    counts = {ch: text.count(ch) for ch in _MARK_CHARS}
    return sum(counts.values()) - text.count("\r\n"), counts["["] + counts["{"]


def _bulk_problem(text: str) -> str | None:
    total, openers = marks(text)
    split = "split the site into more files (one file per board)"
    if total > MAX_MARKS:
        return (f"too large to read: {total:,} places where a value can begin (line breaks and ',' '-' ':' '?' "
                f"'[' '{{'); a site file holds at most {MAX_MARKS:,}, about 1,500 circuits: {split}")
    if openers > MAX_FLOW_OPENERS:
        return (f"too large to read: {openers:,} '[' and '{{'; a site file holds at most {MAX_FLOW_OPENERS:,} "
                f"(about four a circuit): {split}")
    return None


def parse(text: str, rel: str) -> tuple[object, list[InputError]]:
    """Text → document. Errors carry the file, line and column libyaml reports."""
    problem = _bulk_problem(text)
    if problem:
        return None, [InputError(rel, 1, 1, problem)]
    if not text.strip():
        return None, [InputError(rel, 1, 1, "file is empty; a site file is a YAML mapping "
                                            "(site, supply, boards, circuits)")]
    try:
        data = yaml.load(text, Loader=_Loader)  # noqa: S506 - _Loader is a safe loader
    except _Refused as exc:
        return None, [InputError(rel, exc.line, exc.col, exc.message)]
    except yaml.MarkedYAMLError as exc:
        line, col, what = _syntax_error(exc)
        if "maximum nesting depth" in str(exc):
            what = "nested too deeply (libyaml's nesting limit); site files nest a few levels only"
        if "could not determine a constructor" in str(exc):
            what = f"tag {_tag_of(exc)} is not allowed (site files are plain data)"
        return None, [InputError(rel, line, col, f"YAML: {what}")]
    except yaml.YAMLError as exc:
        return None, [InputError(rel, 1, 1, f"YAML: {exc}")]
    except RecursionError:
        return None, [InputError(rel, 1, 1, f"nested too deeply (more than {MAX_DEPTH} levels)")]
    if data is None:
        return None, [InputError(rel, 1, 1, "file holds only comments; a site file is a YAML mapping "
                                            "(site, supply, boards, circuits)")]
    if "&" in text:  # anchors present: bound what aliases expand to
        problem = _expansion_problem(data)
        if problem:
            return None, [InputError(rel, 1, 1, problem)]
    if not isinstance(data, dict):
        kind = {list: "a list", str: "a single text value"}.get(type(data), f"a single {type(data).__name__}")
        return None, [InputError(rel, 1, 1, f"the top level is {kind}; a site file is a mapping with the keys "
                                            "site, supply, boards, circuits")]
    return data, []


def dates_as_text(doc: dict, keys=("site", "inspections")) -> dict:
    """Dates under `keys` as ISO text (YYYY-MM-DD), as the schema describes them.

    YAML reads an unquoted 2026-03-11 as a date and a quoted one as text; both mean the same day,
    so the document is validated and built from one form. Only the parts of a site file that hold
    dates are walked (a large board file is not).
    """
    for key in keys:
        if key in doc:
            doc[key] = _dates_as_text(doc[key], 0)
    return doc


def _dates_as_text(obj, depth: int):
    if isinstance(obj, datetime.date):   # (a datetime is a date too: its text keeps the time)
        return obj.isoformat()
    if depth > MAX_DEPTH:
        return obj
    if isinstance(obj, dict):
        for k, v in obj.items():
            obj[k] = _dates_as_text(v, depth + 1)
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            obj[i] = _dates_as_text(v, depth + 1)
    return obj


# Where libyaml notices a mistake only on a later line, the mistake is where the construct began:
# a key without its ':' is noticed at the next line, a quote or a bracket left open at the next
# token or the end of the file. Point at the start of the construct, and say what was noticed.
_OPENED_AT = {
    "while scanning a simple key": "a key without ':' after it",
    "while scanning a quoted scalar": "a quoted text whose closing quote is missing",
    "while parsing a flow mapping": "a '{' that is not closed",
    "while parsing a flow sequence": "a '[' that is not closed",
}


def _syntax_error(exc: yaml.MarkedYAMLError) -> tuple[int, int, str]:
    """(line, col, message) of a YAML syntax error, at the line of the mistake."""
    pm, cm = exc.problem_mark, exc.context_mark
    what = exc.problem or exc.context or "not valid YAML"
    opened = _OPENED_AT.get(exc.context or "")
    if opened and cm is not None and pm is not None and pm.line > cm.line:
        return cm.line + 1, cm.column + 1, f"{opened} ({what}, noticed at line {pm.line + 1})"
    mark = pm or cm
    line, col = (mark.line + 1, mark.column + 1) if mark else (1, 1)
    return line, col, what


def _tag_of(exc: yaml.MarkedYAMLError) -> str:
    text = str(exc.problem or "")
    return text.rsplit(" ", 1)[-1] if "tag" in text else "(unknown)"


def _expansion_problem(data) -> str | None:
    """Size of the document with every alias expanded, computed without expanding it."""
    sizes: dict[int, int] = {}

    def size(obj, depth: int) -> int:
        if depth > MAX_DEPTH:
            raise _Refused(f"nested too deeply (more than {MAX_DEPTH} levels)")
        if not isinstance(obj, (dict, list)):
            return 1
        key = id(obj)
        if key in sizes:
            return sizes[key]
        children = obj.values() if isinstance(obj, dict) else obj
        total = 1
        for child in children:
            total += size(child, depth + 1)
            if total > MAX_EXPANDED_NODES:
                raise _Refused("aliases expand to more than "
                               f"{MAX_EXPANDED_NODES:,} values (an alias bomb?); refused")
        sizes[key] = total
        return total

    try:
        size(data, 1)
    except _Refused as exc:
        return exc.message
    return None


class Locator:
    """Maps element paths of one file to (line, col) of the key or item at fault."""

    def __init__(self, text: str):
        self._text = text
        self._root = None
        self._done = False

    def _tree(self):
        if not self._done:
            self._done = True
            try:
                self._root = yaml.compose(self._text, Loader=yaml.CSafeLoader)
            except (yaml.YAMLError, RecursionError):
                self._root = None
        return self._root

    def locate(self, path: tuple) -> tuple[int, int]:
        """Line and column (from 1) of the deepest node of `path` found in the file.

        For a mapping key the key itself is reported (``csa_mm2: 7`` → the ``c``); for a
        list item, the start of the item.
        """
        node = self._tree()
        if node is None:
            return 1, 1
        mark = node.start_mark
        for part in path:
            if isinstance(node, yaml.MappingNode) and isinstance(part, str):
                found = None
                for key_node, value_node in node.value:
                    if isinstance(key_node, yaml.ScalarNode) and key_node.value == part:
                        found = (key_node, value_node)
                if found is None:
                    break
                mark, node = found[0].start_mark, found[1]
            elif isinstance(node, yaml.SequenceNode) and isinstance(part, int) and 0 <= part < len(node.value):
                node = node.value[part]
                mark = node.start_mark
            else:
                break
        return mark.line + 1, mark.column + 1
