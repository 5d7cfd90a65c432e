"""`izwatch due PATH [--on DATE] [--json]` (SPEC §7): the fixed JSON shape, exit codes, text."""
from __future__ import annotations

import json

from tests.conftest import MINIMAL
from tracker.cli import main

RENTED = MINIMAL.replace('  name: "Test flat"\n', '  name: "Test flat"\n  tenure: private-rented\n') + """\
inspections:
  - date: 2026-03-11
    by: "A. Tester"
    kind: periodic
    copy_to_tenant_on: 2026-03-20
    observations:
      - {code: C2, text: "No RCD for sockets used outdoors", ref: CU1/1, done_on: 2026-03-30,
         confirmed_on: 2026-04-02}
      - {code: C3, text: "No surge protection"}
      - {code: FI, text: "Circuit at the shed not traced"}
"""


def _due(capsys, *args):
    code = main(["due", *map(str, args)])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_json_shape_and_exit_1_when_overdue(site_factory, capsys):
    root = site_factory(RENTED)
    code, out, _ = _due(capsys, root, "--on", "2026-04-08", "--json")
    doc = json.loads(out)
    assert doc["schema"] == "izwatch.due/1"
    assert all(set(i) == {"site", "what", "due", "status", "source", "ref"} for i in doc["items"])
    by_what = {i["what"].split(":")[0]: i for i in doc["items"]}
    # SI 2020/312 reg. 3(4)(a): 28 days starting with 2026-03-11 → 2026-04-07, overdue on 04-08
    assert by_what["remedial work"]["status"] in ("done", "overdue")
    fi = [i for i in doc["items"] if "FI Circuit at the shed" in i["what"]][0]
    assert (fi["due"], fi["status"], fi["ref"]) == ("2026-04-07", "overdue", "flat-1/inspection:2026-03-11")
    c2 = [i for i in doc["items"] if i["what"].startswith("remedial work: C2")][0]
    assert (c2["due"], c2["status"], c2["ref"]) == ("2026-04-07", "done", "flat-1/CU1/1")
    assert code == 1


def test_exit_0_when_nothing_is_overdue(site_factory, capsys):
    root = site_factory(RENTED)
    code, out, _ = _due(capsys, root, "--on", "2026-03-25")
    assert code == 0
    assert "OVERDUE" not in out and "DUE SOON" not in out.split("\n")[0]
    assert "Caution:" in out


def test_done_items_and_the_next_inspection(site_factory, capsys):
    root = site_factory(RENTED)
    _, out, _ = _due(capsys, root, "--on", "2026-06-01", "--json")
    items = json.loads(out)["items"]
    statuses = {i["what"].split(" (")[0].split(":")[0]: i["status"] for i in items}
    assert statuses["copy of the 2026-03-11 report to the tenants"] == "done"
    assert statuses["written confirmation of the work to each tenant and the local housing authority"] == "done"
    assert statuses["next inspection and test"] == "ok"
    assert [i["due"] for i in items] == sorted(i["due"] for i in items)


def test_bad_date_and_bad_input(site_factory, capsys):
    root = site_factory(RENTED)
    code, _, err = _due(capsys, root, "--on", "11/03/2026")
    assert code == 2 and "--on '11/03/2026': give a date as YYYY-MM-DD" in err
    bad = site_factory(RENTED.replace("ref: CU1/1, done_on", "ref: CU1/9, done_on"), folder="flat-2")
    code, _, err = _due(capsys, bad, "--on", "2026-03-25")
    assert code == 2 and "flat-2/site.yaml:" in err and "no circuit 'CU1/9'" in err


def test_output_matches_its_schema(site_factory, capsys):
    import jsonschema

    from tests.conftest import ROOT
    schema = json.loads((ROOT / "schema" / "due-output.schema.json").read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    _, out, _ = _due(capsys, site_factory(RENTED), "--on", "2026-04-08", "--json")
    jsonschema.Draft202012Validator(schema).validate(json.loads(out))


def test_text_from_the_site_file_is_shown_escaped(site_factory, capsys):
    root = site_factory(RENTED.replace('"Circuit at the shed not traced"', '"Shed\\rok"'))
    _, out, _ = _due(capsys, root, "--on", "2026-03-25")
    assert "FI Shed\\rok" in out and "\r" not in out


def test_the_demo_estate(capsys):
    from tests.conftest import DEMO
    code, out, _ = _due(capsys, DEMO, "--on", "2026-12-03", "--json")
    items = json.loads(out)["items"]
    overdue = [(i["site"], i["what"].split(" (")[0]) for i in items if i["status"] == "overdue"]
    # demo_site/tansy-walk-9a: inspected 2021-01-19, the inspector asked for the next by 2024-01-18
    assert overdue == [("tansy-walk-9a", "next inspection and test")] and code == 1
    quill = {i["what"].split(":")[0]: i["status"] for i in items if i["site"] == "quill-court-2"}
    assert quill["remedial work"] == "done"     # the C2, reconnected 2026-03-24 within the 28 days
