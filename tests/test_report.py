"""`izwatch report`: the structure of each format, the engine's own figures, the history's causes
and acknowledgements, escaping of everything user-written, and that nothing but -o is written."""
from __future__ import annotations

import csv
import hashlib
import io
import json
import re
import sqlite3
from datetime import datetime, timezone

import jsonschema
import pytest

from tests.conftest import ROOT
from tests.report_helpers import SHOWER, SHOWER_CIRCUIT, Page, run, shower_swap_and_ack
from tracker import __version__
from tracker.report import csv_rows, diagram, gather, html_page
from tracker.report.markup import Safe, cat, el

SCHEMA = json.loads((ROOT / "schema" / "report.schema.json").read_text(encoding="utf-8"))
SITE = "quill-court-2"


def _tree(root) -> dict[str, str]:
    return {str(p.relative_to(root)): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(root.rglob("*")) if p.is_file()}


def _report(capsys, root, out, fmt="html", *more, site=SITE):
    code, stdout, err = run(capsys, "report", root, "--site", site, "--format", fmt, "-o", out, *more)
    assert code == 0, err
    return out.read_text(encoding="utf-8")


@pytest.fixture
def swapped(demo_copy, capsys):
    revs = shower_swap_and_ack(demo_copy, capsys)
    return demo_copy, revs


# -- HTML --------------------------------------------------------------------------------------

def test_html_is_one_self_contained_document(swapped, capsys, tmp_path):
    root, _ = swapped
    text = _report(capsys, root, tmp_path / "r.html")
    page = Page(text)
    assert page.problems == []
    assert text.startswith("<!DOCTYPE html>")
    # Nothing remote, nothing that runs: no script, no linked file, no external reference.
    assert not page.find("script") and not page.find("link") and not page.find("img") and not page.find("iframe")
    assert not [a for _, a in page.tags for k in a if k in ("src", "srcset")]
    assert not [a["href"] for a in page.find("a") if not a["href"].startswith("#")]
    assert not re.search(r"url\(|@import|https?://(?!www\.w3\.org/2000/svg)", text)
    csp = page.find("meta", http_equiv="Content-Security-Policy")[0]["content"]
    assert "default-src 'none'" in csp and "script-src" not in csp
    assert page.find("style") and "@media print" in text and "size: A4" in text
    for section in ("supply", "diagram", "circuits", "problems", "history", "integrity", "appendix"):
        assert page.find("h2", id=section), section


def test_html_carries_caution_date_version_and_verify(swapped, capsys, tmp_path):
    root, revs = swapped
    page = Page(_report(capsys, root, tmp_path / "r.html"))
    words = page.all_text()
    assert "competent person" in words and "qualified people" in words and "manufacturers' data" in words
    assert f"izwatch {__version__}" in words
    assert re.search(r"Report made \d{4}-\d{2}-\d{2} \d{2}:\d{2} [+-]\d{2}:\d{2}", words)   # local time, its offset
    code, out, _ = run(capsys, "verify", root)
    head = out.split("chain head ")[1].strip()
    assert code == 0 and head in words                    # the same chain head as `izwatch verify`
    assert f"Intact. The hash chain of all {len(revs)} revisions" in words


def test_html_shows_the_engines_figures(swapped, capsys, tmp_path):
    root, _ = swapped
    page = Page(_report(capsys, root, tmp_path / "r.html"))
    rows = page.find("tr", data_ref=True)
    assert [r["data-ref"] for r in rows] == [f"{SITE}/CU1/{n}" for n in range(1, 7)]   # six circuits in site.yaml
    assert {r["data-ref"]: r["data-status"] for r in rows}[SHOWER_CIRCUIT] == "fail"
    words = page.all_text()
    # README "A replacement, end to end": Ib 36.96 A (8.5 kW / 230 V), Iz 35 A, headroom −0.45 kW, and
    # the remedy: 10 mm² cable or a shower of at most 8.05 kW.
    assert "36.96" in words and "35.00" in words and "−0.45" in words
    assert "cable 6 → 10 mm² twin-earth-70" in words and "with a shower of at most 8.05 kW" in words


def test_open_problem_names_its_cause_ack_and_remedy(swapped, capsys, tmp_path):
    root, revs = swapped
    replace_rev = next(r for r in revs.values() if r["source"] == "replace")
    ack_rev = next(r for r in revs.values() if r["source"] == "ack")
    doc = json.loads(_report(capsys, root, tmp_path / "r.json", "json"))
    [problem] = doc["problems"]                            # only the shower circuit fails in this flat
    assert problem["ref"] == SHOWER_CIRCUIT and problem["acknowledged"] is True
    [cap] = problem["open_checks"]
    assert cap["id"] == "capacity" and cap["cause"]["revision"] == replace_rev["id"]
    assert cap["cause"]["author"] == "R. Ashdown-Pike" and cap["cause"]["note"] == "8.5 kW shower fitted, job 2231"
    assert cap["cause"]["changes"] == [{"ref": SHOWER, "field": "power_kw", "old": 7.5, "new": 8.5,
                                        "change": "modified"}]
    assert problem["acknowledgement"]["revision"] == ack_rev["id"]
    assert problem["remedy"]["load_limit_kw"] == 8.05      # README: a shower of at most 8.05 kW
    words = Page(_report(capsys, root, tmp_path / "r.html")).all_text()
    assert f"revision #{replace_rev['id']}" in words and "power_kw: 7.5 → 8.5" in words
    assert f"acknowledged in revision #{ack_rev['id']}" in words and "M. Quell" in words


def test_a_later_worsening_is_not_covered_by_the_earlier_ack(swapped, capsys, tmp_path):
    root, _ = swapped
    code, _, _ = run(capsys, "replace", root, SHOWER, "--power-kw", "9.5", "--by", "T", "--note", "bigger again")
    assert code == 1
    doc = json.loads(_report(capsys, root, tmp_path / "r.json", "json"))
    cap = next(k for p in doc["problems"] if p["ref"] == SHOWER_CIRCUIT for k in p["open_checks"]
               if k["id"] == "capacity")
    assert cap["cause"]["worse_revision"] is not None and cap["acknowledged"] is False
    # README: a 9.5 kW shower breaks the board's maximum demand as well — a board problem, no ack.
    board = next(p for p in doc["problems"] if p["ref"] == f"{SITE}/CU1")
    assert board["kind"] == "board" and board["acknowledged"] is False
    assert board["open_checks"][0]["cause"]["note"] == "bigger again"


def test_hostile_text_is_escaped_everywhere(demo_copy, capsys, tmp_path):
    hostile = '<script>alert("x")</script> & \'single\' "double" <img src=x onerror=alert(1)>'
    site_file = demo_copy / SITE / "site.yaml"
    text = site_file.read_text(encoding="utf-8")
    site_file.write_text(text.replace('name: "Shower, bathroom"',
                                      'name: "<b onmouseover=alert(2)>Shower</b> & \\"co\\" </svg><script>x()</script>"'),
                         encoding="utf-8")
    shower_swap_and_ack(demo_copy, capsys, note=hostile, by="<i>Mallory</i> & \"Co\"", ack_note=hostile,
                        ack_by="</td></tr><script>y()</script>")
    html = _report(capsys, demo_copy, tmp_path / "r.html")
    page = Page(html)
    assert page.problems == []
    assert not page.find("script") and not page.find("img") and not page.find("b", onmouseover=True)
    assert not page.find("i")
    assert not [k for _, a in page.tags for k in a if k.startswith("on")]
    assert "<script" not in html and "<img" not in html
    assert "&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt; &amp; &#x27;single&#x27;" in html
    words = page.all_text()
    assert hostile in words and '<i>Mallory</i> & "Co"' in words      # shown as text, exactly
    assert '<b onmouseover=alert(2)>Shower</b> & "co" </svg><script>x()</script>' in words
    # In the diagram's SVG too: the hostile circuit name is a text node of its node.
    svg_nodes = page.find("g", class_="node-circuit", data_ref=SHOWER_CIRCUIT)
    assert len(svg_nodes) == 1


def test_markup_escapes_text_and_attributes_but_not_its_own_markup():
    assert el("td", "<b>&", title='"x"') == '<td title="&quot;x&quot;">&lt;b&gt;&amp;</td>'
    assert cat("a<", el("br"), None, ["&", Safe("<i>ok</i>")]) == "a&lt;<br>&amp;<i>ok</i>"


# -- the diagram -------------------------------------------------------------------------------

@pytest.mark.parametrize("site_id", ["bracken-cottage", "larkspur-yard-4", "orchard-end", "quill-court-2",
                                     "tansy-walk-9a"])
def test_diagram_has_a_node_per_board_and_circuit(demo_copy, site_id):
    from tracker.loading import load_estate
    estate = load_estate(demo_copy)
    site = estate.sites[site_id]
    doc = gather.build(site, estate.loads[site.folder].files, demo_copy / "no-history.sqlite")
    page = Page(diagram.render(doc))
    assert page.problems == []
    nodes = page.find("g", class_="node")
    circuits = {n["data-ref"] for n in page.find("g", class_="node-circuit")}
    boards = {n["data-ref"] for n in page.find("g", class_="node-board")}
    assert circuits == {f"{site_id}/{c.board}/{c.id}" for c in site.circuits}
    assert boards == {f"{site_id}/{b.id}" for b in site.boards}
    assert [n["data-ref"] for n in page.find("g", class_="node-origin")] == [site_id]
    # Each node carries the mark of its own state (a shape, not only a colour).
    results = {c["ref"]: c["status"] for c in doc["circuits"]} | {b["ref"]: b["status"] for b in doc["boards"]}
    for n in nodes:
        if n["data-ref"] in results:
            assert n["data-status"] == results[n["data-ref"]]
    marks = page.find("g", class_="mark")
    assert [m["class"].split()[1] for m in marks] == [f"mark-{n['data-status']}" for n in nodes]


def test_diagram_draws_the_sub_main_before_the_board_it_feeds(demo_copy):
    from tracker.loading import load_estate
    estate = load_estate(demo_copy)
    site = estate.sites["orchard-end"]
    doc = gather.build(site, estate.loads[site.folder].files, demo_copy / "none.sqlite")
    order = [n["data-ref"] for n in Page(diagram.render(doc)).find("g", class_="node")]
    # demo_site/orchard-end: CU1 has circuits 1-6, 6 is the sub-main to WS1 (workshop.yaml: 4 circuits).
    assert order == (["orchard-end", "orchard-end/CU1"] + [f"orchard-end/CU1/{n}" for n in range(1, 7)]
                     + ["orchard-end/WS1"] + [f"orchard-end/WS1/{n}" for n in range(1, 5)])


def test_a_large_site_is_drawn_in_slices_that_join(site_factory):
    from tracker.loading import load_estate
    circuits = "".join(f"""
  - id: "{n}"
    board: CU1
    name: "Lighting {n}"
    device: {{kind: rcbo, curve: B, rating_a: 6, breaking_ka: 6}}
    rcd_ma: 30
    cable: {{kind: twin-earth-70, csa_mm2: 1.5, length_m: 10, method: "100"}}
    loads: [{{id: l, kind: lighting, power_kw: 0.1}}]""" for n in range(1, 61))
    root = site_factory("site:\n  id: big\nsupply: {system: TN-C-S, ze_ohm: 0.3, pfc_ka: 1.5}\n"
                        "boards:\n  - {id: CU1, fed_by: supply, main_switch_a: 100}\ncircuits:" + circuits + "\n")
    estate = load_estate(root)
    site = estate.sites["big"]
    doc = gather.build(site, estate.loads[site.folder].files, root / "none.sqlite")
    page = Page(diagram.render(doc))
    svgs = page.find("svg", class_="one-line")
    boxes = [tuple(float(v) for v in s["viewbox" if "viewbox" in s else "viewBox"].split()) for s in svgs]
    # 60 circuits of 38 px and two boxes: taller than one slice of diagram.SLICE_H.
    assert len(svgs) >= 3 and all(h <= diagram.SLICE_H for _, _, _, h in boxes)
    assert all(a[1] + a[3] == b[1] for a, b in zip(boxes, boxes[1:]))      # each slice starts where the last ended
    refs = [n["data-ref"] for n in page.find("g", class_="node")]
    assert refs == ["big", "big/CU1"] + [f"big/CU1/{n}" for n in range(1, 61)]   # every node once, in order
    # The busbar runs on through every slice boundary.
    busbars = [(float(a["y1"]), float(a["y2"])) for a in page.find("line", class_="busbar")]
    for (_, top, _, h) in boxes[1:]:
        assert any(y1 == top for y1, _ in busbars) and any(y2 == top for _, y2 in busbars)


# -- CSV ---------------------------------------------------------------------------------------

def test_csv_one_row_per_circuit_plain_numbers(swapped, capsys, tmp_path):
    root, _ = swapped
    raw = _report(capsys, root, tmp_path / "r.csv", "csv")
    data = (tmp_path / "r.csv").read_bytes()
    assert not data.startswith(b"\xef\xbb\xbf")                     # no byte-order mark
    assert data.count(b"\r\n") == 7                                # header + six circuits, RFC 4180 line ends
    rows = list(csv.DictReader(io.StringIO(raw, newline="")))
    assert list(rows[0]) == csv_rows.HEADER
    assert [r["ref"] for r in rows] == [f"{SITE}/CU1/{n}" for n in range(1, 7)]
    shower = next(r for r in rows if r["ref"] == SHOWER_CIRCUIT)
    assert shower["name"] == "Shower, bathroom"                     # the comma inside survives quoting
    # README "A replacement": Ib 36.96 A, Iz 35 A, headroom −0.45 kW; capacity newly failing.
    assert float(shower["ib_a"]) == 36.96 and float(shower["iz_a"]) == 35.0 and float(shower["headroom_kw"]) == -0.45
    assert shower["status"] == "fail" and shower["check_capacity"] == "fail" and shower["acknowledged"] == "yes"
    numeric = [h for h in csv_rows.HEADER if re.search(r"_(a|ka|ma|mm2|m|pct|ohm|kw)$", h)]
    assert {"ib_a", "in_a", "iz_a", "vd_pct", "zs_ohm", "headroom_kw", "csa_mm2"} <= set(numeric)
    for r in rows:
        for h in numeric:
            if r[h] != "":
                float(r[h])                                         # plain numbers: no unit in a cell
    assert next(r for r in rows if r["ref"] == f"{SITE}/CU1/1")["acknowledged"] == ""   # passes: nothing to ack


def test_csv_keeps_formula_like_names_as_text(demo_copy, capsys, tmp_path):
    site_file = demo_copy / SITE / "site.yaml"
    site_file.write_text(site_file.read_text(encoding="utf-8").replace(
        'name: "Shower, bathroom"', 'name: "=HYPERLINK(\\"http://x.invalid\\",\\"click\\")"'), encoding="utf-8")
    shower_swap_and_ack(demo_copy, capsys)            # headroom −0.45 kW (README): a negative number
    rows = list(csv.DictReader(io.StringIO(_report(capsys, demo_copy, tmp_path / "r.csv", "csv"), newline="")))
    shower = next(r for r in rows if r["ref"] == SHOWER_CIRCUIT)
    assert shower["name"] == "'=HYPERLINK(\"http://x.invalid\",\"click\")"
    assert shower["headroom_kw"] == "-0.45" and float(shower["headroom_kw"]) == -0.45   # numbers stay numbers


# -- JSON --------------------------------------------------------------------------------------

def test_json_validates_and_holds_what_the_html_holds(swapped, capsys, tmp_path):
    root, revs = swapped
    doc = json.loads(_report(capsys, root, tmp_path / "r.json", "json"))
    jsonschema.Draft202012Validator.check_schema(SCHEMA)
    jsonschema.Draft202012Validator(SCHEMA).validate(doc)
    assert doc["schema"] == "izwatch.report/1" and doc["tool"]["version"] == __version__
    assert doc["verification"]["state"] == "intact" and doc["verification"]["revisions"] == len(revs)
    assert [r["id"] for r in doc["history"]["revisions"]] == sorted(revs)   # every revision is about this site
    html = html_page.render(doc)
    page = Page(html)
    assert [r["data-ref"] for r in page.find("tr", data_ref=True)] == [c["ref"] for c in doc["circuits"]]
    assert [r["data-revision"] for r in page.find("tr", data_revision=True)] == \
        [str(r["id"]) for r in doc["history"]["revisions"]]
    assert [a["data-ref"] for a in page.find("article", class_="problem")] == [p["ref"] for p in doc["problems"]]


def test_schema_refuses_an_undocumented_key(swapped, capsys, tmp_path):
    root, _ = swapped
    doc = json.loads(_report(capsys, root, tmp_path / "r.json", "json"))
    doc["circuits"][0]["surprise"] = 1
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(doc, SCHEMA, cls=jsonschema.Draft202012Validator)


def test_stdout_output(swapped, capsys):
    root, _ = swapped
    code, out, _ = run(capsys, "report", root, "--site", SITE, "--format", "json", "-o", "-")
    assert code == 0 and json.loads(out)["site"]["id"] == SITE


# -- history states ----------------------------------------------------------------------------

def test_without_history_the_circuits_are_still_reported(demo_copy, capsys, tmp_path):
    before = _tree(demo_copy)
    doc = json.loads(_report(capsys, demo_copy, tmp_path / "r.json", "json"))
    jsonschema.validate(doc, SCHEMA, cls=jsonschema.Draft202012Validator)
    assert len(doc["circuits"]) == 6 and doc["history"]["state"] == "none"
    assert doc["verification"]["state"] == "none" and doc["problems"] == []
    words = Page(_report(capsys, demo_copy, tmp_path / "r.html")).all_text()
    assert "No history recorded yet." in words and "Nothing to verify" in words
    assert _tree(demo_copy) == before and not (demo_copy / ".izwatch").exists()


def test_a_tampered_history_is_reported_as_not_verifying(swapped, capsys, tmp_path):
    root, revs = swapped
    db = root / ".izwatch" / "history.sqlite"
    conn = sqlite3.connect(db)
    for trig in [r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'trigger'")]:
        conn.execute(f"DROP TRIGGER {trig}")
    rid = next(r["id"] for r in revs.values() if r["source"] == "replace")
    conn.execute("UPDATE revisions SET author = 'someone else' WHERE id = ?", [rid])
    conn.commit()
    conn.close()
    doc = json.loads(_report(capsys, root, tmp_path / "r.json", "json"))
    assert doc["verification"]["state"] == "broken" and doc["verification"]["first_bad"] == rid
    words = Page(_report(capsys, root, tmp_path / "r.html")).all_text()
    assert "Does not verify." in words and "does not verify" in words


def test_an_unreadable_history_is_said_so(demo_copy, capsys, tmp_path):
    (demo_copy / ".izwatch").mkdir()
    (demo_copy / ".izwatch" / "history.sqlite").write_text("not a database " * 100)
    doc = json.loads(_report(capsys, demo_copy, tmp_path / "r.json", "json"))
    assert doc["history"]["state"] == "unreadable" and doc["verification"]["state"] == "unreadable"
    assert "could not be read" in Page(_report(capsys, demo_copy, tmp_path / "r.html")).all_text()


def test_unrecorded_changes_are_flagged(swapped, capsys, tmp_path):
    root, _ = swapped
    site_file = root / SITE / "site.yaml"
    # Lighting, circuit 5: 1.12 % at 34 m (check output); the drop is proportional to the length
    # (mV/A/m × Ib × L), so 120 m gives 3.95 % > the 3 % lighting limit (Appendix 4).
    site_file.write_text(site_file.read_text().replace("length_m: 34", "length_m: 120"))
    doc = json.loads(_report(capsys, root, tmp_path / "r.json", "json"))
    assert doc["site"]["files"][0]["state"] == "changed-since" and doc["summary"]["files_pending"] is True
    light = next(p for p in doc["problems"] if p["ref"] == f"{SITE}/CU1/5")
    vd = next(k for k in light["open_checks"] if k["id"] == "voltage-drop")
    assert vd["cause"] is None and vd["cause_note"] == ("not in the history yet: quill-court-2/site.yaml "
                                                        "changed after its last recorded revision")
    other = json.loads(_report(capsys, root, tmp_path / "o.json", "json", site="orchard-end"))
    assert other["site"]["files"][0]["state"] == "not-recorded"       # the swap recorded only quill-court-2
    assert other["problems"][0]["open_checks"][0]["cause_note"].startswith("not in the history yet: it holds no "
                                                                          "record of orchard-end/site.yaml")


def test_since_limits_the_history_section_only(swapped, capsys, tmp_path):
    root, revs = swapped
    future = _report(capsys, root, tmp_path / "a.json", "json", "--since", "2999-01-01")
    doc = json.loads(future)
    assert doc["history"]["revisions"] == [] and doc["history"]["revisions_of_site"] == len(revs)
    assert doc["problems"][0]["open_checks"][0]["cause"] is not None     # causes do not depend on --since
    past = json.loads(_report(capsys, root, tmp_path / "b.json", "json", "--since", "2000-01-01"))
    assert len(past["history"]["revisions"]) == len(revs)
    words = Page(_report(capsys, root, tmp_path / "c.html", "html", "--since", "2999-01-01")).all_text()
    assert f"Revisions at or after 2999-01-01: 0 of the {len(revs)} about this site." in words
    code, _, err = run(capsys, "report", root, "--site", SITE, "-o", tmp_path / "d.html", "--since", "last week")
    assert code == 2 and "YYYY-MM-DD" in err and not (tmp_path / "d.html").exists()


# -- writing nothing else ----------------------------------------------------------------------

@pytest.mark.parametrize("fmt", ["html", "csv", "json"])
def test_nothing_is_written_but_the_output(swapped, capsys, tmp_path, fmt):
    root, _ = swapped
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    before = _tree(root)
    _report(capsys, root, out_dir / f"r.{fmt}", fmt)
    assert _tree(root) == before                           # site files and the history, byte for byte
    assert sorted(p.name for p in out_dir.iterdir()) == [f"r.{fmt}"]


def test_refuses_to_overwrite_a_site_file_or_the_history(swapped, capsys):
    root, _ = swapped
    before = _tree(root)
    for target in (root / SITE / "site.yaml", root / ".izwatch" / "history.sqlite"):
        code, _, err = run(capsys, "report", root, "--site", SITE, "-o", target)
        assert code == 2 and "site file or the history" in err
    assert _tree(root) == before


def test_bad_input_exits_2_without_a_traceback(demo_copy, capsys, tmp_path):
    out = tmp_path / "r.html"
    code, _, err = run(capsys, "report", demo_copy, "--site", "no-such-site", "-o", out)
    assert code == 2 and err.startswith("izwatch: no site 'no-such-site'") and "Traceback" not in err
    with pytest.raises(SystemExit) as stop:
        run(capsys, "report", demo_copy, "--site", SITE, "--all-sites", "-o", out)
    assert stop.value.code == 2
    code, _, err = run(capsys, "report", demo_copy / SITE, "--site", "orchard-end", "-o", out)
    assert code == 2 and "holds site 'quill-court-2'" in err
    site_file = demo_copy / SITE / "site.yaml"
    site_file.write_text(site_file.read_text().replace("csa_mm2: 6,", "csa_mm2: 7,"))
    code, _, err = run(capsys, "report", demo_copy, "--site", SITE, "-o", out)
    assert code == 2 and "not a standard conductor size" in err and "no report written" in err
    assert not out.exists()


def test_a_single_site_folder_works(swapped, capsys, tmp_path):
    root, _ = swapped
    doc = json.loads(_report(capsys, root / SITE, tmp_path / "r.json", "json", "--db",
                             root / ".izwatch" / "history.sqlite"))
    assert doc["site"]["id"] == SITE and doc["history"]["state"] == "recorded"


# -- all sites ---------------------------------------------------------------------------------

def test_all_sites_writes_one_report_each_and_an_index(swapped, capsys, tmp_path):
    root, _ = swapped
    out = tmp_path / "reports"
    before = _tree(root)
    code, _, err = run(capsys, "report", root, "--all-sites", "-o", out)
    assert code == 0, err
    sites = ["bracken-cottage", "heron-row", "kestrel-parade-3", "larkspur-yard-4", "orchard-end", "quill-court-2",
             "tansy-walk-9a"]  # demo_site/
    assert sorted(p.name for p in out.iterdir()) == sorted([f"{s}.html" for s in sites] + ["index.html"])
    index = Page((out / "index.html").read_text(encoding="utf-8"))
    assert index.problems == [] and [a["href"] for a in index.find("a")] == [f"{s}.html" for s in sites]
    assert "competent person" in index.all_text()
    assert _tree(root) == before
    code, _, _ = run(capsys, "report", root, "--all-sites", "--format", "json", "-o", tmp_path / "j")
    doc = json.loads((tmp_path / "j" / "index.json").read_text())
    jsonschema.validate(doc, {**SCHEMA["$defs"]["index"], "$defs": SCHEMA["$defs"]},
                        cls=jsonschema.Draft202012Validator)
    assert [s["id"] for s in doc["sites"]] == sites
    code, _, _ = run(capsys, "report", root, "--all-sites", "--format", "csv", "-o", tmp_path / "c")
    rows = list(csv.DictReader(io.StringIO((tmp_path / "c" / "index.csv").read_text(), newline="")))
    assert [r["site"] for r in rows] == sites and rows[5]["fail"] == "1"   # quill-court-2: the shower


def test_all_sites_lists_a_site_that_does_not_load(demo_copy, capsys, tmp_path):
    bad = demo_copy / "tansy-walk-9a" / "site.yaml"
    bad.write_text(bad.read_text().replace("system: TN-C-S", "system: TN-X"))
    out = tmp_path / "reports"
    code, _, err = run(capsys, "report", demo_copy, "--all-sites", "-o", out)
    assert code == 2 and "TN-X" in err
    assert not (out / "tansy-walk-9a.html").exists() and (out / "quill-court-2.html").exists()
    index = Page((out / "index.html").read_text(encoding="utf-8")).all_text()
    assert "not loaded" in index and "TN-X" in index


def test_all_sites_needs_a_folder(demo_copy, capsys, tmp_path):
    target = tmp_path / "file.txt"
    target.write_text("x")
    code, _, err = run(capsys, "report", demo_copy, "--all-sites", "-o", target)
    assert code == 2 and "not a folder" in err and target.read_text() == "x"


def test_generated_at_is_the_moment_given(demo_copy):
    from tracker.loading import load_estate
    estate = load_estate(demo_copy)
    site = estate.sites[SITE]
    moment = datetime(2031, 4, 5, 6, 7, 8, tzinfo=timezone.utc)
    doc = gather.build(site, estate.loads[site.folder].files, demo_copy / "none.sqlite", now=moment)
    assert doc["generated_at"] == "2031-04-05T06:07:08Z"
    assert "2031-04-05 06:07 +00:00" in Page(html_page.render(doc)).all_text()      # the suite runs in UTC


@pytest.mark.parametrize("schema", [1, 2])
def test_a_history_an_earlier_izwatch_wrote_is_read_as_it_is_and_left_so(demo_copy, capsys, tmp_path, schema):
    # A landlord upgrades izwatch and asks for a report before anything has written to the history:
    # the report reads it (it never migrates a history), says so, and the file keeps its bytes.
    import shutil
    from tracker.history import History
    from tracker.history.store import migrations_dir
    folder = tmp_path / "earlier"
    folder.mkdir()
    for sql in sorted(migrations_dir().glob("*.sql"))[:schema]:
        shutil.copy(sql, folder)
    path = demo_copy / ".izwatch" / "history.sqlite"
    History.open(path, migrations=folder).close()
    before = path.read_bytes()
    doc = json.loads(_report(capsys, demo_copy, tmp_path / "r.json", "json"))
    assert doc["history"]["state"] == "recorded"
    assert f"history schema {schema} of" in doc["history"]["reason"] and "izwatch verify" in doc["history"]["reason"]
    page = _report(capsys, demo_copy, tmp_path / "r.html")
    assert "written by an earlier izwatch" in page and "could not be read" not in page
    assert path.read_bytes() == before
