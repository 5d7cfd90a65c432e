"""The report's stylesheet: a document on screen, A4 pages in print."""
from __future__ import annotations

from tracker.report.markup import Safe

CSS = """
:root { color-scheme: light; --ink: #1b2330; --muted: #4d5866; --rule: #c9cfd8; --soft: #f3f5f8;
        --pass: #1d7a46; --fail: #c0262d; --warn: #8a5d00; --na: #56608f; }
* { box-sizing: border-box; }
html { background: #dde1e7; }
body { margin: 0; color: var(--ink); font: 10pt/1.45 "DejaVu Sans", "Liberation Sans", Arial, sans-serif; }
.page { max-width: 210mm; margin: 8mm auto; padding: 12mm 13mm 14mm; background: #fff;
        box-shadow: 0 1px 4px rgba(0,0,0,.18); }
h1 { font-size: 19pt; line-height: 1.2; margin: 0 0 1mm; }
h2 { font-size: 13pt; margin: 7mm 0 2mm; padding-bottom: 1mm; border-bottom: 1.5px solid var(--ink); }
h3 { font-size: 10.5pt; margin: 4mm 0 1.5mm; }
h4 { font-size: 9.5pt; margin: 3mm 0 1mm; }
p { margin: 1.2mm 0; }
code, .mono { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: .88em; }
.kicker { text-transform: uppercase; letter-spacing: .08em; font-size: 8.5pt; color: var(--muted); margin: 0; }
.sub, .small, .note { color: var(--muted); font-size: 8.5pt; }
.note { margin-top: 1.5mm; }
.meta { display: grid; grid-template-columns: max-content 1fr; gap: .6mm 4mm; margin: 3mm 0; font-size: 9pt; }
.meta dt { color: var(--muted); }
.meta dd { margin: 0; }
.hash { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 7.5pt; word-break: break-all; }
.summary { border: 1.5px solid var(--ink); border-left-width: 6px; padding: 2.5mm 4mm; margin: 4mm 0; }
.summary.s-fail { border-color: var(--fail); }
.summary.s-pass { border-color: var(--pass); }
.summary.s-not-assessed { border-color: var(--na); }
.summary.s-warn { border-color: #b57f0c; }
.summary .headline { font-size: 12pt; font-weight: bold; margin: 0 0 1mm; }
.summary ul { margin: 1mm 0 0; padding-left: 5mm; }
.caution { background: #fff6df; border: 1px solid #d9b24a; padding: 2.5mm 4mm; margin: 3mm 0; font-size: 9pt; }
.contents { font-size: 8.5pt; color: var(--muted); }
.contents a { color: inherit; }
table { border-collapse: collapse; width: 100%; margin: 1.5mm 0; }
th, td { text-align: left; vertical-align: top; padding: 1mm 1.4mm; border-bottom: 1px solid var(--rule); }
thead th { font-size: 8pt; color: var(--muted); font-weight: bold; border-bottom: 1.5px solid var(--ink); }
table.data { font-size: 8.3pt; }
td.n, th.n { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
th.n { white-space: normal; }
td.n .lim { display: block; color: var(--muted); font-size: 7.3pt; white-space: normal; }
.nowrap { white-space: nowrap; }
table.circuits, table.fixed { table-layout: fixed; }
table.fixed td { overflow-wrap: break-word; }
table.fixed td .change, table.fixed td code { overflow-wrap: anywhere; }
table.kv th { width: 40%; }
table.circuits td, table.circuits th { padding: 1mm .9mm; overflow-wrap: anywhere; }
table.circuits .st { white-space: normal; }
table.details td:first-child { width: 22mm; } table.details td:nth-child(2) { width: 30mm; }
table.details td:nth-child(3) { width: 42mm; white-space: normal; }
tr.group th { background: var(--soft); font-size: 8.5pt; color: var(--ink); border-bottom: 1px solid var(--rule); }
.st { white-space: nowrap; font-weight: bold; }
.st-pass { color: var(--pass); } .st-fail { color: var(--fail); }
.st-warn { color: var(--warn); } .st-not-assessed { color: var(--na); }
.mk { vertical-align: -1.5px; }
.legend { display: flex; flex-wrap: wrap; gap: 1mm 6mm; font-size: 8.3pt; margin: 2mm 0; padding: 0; list-style: none; }
.figure { border: 1px solid var(--rule); padding: 3mm; margin: 2mm 0; overflow-x: auto; }
svg.one-line { display: block; max-width: 100%; height: auto; margin: 0; }
.problem { border: 1px solid var(--rule); border-left: 4px solid var(--rule); padding: 2mm 3.5mm; margin: 2.5mm 0; }
.problem.p-fail { border-left-color: var(--fail); }
.problem.p-not-assessed { border-left-color: var(--na); }
.problem.p-warn { border-left-color: #b57f0c; }
.problem h3 { margin: .5mm 0 1.5mm; }
.problem dl { display: grid; grid-template-columns: 24mm 1fr; gap: 1mm 3mm; margin: 1.5mm 0 .5mm; font-size: 8.8pt; }
.problem dt { font-weight: bold; }
.problem dd { margin: 0; }
.problem ul { margin: 0; padding-left: 4.5mm; }
.checks-list { list-style: none; padding: 0; margin: 0; font-size: 8.8pt; }
.checks-list li { margin: .8mm 0; }
.checks-list .detail { display: block; color: var(--muted); font-size: 8pt; margin-left: 5mm; }
ul.plain { list-style: none; padding: 0; margin: 0; }
ul.events li { margin-bottom: .6mm; }
.change { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 7.6pt; }
.yes { font-weight: bold; }
.appendix h4 { border-top: 1px solid var(--rule); padding-top: 1.5mm; }
table.details td.detail { font-size: 7.8pt; color: #2c3644; }
footer { margin: 8mm 0 4mm; padding-top: 2mm; border-top: 1.5px solid var(--ink); font-size: 8.3pt; color: var(--muted); }
a { color: #1d4f91; }
@media print {
  html { background: #fff; }
  body { font-size: 9.3pt; -webkit-print-color-adjust: exact; print-color-adjust: exact; }
  .page { max-width: none; margin: 0; padding: 0; box-shadow: none; }
  .contents { display: none; }
  h2, h3, h4, h2 + .note { break-after: avoid; }
  tr, .problem, .summary, .caution, .meta, .keep, footer { break-inside: avoid; }
  .appendix { break-before: page; }
  thead { display: table-header-group; }
  .figure { overflow: visible; }
  svg.one-line { break-inside: avoid; }
  a { color: inherit; text-decoration: none; }
}
"""


def stylesheet(footer_left: str, footer_right_prefix: str = "page ") -> Safe:
    """The stylesheet with the running footer of printed pages. `footer_left` must be plain
    (a site id and a date): it is placed in a CSS string."""
    safe = "".join(ch for ch in footer_left if ch.isalnum() or ch in " .:_-/·,")
    page = (f"@page {{ size: A4; margin: 13mm 12mm 15mm;"
            f" @bottom-left {{ content: \"{safe}\"; font: 7.5pt sans-serif; color: #4d5866; }}"
            f" @bottom-right {{ content: \"{footer_right_prefix}\" counter(page) \" of \" counter(pages);"
            f" font: 7.5pt sans-serif; color: #4d5866; }} }}")
    return Safe(CSS + page + "\n")
