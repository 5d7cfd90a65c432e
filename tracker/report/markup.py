"""A very small HTML/SVG builder in which escaping is the default.

Every piece of text handed to `el` or `cat` is escaped unless it is `Safe` — and only this
module's own functions make `Safe` strings. So a name, a note or an author from the site files
or the history can never become markup by being forgotten somewhere.
"""
from __future__ import annotations

import html
from functools import lru_cache


class Safe(str):
    """Text that is already markup (built here, or a constant of the report's own)."""

    __slots__ = ()


def esc(value) -> Safe:
    if isinstance(value, Safe):
        return value
    return Safe(html.escape(str(value), quote=True))


def cat(*parts) -> Safe:
    """Markup of `parts` in order: Safe as it is, None and False left out, lists flattened,
    everything else escaped as text."""
    out = []
    for p in parts:
        if p is None or p is False:
            continue
        if isinstance(p, (list, tuple)) or hasattr(p, "__next__"):
            out.append(cat(*p))
        else:
            out.append(esc(p))
    return Safe("".join(out))


VOID = {"br", "hr", "img", "meta", "link", "col", "wbr"}


@lru_cache(maxsize=None)
def _attribute(key: str) -> str:
    """SVG's mixed-case names (viewBox) are kept; otherwise class_ → class, data_ref → data-ref."""
    return key if any(ch.isupper() for ch in key) else key.rstrip("_").replace("_", "-")


def _opening(tag: str, attrs: dict) -> str:
    parts = [tag]
    for key, value in attrs.items():
        if value is None or value is False:
            continue
        name = _attribute(key)
        parts.append(name if value is True else f'{name}="{esc(value)}"')
    return "<" + " ".join(parts)


def el(tag: str, *children, **attrs) -> Safe:
    """<tag attrs>children</tag>. Attribute names: a trailing '_' is dropped (class_), other '_'
    become '-' (data_ref → data-ref); True gives a bare attribute, None or False leaves it out."""
    opening = _opening(tag, attrs) + ">"
    if tag in VOID:
        return Safe(opening)
    return Safe(opening + cat(*children) + f"</{tag}>")


def svg_el(tag: str, *children, **attrs) -> Safe:
    """An SVG element; one without children is self-closed."""
    if children:
        return el(tag, *children, **attrs)
    return Safe(_opening(tag, attrs) + "/>")
