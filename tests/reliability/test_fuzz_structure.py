"""Fuzzing at the level of a site file's structure (hypothesis): types swapped, values out of
range, references broken, keys and elements removed or duplicated. Every outcome is a clean
pass, fail or exit 2 with located errors, and the incremental engine stays equal to a full check."""
from __future__ import annotations

import copy
import io
import re
from contextlib import redirect_stderr, redirect_stdout

import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from tests.conftest import DEMO
from tests.reliability.conftest import FIGURES
from tracker.checks.site import evaluate_site
from tracker.cli import main
from tracker.tracking.state import EstateState

BASE = {name: yaml.safe_load((DEMO / "orchard-end" / name).read_text()) for name in ("site.yaml", "workshop.yaml")}
LOCATED = re.compile(r"^orchard-end/\w+\.yaml:\d+:\d+: ", re.M)
ODD = [None, True, "", "x", -1, 0, 1e9, -0.0, [], {}, [1, 2], {"a": 1}, "CU1", "supply", "WS1/9", 3.5, 10**20]


def _paths(doc, prefix=()):
    out = [prefix]
    if isinstance(doc, dict):
        for k, v in doc.items():
            out += _paths(v, prefix + (k,))
    elif isinstance(doc, list):
        for i, v in enumerate(doc):
            out += _paths(v, prefix + (i,))
    return out


def _get(doc, path):
    for p in path:
        doc = doc[p]
    return doc


@st.composite
def mutations(draw):
    docs = copy.deepcopy(BASE)
    for _ in range(draw(st.integers(1, 4))):
        name = draw(st.sampled_from(sorted(docs)))
        doc = docs[name]
        paths = [p for p in _paths(doc) if p]
        if not paths:              # the document was emptied by an earlier mutation
            continue
        path = draw(st.sampled_from(paths))
        parent, key = _get(doc, path[:-1]), path[-1]
        action = draw(st.sampled_from(["replace", "delete", "duplicate", "swap-refs", "scale"]))
        if action == "replace":
            parent[key] = draw(st.sampled_from(ODD))
        elif action == "delete":
            del parent[key]
        elif action == "duplicate" and isinstance(parent, list):
            parent.append(copy.deepcopy(parent[key]))
        elif action == "swap-refs" and key in ("board", "fed_by", "feeds"):
            parent[key] = draw(st.sampled_from(["CU1", "WS1", "CU1/6", "CU1/1", "WS1/4", "supply", "XX"]))
        elif action == "scale" and isinstance(parent[key], (int, float)) and not isinstance(parent[key], bool):
            parent[key] = parent[key] * draw(st.sampled_from([-1, 0, 0.001, 3, 1000, 1e12]))
    return docs


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture,
                                                                   HealthCheck.too_slow])
@given(mutations())
def test_structural_mutations_end_cleanly(tmp_path_factory, docs):
    root = tmp_path_factory.mktemp("fz") / "estate"
    (root / "orchard-end").mkdir(parents=True)
    for name, doc in docs.items():
        (root / "orchard-end" / name).write_text(yaml.safe_dump(doc, sort_keys=False))
    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        code = main(["check", str(root), "--json"])
    assert code in (0, 1, 2)
    assert "internal error" not in err.getvalue() and "Traceback" not in err.getvalue()
    if code == 2:
        assert LOCATED.search(err.getvalue()), err.getvalue()
    FIGURES["structural mutations tried"] = FIGURES.get("structural mutations tried", 0) + 1
    FIGURES["… of which invalid (exit 2)"] = FIGURES.get("… of which invalid (exit 2)", 0) + (code == 2)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture,
                                                                  HealthCheck.too_slow])
@given(st.lists(mutations(), min_size=1, max_size=4))
def test_incremental_stays_equal_to_full_under_mutation(tmp_path_factory, steps):
    root = tmp_path_factory.mktemp("fzi") / "estate"
    (root / "orchard-end").mkdir(parents=True)
    state = EstateState(root)
    state.seed({f"orchard-end/{n}": yaml.safe_dump(d, sort_keys=False).encode() for n, d in BASE.items()})
    for docs in steps:
        for name, doc in docs.items():
            state.apply_bytes(f"orchard-end/{name}", yaml.safe_dump(doc, sort_keys=False).encode())
            ss = state.sites.get("orchard-end")
            if ss is None or ss.site is None:
                continue
            full = evaluate_site(ss.site, explain=False)
            assert {r: [(c.id, c.status, c.value, c.limit) for c in x.checks] for r, x in ss.result.circuits.items()} \
                == {r: [(c.id, c.status, c.value, c.limit) for c in x.checks] for r, x in full.circuits.items()}
            assert {r: b.check.value for r, b in ss.result.boards.items()} == \
                {r: b.check.value for r, b in full.boards.items()}
