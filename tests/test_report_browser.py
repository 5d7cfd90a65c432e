"""The demo report in a real browser: Debian's chromium, headless, started by the test. It must
load without console errors or requests, show the one-line diagram with every node and its
text inside the drawing, fit the A4 width, and print to A4 pages.

Skipped where chromium is not installed; `.ci/run` installs it (apt-get install chromium)."""
from __future__ import annotations

import json
import re

import pytest

from tests.cdp_pipe import Browser, chromium_path
from tests.report_helpers import run, shower_swap_and_ack

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(chromium_path() is None,
                       reason="Debian's chromium is not installed (apt-get install chromium; .ci/run installs it)"),
]

A4_PX = (1240, 1754)          # the A4 page at 150 px per inch, as the brief's screenshots take it
MM = 96 / 25.4                # CSS px per mm

MEASURE = """(() => {
  const svgs = [...document.querySelectorAll('svg.one-line')];
  svgs[0].scrollIntoView({block: 'start'});
  const first = svgs[0].getBoundingClientRect();
  const boxes = svgs.map(s => s.getBoundingClientRect());
  const nodes = svgs.flatMap(svg => [...svg.querySelectorAll('g.node')]).map(g => ({ref: g.dataset.ref,
      status: g.dataset.status, w: g.getBoundingClientRect().width, h: g.getBoundingClientRect().height,
      mark: !!g.querySelector('g.mark-' + g.dataset.status)}));
  const overflow = svgs.flatMap(svg => {
      const vb = svg.viewBox.baseVal;
      return [...svg.querySelectorAll('text')].filter(t => { const b = t.getBBox();
          return b.x + b.width > vb.x + vb.width + 0.5 || b.y < vb.y - 0.5 || b.y + b.height > vb.y + vb.height + 0.5; })
        .map(t => t.textContent); });
  const cx = first.left + Math.min(first.width, innerWidth) / 2, cy = first.top + Math.min(first.height, innerHeight) / 2;
  const hit = document.elementFromPoint(cx, cy);
  return {width: first.width, height: boxes.reduce((a, b) => a + b.height, 0),
          tallest: Math.max(...boxes.map(b => b.height)), slices: svgs.length, nodes, overflow,
          visible: svgs.every(s => getComputedStyle(s).visibility === 'visible' && getComputedStyle(s).display !== 'none'),
          hitInside: !!hit && (svgs.includes(hit) || svgs.some(s => s.contains(hit)) || hit.closest('.figure') !== null),
          pageWidth: document.documentElement.scrollWidth, viewWidth: innerWidth,
          title: document.title, rows: document.querySelectorAll('tr[data-ref]').length};
})()"""


@pytest.fixture
def demo_report(demo_copy, capsys, tmp_path):
    shower_swap_and_ack(demo_copy, capsys)
    out = tmp_path / "report.html"
    code, _, err = run(capsys, "report", demo_copy, "--site", "orchard-end", "-o", out)
    assert code == 0, err
    doc_path = tmp_path / "report.json"
    run(capsys, "report", demo_copy, "--site", "orchard-end", "--format", "json", "-o", doc_path)
    return out, json.loads(doc_path.read_text())


def test_demo_report_renders_with_the_diagram_visible(demo_report, tmp_path):
    html_path, doc = demo_report
    profile = tmp_path / "profile"
    profile.mkdir()
    browser = Browser(profile)
    try:
        session = browser.open_page(*A4_PX)
        browser.navigate(session, html_path.as_uri())
        m = browser.evaluate(session, MEASURE)
        (tmp_path / "report.png").write_bytes(browser.screenshot(session))
        browser.send("Emulation.setEmulatedMedia", {"media": "print"}, session)
        printed = browser.evaluate(session, MEASURE)
        pdf = browser.pdf(session)
        (tmp_path / "report.pdf").write_bytes(pdf)
        problems = browser.problems(session)
    finally:
        browser.close()
    print(f"screenshot and PDF in {tmp_path}")
    assert problems == []
    assert m["title"].startswith("Installation report — Orchard End")
    assert m["visible"] and m["hitInside"] and m["width"] > 300 and m["height"] > 300
    # demo_site/orchard-end: the origin, boards CU1 and WS1, 6 + 4 circuits — each a drawn node with its mark.
    expected = ({"orchard-end"} | {b["ref"] for b in doc["boards"]} | {c["ref"] for c in doc["circuits"]})
    assert len(expected) == 1 + 2 + 10
    assert {n["ref"] for n in m["nodes"]} == expected
    assert all(n["w"] > 0 and n["h"] > 0 and n["mark"] for n in m["nodes"])
    assert m["overflow"] == []                              # no label runs past the drawing's edge
    assert m["rows"] == 10
    assert m["pageWidth"] <= m["viewWidth"]                 # nothing sticks out sideways
    # In print every slice of the diagram fits an A4 page (270 mm between the page margins).
    assert printed["tallest"] <= 240 * MM and printed["overflow"] == []
    pages = len(re.findall(rb"/Type\s*/Page[^s]", pdf))
    assert pdf.startswith(b"%PDF") and pages >= 2, pages
