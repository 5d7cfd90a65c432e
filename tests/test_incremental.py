"""The incremental engine equals a full check: random sequences of edits (hypothesis) applied
file by file through EstateState, each compared with a fresh evaluation of the same site."""
from __future__ import annotations

import copy
import shutil

import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tests.conftest import DEMO
from tracker.checks.site import evaluate_site, explain_circuit, headroom_kw
from tracker.tracking.state import EstateState

GARDEN = {
    "boards": [{"id": "GB1", "name": "Garden room board", "fed_by": "WS1/5", "main_switch_a": 40}],
    "circuits": [
        {"id": "5", "board": "WS1", "name": "Sub-main to garden room", "feeds": "GB1",
         "device": {"kind": "mcb", "curve": "B", "rating_a": 32, "breaking_ka": 6},
         "cable": {"kind": "swa-90", "csa_mm2": 6, "cpc_mm2": 6, "length_m": 15, "method": "D"}},
        {"id": "1", "board": "GB1", "name": "Garden room sockets",
         "device": {"kind": "rcbo", "curve": "B", "rating_a": 16, "breaking_ka": 6}, "rcd_ma": 30,
         "cable": {"kind": "twin-earth-70", "csa_mm2": 2.5, "cpc_mm2": 1.5, "length_m": 8, "method": "C"},
         "loads": [{"id": "s", "kind": "socket-outlets"}]},
        {"id": "2", "board": "GB1", "name": "Garden room heater",
         "device": {"kind": "mcb", "curve": "B", "rating_a": 16, "breaking_ka": 6},
         "cable": {"kind": "twin-earth-70", "csa_mm2": 2.5, "cpc_mm2": 1.5, "length_m": 6, "method": "C"},
         "loads": [{"id": "h", "kind": "space-heater", "power_kw": 2}]},
    ],
}
FILES = ("site.yaml", "workshop.yaml", "garden.yaml")
RATINGS = [6, 10, 16, 20, 32, 40, 50, 63]
SIZES = [1.5, 2.5, 4, 6, 10, 16]


def make_estate(tmp_path):
    root = tmp_path / "estate"
    (root / "orchard-end").mkdir(parents=True)
    for name in ("site.yaml", "workshop.yaml"):
        shutil.copy(DEMO / "orchard-end" / name, root / "orchard-end" / name)
    (root / "orchard-end" / "garden.yaml").write_text(yaml.safe_dump(GARDEN, sort_keys=False))
    docs = {name: yaml.safe_load((root / "orchard-end" / name).read_text()) for name in FILES}
    state = EstateState(root)
    state.seed({f"orchard-end/{n}": (root / "orchard-end" / n).read_bytes() for n in FILES})
    return state, docs


EDITS = st.sampled_from(["load", "rating", "length", "csa", "grouping", "add-load", "remove-load",
                         "add-circuit", "remove-circuit", "main-switch", "ze", "rcd", "board-rcd", "exempt"])


@st.composite
def edit(draw):
    return (draw(EDITS), draw(st.sampled_from(FILES)), draw(st.integers(0, 50)), draw(st.integers(0, 1000)))


def apply_edit(docs, e):
    kind, name, i, j = e
    doc = docs[name]
    circuits = [c for c in doc.get("circuits") or [] if "feeds" not in c]
    if kind == "ze" and name == "site.yaml":
        doc["supply"]["ze_ohm"] = round(0.05 + j / 1000, 3)
    elif kind in ("main-switch", "board-rcd") and doc.get("boards"):
        b = doc["boards"][i % len(doc["boards"])]
        if kind == "main-switch":
            b["main_switch_a"] = [40, 63, 80, 100][j % 4]
        else:
            b["rcd_ma"] = [None, 30, 100][j % 3]
            if b["rcd_ma"] is None:
                del b["rcd_ma"]
    elif kind == "add-circuit" and doc.get("circuits"):
        board = doc["circuits"][0]["board"]
        doc["circuits"].append({"id": f"n{j}", "board": board, "name": "added",
                                "device": {"kind": "mcb", "curve": "B", "rating_a": 16, "breaking_ka": 6},
                                "cable": {"kind": "twin-earth-70", "csa_mm2": 2.5, "length_m": 1 + j % 40,
                                          "method": "C"},
                                "loads": [{"id": "x", "kind": "fixed", "power_kw": 0.5 + j % 5}]})
    elif not circuits:
        return
    else:
        c = circuits[i % len(circuits)]
        if kind == "load" and c.get("loads") and "power_kw" in c["loads"][0]:
            c["loads"][0]["power_kw"] = round(0.1 + j / 70, 2)
        elif kind == "rating":
            c["device"]["rating_a"] = RATINGS[j % len(RATINGS)]
        elif kind == "length":
            c["cable"]["length_m"] = 1 + j % 90
        elif kind == "csa" and c["cable"]["kind"] != "swa-90":
            c["cable"]["csa_mm2"] = SIZES[j % len(SIZES)]
            c["cable"].pop("cpc_mm2", None)
        elif kind == "grouping":
            c.setdefault("environment", {})["grouped_with"] = 1 + j % 6
        elif kind == "add-load":
            c.setdefault("loads", []).append({"id": f"l{j}", "kind": "other", "power_kw": 0.2 + j % 3})
        elif kind == "remove-load" and c.get("loads"):
            c["loads"].pop()
        elif kind == "remove-circuit":
            doc["circuits"].remove(c)
        elif kind == "rcd":
            if c["device"]["kind"] != "rcbo":
                if "rcd_ma" in c:
                    del c["rcd_ma"]
                else:
                    c["rcd_ma"] = 30
        elif kind == "exempt":
            c["overload_exempt"] = not c.get("overload_exempt", False)


def snapshot(sr):
    out = {}
    for ref, r in sr.circuits.items():
        out[ref] = (r.status, r.ib_a, r.iz_a, r.basis, headroom_kw(sr, r),
                    [(c.id, c.status, c.value, c.limit, c.detail) for c in r.checks])
    for ref, b in sr.boards.items():
        out[ref] = (b.status, b.demand.demand_a, b.check.detail, b.margin_a)
    out["supply"] = (sr.supply_check.status, sr.supply_check.value)
    return out


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(edit(), min_size=1, max_size=12))
def test_incremental_equals_full(tmp_path_factory, edits):
    state, docs = make_estate(tmp_path_factory.mktemp("inc"))
    docs = copy.deepcopy(docs)
    applied = 0
    for e in edits:
        apply_edit(docs, e)
        raw = yaml.safe_dump(docs[e[1]], sort_keys=False).encode()
        outcome = state.apply_bytes(f"orchard-end/{e[1]}", raw)
        ss = state.sites["orchard-end"]
        assert snapshot(ss.result) == snapshot(evaluate_site(ss.site, explain=False)), e
        full = evaluate_site(ss.site)
        for ref, r in ss.result.circuits.items():   # the working text, produced on demand, is the same
            assert explain_circuit(r).checks == full.circuits[ref].checks, (e, ref)
        if outcome is not None and outcome.valid:
            applied += 1
            # the check re-ran only where the graph said it could matter
            assert outcome.rechecked <= len(ss.site.circuits)


def test_a_load_change_rechecks_only_what_it_can_affect(tmp_path):
    state, docs = make_estate(tmp_path)
    # A load on the house board (at the origin): only that circuit is re-checked.
    text = (state.root / "orchard-end/site.yaml").read_text().replace("power_kw: 0.9", "power_kw: 1.9")
    out = state.apply_bytes("orchard-end/site.yaml", text.encode())
    assert out.rechecked == 1
    # A load two sub-mains down: the topmost sub-main and everything below it (CU1/6 + WS1's
    # 5 circuits + GB1's 2), but not the house circuits.
    docs["garden.yaml"]["circuits"][2]["loads"][0]["power_kw"] = 3
    out = state.apply_bytes("orchard-end/garden.yaml", yaml.safe_dump(docs["garden.yaml"]).encode())
    assert out.rechecked == 1 + 5 + 2
    assert {e["ref"] for e in out.events} <= set(state.sites["orchard-end"].result.circuits) | {
        "orchard-end/CU1", "orchard-end/WS1", "orchard-end/GB1", "orchard-end"}


# -- three-phase: a line moved, a load changed below a three-phase sub-main ---------------------

SHOP = {
    "boards": [{"id": "DB2", "name": "Shop board", "fed_by": "LB/9", "phases": 3, "main_switch_a": 63}],
    "circuits": [
        {"id": "9", "board": "LB", "name": "Sub-main to the shop", "phases": 3, "feeds": "DB2",
         "device": {"kind": "mcb", "curve": "C", "rating_a": 63, "breaking_ka": 10},
         "cable": {"kind": "swa-90", "csa_mm2": 16, "cpc_mm2": 16, "length_m": 30, "method": "C"}},
    ] + [
        {"id": str(k), "board": "DB2", "name": f"Heater {k}", "phase": ph,
         "device": {"kind": "mcb", "curve": "B", "rating_a": 20, "breaking_ka": 10},
         "cable": {"kind": "swa-90", "csa_mm2": 2.5, "cpc_mm2": 2.5, "length_m": 10 + 5 * k, "method": "C"},
         "loads": [{"id": "h", "kind": "fixed", "power_kw": 1.0 + k}]}
        for k, ph in ((1, "L1"), (2, "L2"), (3, "L3"), (4, "L1"))
    ],
}
THREE_PHASE_FILES = ("site.yaml", "flats.yaml", "shop.yaml")


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(st.tuples(st.sampled_from(["line", "load", "length", "lift"]), st.integers(0, 50),
                          st.integers(0, 1000)), min_size=1, max_size=10))
def test_incremental_equals_full_on_three_phase(tmp_path_factory, edits):
    root = tmp_path_factory.mktemp("inc3") / "estate"
    shutil.copytree(DEMO / "heron-row", root / "heron-row")
    (root / "heron-row" / "shop.yaml").write_text(yaml.safe_dump(SHOP, sort_keys=False))
    docs = {n: yaml.safe_load((root / "heron-row" / n).read_text()) for n in THREE_PHASE_FILES}
    state = EstateState(root)
    state.seed({f"heron-row/{n}": (root / "heron-row" / n).read_bytes() for n in THREE_PHASE_FILES})
    for kind, i, j in edits:
        if kind == "line":       # a single-phase circuit or a flat's feed moved to another line
            name = ("site.yaml", "shop.yaml")[i % 2]
            movable = [c for c in docs[name]["circuits"] if "phase" in c]
            movable[i % len(movable)]["phase"] = ("L1", "L2", "L3")[j % 3]
        elif kind == "load":
            name = ("flats.yaml", "shop.yaml")[i % 2]
            loaded = [c for c in docs[name]["circuits"] if c.get("loads") and "power_kw" in c["loads"][0]]
            loaded[i % len(loaded)]["loads"][0]["power_kw"] = round(0.5 + j / 100, 2)
        elif kind == "length":
            name = THREE_PHASE_FILES[i % 3]
            c = docs[name]["circuits"][j % len(docs[name]["circuits"])]
            c["cable"]["length_m"] = 1 + j % 60
        else:
            docs["site.yaml"]["circuits"][0]["loads"][0]["power_kw"] = round(2 + j / 50, 2)
        name = {"line": ("site.yaml", "shop.yaml")[i % 2], "load": ("flats.yaml", "shop.yaml")[i % 2],
                "length": THREE_PHASE_FILES[i % 3], "lift": "site.yaml"}[kind]
        state.apply_bytes(f"heron-row/{name}", yaml.safe_dump(docs[name], sort_keys=False).encode())
        ss = state.sites["heron-row"]
        assert snapshot(ss.result) == snapshot(evaluate_site(ss.site, explain=False)), (kind, i, j)
