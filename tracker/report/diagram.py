"""The one-line diagram as SVG: origin → boards → circuits, and on through each sub-main to the
board it feeds. Drawn as a tree that grows downwards: each node on its own row, indented under
the line it hangs from, so a site of any size reads top to bottom and long names are never cut.

Every node is a `<g class="node node-KIND" data-ref=REF data-status=STATUS>` carrying its state
as a mark (shape and glyph, as well as colour) and, for a circuit, the state in words too.
"""
from __future__ import annotations

from typing import NamedTuple

from tracker.output import figures
from tracker.model import PHASES
from tracker.report.markup import Safe, cat, el, svg_el
from tracker.report.symbols import WORD, mark_at

PAD, INDENT = 10, 30
ROW = {"origin": 46, "board": 44, "circuit": 38}
FONT = "DejaVu Sans, Liberation Sans, Arial, sans-serif"
INK, LINE, MUTED = "#1b2330", "#3a4656", "#4d5866"
CHAR_EM = 0.6   # a generous average glyph width, so the drawing is never narrower than its text


def _num(x, digits=2, unit="") -> str:
    if x is None:
        return "not assessed"
    return f"{figures.trimmed(x, digits)} {unit}".rstrip()


def _labels(doc: dict) -> dict[str, tuple[str, str, str]]:
    """ref -> (first line, second line, hover text) for every node."""
    out = {}
    s = doc["supply"]
    o = doc["origin"]
    parts = [f"U0 {_num(s['u0_v'], 0, 'V')}", f"Ze {_num(s['ze_ohm'], 3, 'Ω')}" if s["ze_ohm"] is not None
             else "Ze not given",
             f"PFC {_num(s['pfc_ka'], 2, 'kA')}" if s["pfc_ka"] is not None
             else f"PFC not given ({_num(s['pfc_used_ka'], 2, 'kA')} assumed)"]
    if s["service_fuse_a"] is not None:
        parts.append(f"supplier's fuse {_num(s['service_fuse_a'], 0, 'A')}")
    if o.get("demand_phases_a"):
        lines = o["demand_phases_a"]
        demand = "demand " + " / ".join(f"{ph} {_num(lines[ph], 1, 'A')}" for ph in PHASES)
    else:
        demand = f"demand {_num(o['demand_a'], 2, 'A')}"
    line2 = " · ".join(parts + [demand, WORD[o["status"]]])
    kind = f"three-phase {s['system']} supply, {_num(s['u_line_v'], 0, 'V')}" if s.get("phases") == 3 \
        else f"{s['system']} supply"
    out[o["ref"]] = (f"Origin — {kind}", line2, o["check"]["detail"])
    for b in doc["boards"]:
        bits = []
        if b.get("phases") == 3:
            bits.append("three-phase")
        elif b.get("phase"):
            bits.append(f"on {b['phase']}")
        if b["main_switch_a"] is not None:
            bits.append(f"main switch {_num(b['main_switch_a'], 0, 'A')}")
        if b["rcd_ma"] is not None:
            bits.append(f"RCD {_num(b['rcd_ma'], 0, 'mA')}")
        if b.get("demand_phases_a"):
            lines = b["demand_phases_a"]
            bits.append("demand " + " / ".join(f"{ph} {_num(lines[ph], 1, 'A')}" for ph in PHASES))
        else:
            bits.append(f"demand {_num(b['demand_a'], 2, 'A')}")
        bits.append(WORD[b["status"]])
        out[b["ref"]] = (f"{b['id']}  {b['name']}".strip(), " · ".join(bits), b["check"]["detail"])
    for c in doc["circuits"]:
        cab = c["cable"]
        device = c["device"]["label"] + (f" {_num(c['rcd_ma'], 0, 'mA')}" if c.get("rcd_ma") else "")
        cable = f"{_num(cab['csa_mm2'], 2, 'mm²')} {cab['kind']}, {_num(cab['length_m'], 1, 'm')}"
        failing = [k["id"] for k in c["checks"] if k["status"] == c["status"]] if c["status"] != "pass" else []
        verdict = WORD[c["status"]] + (f": {', '.join(failing)}" if failing else "")
        role = f" → {c['feeds']}" if c["feeds"] else ""
        if c.get("phases") == 3:
            role = f" [three-phase]{role}"
        elif c.get("phase"):
            role = f" [{c['phase']}]{role}"
        line2 = f"{device} · {cable} · Ib {_num(c['ib_a'], 2, 'A')}, Iz {_num(c['iz_a'], 2, 'A')} · {verdict}"
        out[c["ref"]] = (f"{c['id']}  {c['name']}{role}".strip(), line2, f"{c['ref']}: {verdict}")
    return out


def _rows(tree: dict) -> list[tuple[dict, int, str | None]]:
    """(node, depth, parent ref) in drawing order (depth first, the site files' order)."""
    out = []

    def walk(node, depth, parent):
        out.append((node, depth, parent))
        for child in node["children"]:
            walk(child, depth + 1, node["ref"])

    walk(tree, 0, None)
    return out


def _text_w(text: str, size: float) -> float:
    return len(text) * size * CHAR_EM


class _Shape(NamedTuple):
    body: Safe
    cy: float          # the connector's height (the node's middle)
    line_x: float      # where its children's line hangs from
    bottom: float      # where that line starts
    right: float       # the drawing's extent to the right


def _circuit_shape(node: dict, x: float, y: float, first: str, second: str) -> _Shape:
    cy = y + 13
    text_x = x + 44
    body = cat(
        svg_el("rect", x=x, y=cy - 7, width=16, height=14, fill="#fff", stroke=INK, stroke_width=1.3),
        svg_el("line", x1=x + 4, y1=cy + 4, x2=x + 12, y2=cy - 4, stroke=INK, stroke_width=1.3),
        svg_el("line", x1=x + 16, y1=cy, x2=x + 23, y2=cy, stroke=LINE, stroke_width=1.3),
        mark_at(node["status"], x + 31, cy, 15),
        el("text", el("tspan", first, font_weight="bold"), x=text_x, y=cy + 4, font_size=12, fill=INK),
        el("text", second, x=text_x, y=cy + 18, font_size=10, fill=MUTED),
    )
    return _Shape(body, cy, x + 8, cy + 7, text_x + max(_text_w(first, 12), _text_w(second, 10)))


def _box_shape(node: dict, kind: str, x: float, y: float, first: str, second: str) -> _Shape:
    """The origin (rounded) or a board (square-cornered, heavier)."""
    bh = 34 if kind == "origin" else 32
    cy = y + bh / 2
    width = max(_text_w(first, 12), _text_w(second, 10)) + 40
    fill = "#eef1f6" if kind == "board" else "#f6f1e7"
    body = cat(
        svg_el("rect", x=x, y=y, width=round(width, 1), height=bh, rx=3 if kind == "board" else 9,
               fill=fill, stroke=INK, stroke_width=1.6 if kind == "board" else 1.2),
        mark_at(node["status"], x + 15, cy, 15),
        el("text", el("tspan", first, font_weight="bold"), x=x + 30, y=y + 14, font_size=12, fill=INK),
        el("text", second, x=x + 30, y=y + 27, font_size=10, fill=MUTED),
    )
    return _Shape(body, cy, x + 15, y + bh, x + width)


def render(doc: dict) -> Safe:
    """The diagram as one SVG per slice of at most SLICE_H px: together they read as one drawing,
    and in print each slice fits a page at full size, however many circuits the site has."""
    labels = _labels(doc)
    rows = _rows(doc["one_line"])
    y = PAD
    placed = {}                       # ref -> (x, y, connector y, line x, bottom y)
    items = []                        # (top, bottom, markup): every drawn thing with its vertical extent
    spans = []                        # (top, bottom) of each row
    width = 0.0
    for node, depth, parent in rows:
        kind = node["kind"]
        x = PAD + depth * INDENT
        h = ROW[kind]
        first, second, hover = labels[node["ref"]]
        shape = (_circuit_shape(node, x, y, first, second) if kind == "circuit"
                 else _box_shape(node, kind, x, y, first, second))
        connector = None
        if parent is not None:
            px = placed[parent][3]
            connector = svg_el("line", x1=px, y1=shape.cy, x2=x, y2=shape.cy, stroke=LINE, stroke_width=1.3)
        placed[node["ref"]] = (x, y, shape.cy, shape.line_x, shape.bottom)
        items.append((y, y + h, cat(connector, el("g", el("title", hover), shape.body, class_=f"node node-{kind}",
                                                    data_ref=node["ref"], data_status=node["status"]))))
        spans.append((y, y + h))
        width = max(width, shape.right)
        y += h
    return _sliced(doc, _hanging(rows, placed), items, spans, int(width + PAD + 6), int(y + PAD - 6))


def _hanging(rows, placed) -> list[tuple[float, float, float, bool]]:
    """The line each node's children hang from: a busbar under a board, a cable under the rest."""
    out = []
    for node, _, _ in rows:
        if node["children"]:
            _, _, _, lx, bottom = placed[node["ref"]]
            out.append((lx, bottom, placed[node["children"][-1]["ref"]][2], node["kind"] == "board"))
    return out


def _sliced(doc: dict, hanging, items, spans, w_total: int, h_total: int) -> Safe:
    cuts = _slices(spans, h_total)
    out = []
    for i, (top, bottom) in enumerate(cuts):
        lines = [svg_el("line", x1=lx, y1=max(y1, top), x2=lx, y2=min(y2, bottom), stroke=LINE,
                        stroke_width=3.2 if busbar else 1.3, class_="busbar" if busbar else None)
                 for lx, y1, y2, busbar in hanging if y1 < bottom and y2 > top]
        shapes = [markup for t, b, markup in items if t >= top and b <= bottom]
        part = f", part {i + 1} of {len(cuts)}" if len(cuts) > 1 else ""
        title = f"One-line diagram of {doc['site']['id']}{part}"
        out.append(el("svg", el("title", title), cat(lines), cat(shapes),
                      xmlns="http://www.w3.org/2000/svg", class_="one-line", viewBox=f"0 {top} {w_total} {bottom - top}",
                      width=w_total, height=bottom - top, font_family=FONT, role="img",
                      aria_label=f"{title}: origin, boards and circuits with their states"))
    return cat(out)


SLICE_H = 860   # px: a slice and its page's running footer fit an A4 page (about 233 mm at full size)


def _slices(spans: list[tuple[float, float]], total: int) -> list[tuple[int, int]]:
    """Cut the drawing between rows into slices no taller than SLICE_H (a row is never cut)."""
    cuts, top = [], 0
    for row_top, row_bottom in spans:
        if row_bottom - top > SLICE_H:
            cut = int(row_top)    # the slice ends where this row begins
            cuts.append((top, cut))
            top = cut
    cuts.append((top, total))
    return cuts
