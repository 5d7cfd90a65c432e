"""One edit in the watcher evaluates each circuit it can affect once for its verdicts, and words
(evaluates with the working text) only the circuits whose checks changed, once each however many
of their checks changed; the site's deadlines reuse the notification outcome of that evaluation
instead of evaluating the whole site before and after again. `check` and the report evaluate a
site once."""
from __future__ import annotations

import datetime
from collections import Counter

import pytest

from tests.upgrade_sites import charger, house
from tracker.checks import circuit as circuit_checks
from tracker.tracking.state import EstateState

SITE = "test-house/site.yaml"


@pytest.fixture
def counted(monkeypatch):
    """Every circuit evaluation, as (ref, with text)."""
    calls: Counter = Counter()
    real = circuit_checks.evaluate

    def counting(circuit, ctx, fed_demand_a=None, explain=True, readings=None, fed_phases_a=None):
        calls[(f"{ctx.site_id}/{circuit.board}/{circuit.id}", explain)] += 1
        return real(circuit, ctx, fed_demand_a, explain, readings, fed_phases_a)

    monkeypatch.setattr(circuit_checks, "evaluate", counting)
    return calls


def _state(tmp_path, text: str) -> EstateState:
    root = tmp_path / "estate"
    (root / "test-house").mkdir(parents=True)
    (root / SITE).write_text(text)
    state = EstateState(root)
    state.today = lambda: datetime.date(2026, 12, 3)
    state.seed({SITE: text.encode()})
    return state


# A charge point connected on 2026-11-20: the operator's deadline is recorded (connected_on), so
# the site's due items need its maximum demand — the case that used to evaluate the site twice more.
CONNECTED = charger().replace("current_a: 32,", "current_a: 32, load_control_a: 6, connected_on: 2026-11-20,")


def test_one_edit_evaluates_the_affected_circuit_once(tmp_path, counted):
    before = house(CONNECTED)
    state = _state(tmp_path, before)
    counted.clear()
    # the cooker's cable made longer: only circuit 2 can change (its own checks)
    after = before.replace("csa_mm2: 6, cpc_mm2: 2.5, length_m: 8,", "csa_mm2: 6, cpc_mm2: 2.5, length_m: 9,")
    assert after != before
    outcome = state.apply_bytes(SITE, after.encode())
    assert outcome is not None and outcome.valid
    assert counted[("test-house/CU1/2", False)] == 1
    assert counted[("test-house/CU1/2", True)] <= 1           # worded once, only if an event asks
    others = {ref for (ref, _), n in counted.items() if ref != "test-house/CU1/2"}
    assert others == set(), counted                          # the ring and the charge point untouched


def test_many_events_on_one_circuit_word_it_once(tmp_path, counted):
    before = house(CONNECTED)
    state = _state(tmp_path, before)
    counted.clear()
    # the cooker on 60 m of 1 mm² with a 1 mm² cpc: capacity, voltage drop and more fail at once
    after = before.replace("csa_mm2: 6, cpc_mm2: 2.5, length_m: 8,", "csa_mm2: 1, cpc_mm2: 1, length_m: 60,")
    outcome = state.apply_bytes(SITE, after.encode())
    assert outcome is not None and outcome.valid
    changed = [e for e in outcome.events if e["ref"] == "test-house/CU1/2"]
    assert len(changed) >= 2, outcome.events
    assert all(e["detail"] for e in changed)                 # each event still carries its text
    assert counted[("test-house/CU1/2", False)] == 1
    assert counted[("test-house/CU1/2", True)] == 1


def test_check_words_each_circuit_once(tmp_path, counted):
    """`check --json` of a site: each circuit evaluated with its text once (the remedy search's
    trials of other cables and devices are evaluations of other circuits, without text)."""
    import io

    from tracker.commands import check as check_command

    root = tmp_path / "estate"
    (root / "test-house").mkdir(parents=True)
    (root / SITE).write_text(house(CONNECTED))
    renderer = check_command._JsonOut(io.StringIO(), False).worker_copy()
    out = check_command.load_and_check((root, renderer), (root / "test-house", "test-house"))
    assert out.site_id == "test-house"
    worded = {ref: n for (ref, text), n in counted.items() if text}
    assert worded == {"test-house/CU1/1": 1, "test-house/CU1/2": 1, "test-house/CU1/3": 1}
