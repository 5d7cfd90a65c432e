"""Helpers for the report tests: building some history on a demo copy, reading the HTML back."""
from __future__ import annotations

import json
from html.parser import HTMLParser
from pathlib import Path

from tracker.cli import main

SHOWER = "quill-court-2/CU1/3/shower"
SHOWER_CIRCUIT = "quill-court-2/CU1/3"
VOID = {"br", "hr", "img", "meta", "link", "col", "wbr", "input", "source", "area", "base", "embed", "param",
        "track"}
# SVG elements written self-closed (<rect/>): the parser reports them as start-and-end.


def run(capsys, *argv) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out = capsys.readouterr()
    return code, out.out, out.err


def shower_swap_and_ack(root: Path, capsys, note: str = "8.5 kW shower fitted, job 2231",
                        by: str = "R. Ashdown-Pike", ack_note: str = "cable upgrade to 10 mm² booked, job 2240",
                        ack_by: str = "M. Quell") -> dict:
    """The README's shower swap (7.5 → 8.5 kW) and an acknowledgement; returns the revisions."""
    code, _, err = run(capsys, "replace", root, SHOWER, "--power-kw", "8.5", "--by", by, "--note", note)
    assert code == 1, err                      # the capacity check newly fails (README, "A replacement")
    code, _, err = run(capsys, "ack", root, SHOWER_CIRCUIT, "--by", ack_by, "--note", ack_note)
    assert code == 0, err
    code, out, _ = run(capsys, "history", root, "--json")
    return {r["id"]: r for r in json.loads(out)}


class Page(HTMLParser):
    """Start tags with their attributes, text, and a check that every element is closed in order."""

    def __init__(self, text: str):
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict]] = []
        self.text: list[str] = []
        self.stack: list[str] = []
        self.problems: list[str] = []
        self.feed(text)
        self.close()
        if self.stack:
            self.problems.append(f"not closed: {self.stack}")

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.problems.append(f"</{tag}> closes {self.stack[-1:] or 'nothing'}")
            return
        self.stack.pop()

    def handle_data(self, data):
        self.text.append(data)

    def all_text(self) -> str:
        return " ".join(" ".join(self.text).split())

    def find(self, tag: str, **attrs) -> list[dict]:
        """Start tags named `tag` whose attributes match: equal, or one of a class list's words;
        True: present. Keyword names as in the builder (class_ → class, data_ref → data-ref)."""
        want = {k.rstrip("_").replace("_", "-"): v for k, v in attrs.items()}
        out = []
        for t, a in self.tags:
            if t == tag and all(k in a and (v is True or a[k] == v or v in (a[k] or "").split())
                                for k, v in want.items()):
                out.append(a)
        return out
