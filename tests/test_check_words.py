"""The checks' one text mechanism: working text deferred as `words` is built only where text is
shown; a verdict with words carries no text of its own; a circuit kept without text, worded on
demand, reads exactly as one evaluated with it."""
from __future__ import annotations

import pytest

from tests.conftest import DEMO
from tracker.checks import circuit as circuit_checks
from tracker.checks import registry
from tracker.checks.result import Words
from tracker.checks.site import evaluate_site, explain_circuit
from tracker.loading import load_estate


@pytest.fixture(scope="module")
def demo_sites():
    return list(load_estate(DEMO).sites.values())


def test_no_text_is_built_without_explain(demo_sites, monkeypatch):
    def refuse(self):
        raise AssertionError(f"text built for a state without text: {self.build.__qualname__}")

    monkeypatch.setattr(Words, "text", refuse)
    for site in demo_sites:
        sr = evaluate_site(site, explain=False)
        assert all(not r.explained for r in sr.circuits.values())


def test_a_verdict_with_words_has_no_text_of_its_own(demo_sites, monkeypatch):
    seen = []
    real = registry.Outcome.worded

    def watching(self):
        if self.words is not None:
            assert self.result.detail == "", self.result
            seen.append(self.result.id)
        return real(self)

    monkeypatch.setattr(registry.Outcome, "worded", watching)
    for site in demo_sites:
        evaluate_site(site)
    # the demo runs every check that defers its text at least once
    assert {"capacity", "voltage-drop", "fault-loop", "cpc-adiabatic", "line-adiabatic",
            "breaking-capacity", "design-current", "rcd"} <= set(seen)


def test_worded_on_demand_equals_evaluated_with_text(demo_sites):
    for site in demo_sites:
        plain, full = evaluate_site(site, explain=False), evaluate_site(site)
        for ref, r in plain.circuits.items():
            worded = explain_circuit(r)
            assert worded.explained and worded.checks == full.circuits[ref].checks, ref
            assert worded.working == full.circuits[ref].working, ref
            assert all(c.detail for c in worded.checks), ref    # every verdict says why


def test_explained_result_is_not_evaluated_again(demo_sites, monkeypatch):
    r = next(iter(evaluate_site(demo_sites[0]).circuits.values()))
    monkeypatch.setattr(circuit_checks, "evaluate", lambda *a, **k: pytest.fail("evaluated again"))
    assert explain_circuit(r) is r
