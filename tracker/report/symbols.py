"""The report's marks for the four states of a check: each its own shape and glyph as well as its
own colour, so the state reads the same in grey print and for readers who do not tell the
colours apart."""
from __future__ import annotations

from functools import lru_cache

from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, WARN
from tracker.report.markup import Safe, cat, el, svg_el

WORD = {PASS: "passes", FAIL: "FAILS", WARN: "advisory", NOT_ASSESSED: "not assessed"}
MEANING = {
    PASS: "every check holds",
    FAIL: "a check fails: action is needed",
    WARN: "holds, with an advisory (an improvement, not a failure)",
    NOT_ASSESSED: "a check could not be computed from the data given, so it is not shown to hold",
}
SHAPE = {PASS: "round, with a tick", FAIL: "square, with a cross", WARN: "triangle, with '!'",
         NOT_ASSESSED: "dashed ring, with '?'"}
COLOUR = {PASS: "#1d7a46", FAIL: "#c0262d", WARN: "#e3a21a", NOT_ASSESSED: "#56608f"}
ORDER = (FAIL, NOT_ASSESSED, WARN, PASS)


@lru_cache(maxsize=None)
def shape(status: str) -> Safe:
    """The mark drawn in a 16 × 16 box (the same markup for every use of a state: made once)."""
    c = COLOUR[status]
    if status == PASS:
        return cat(svg_el("circle", cx=8, cy=8, r=7, fill=c),
                   svg_el("polyline", points="4.4,8.4 7,11 11.8,5.4", fill="none", stroke="#fff",
                          stroke_width=2.1, stroke_linecap="round", stroke_linejoin="round"))
    if status == FAIL:
        return cat(svg_el("rect", x=1.5, y=1.5, width=13, height=13, fill=c),
                   svg_el("path", d="M5 5 L11 11 M11 5 L5 11", stroke="#fff", stroke_width=2.1,
                          stroke_linecap="round"))
    if status == WARN:
        return cat(svg_el("path", d="M8 1.2 L15.2 14.6 L0.8 14.6 Z", fill=c, stroke="#7a5300",
                          stroke_width=0.8, stroke_linejoin="round"),
                   svg_el("rect", x=7.1, y=5.4, width=1.8, height=5.2, rx=0.8, fill="#2b1d00"),
                   svg_el("circle", cx=8, cy=12.5, r=1.05, fill="#2b1d00"))
    return cat(svg_el("circle", cx=8, cy=8, r=6.4, fill="#fff", stroke=c, stroke_width=1.7,
                      stroke_dasharray="2.6 1.7"),
               el("text", "?", x=8, y=11.6, text_anchor="middle", font_size=10, font_weight="bold",
                  fill=c, font_family="DejaVu Sans, Liberation Sans, Arial, sans-serif"))


def mark(status: str, size: int = 12) -> Safe:
    """The mark as an inline image for HTML text, with its word for assistive technology."""
    return el("svg", shape(status), class_=f"mk mk-{status}", viewBox="0 0 16 16", width=size, height=size,
              role="img", aria_label=WORD[status])


def mark_at(status: str, x: float, y: float, size: float = 14) -> Safe:
    """The mark inside an SVG drawing, centred on (x, y)."""
    k = size / 16
    return el("g", shape(status), class_=f"mark mark-{status}",
              transform=f"translate({x - size / 2:.1f} {y - size / 2:.1f}) scale({k:.3f})")


def badge(status: str, text: str | None = None) -> Safe:
    """Mark and word together: the state never rests on colour or shape alone."""
    return el("span", mark(status), " ", text if text is not None else WORD[status], class_=f"st st-{status}")
