"""`generation`: a circuit through which PV inverters or batteries feed the installation
(tracker/data/generation.yaml): its device and cable rated for the source current (551.7.2);
every protective device and RCD with the source on its load side suitable for power flowing
either way (530.3.201); a means of isolating each source (551.7.6, 712.537.2). The origin's
notification state (G98/G99) is the site's, reported with the origin. What is not recorded is
`not-assessed`, naming the key."""
from __future__ import annotations

from tracker import catalogue
from tracker.checks.context import Facts
from tracker.checks.parts import Parts
from tracker.checks.registry import CheckSpec, Outcome
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, CheckResult
from tracker.checks.working import figure, record

ID = "generation"


def applies(circuit) -> bool:
    return bool(circuit.sources)


@record
class GenerationWorking:
    source_a: float | None = figure("A", "rated AC output of the inverters on the circuit, summed (551.7.2)")


CHECK = CheckSpec(
    id=ID, rank=160, stage=80, name="generation and storage (551.7)", unit="A", compare="<=",
    record=GenerationWorking, applies=applies,
    needs=lambda circuit: ("capacity",),   # Iz, where the sources share the circuit with loads
    helps=frozenset(),        # requirements (direction, isolation): its failing lines say what to fit
)


def _clause(rule: dict) -> str:
    return rule["clause"] + ("" if rule["status"] == "seen" else f" [{rule['status']}]")


def _ratings(f: Facts, iz_a: float | None, parts: Parts, data: dict) -> tuple[float | None, float | None]:
    c = f.circuit
    source_a = sum(s.inverter_a for s in c.sources)
    names = " + ".join(f"{s.id} {s.inverter_a:g} A" for s in c.sources)
    if not c.loads:
        rule = data["ratings"]["dedicated"]
        ok = source_a <= f.in_a
        parts.add(PASS if ok else FAIL,
                  f"{_clause(rule)}: inverter output {names} {'≤' if ok else '>'} In {f.in_a:g} A ({f.label})"
                  + ("" if ok else ": the device would carry more than its rating — a larger device (and cable "
                                   "for it) is needed"))
        return source_a, f.in_a
    rule = data["ratings"]["shared"]
    need = f.in_a + source_a
    if iz_a is None:
        parts.add(NOT_ASSESSED, f"{_clause(rule)}: the circuit also serves loads, so its cable must carry "
                                f"In {f.in_a:g} A + {names} = {need:g} A — its Iz is not known")
        return need, None
    ok = need <= iz_a
    parts.add(PASS if ok else FAIL,
              f"{_clause(rule)}: the circuit also serves loads: In {f.in_a:g} A + inverter output {names} = "
              f"{need:g} A {'≤' if ok else '>'} Iz {iz_a:.1f} A"
              + ("" if ok else ": the loads and the source together can overload the cable — give the source "
                               "its own circuit"))
    return need, iz_a


def _direction(f: Facts, parts: Parts, data: dict) -> None:
    rule = data["direction"]
    clause = _clause(rule)
    devices = [(f"the {f.label}", f.circuit.device.bidirectional, "device.bidirectional")]
    devices += [(f"the {r.idn_ma:g} mA RCD ({r.at})", r.data.bidirectional, "rcd_bidirectional") for r in f.rcds]
    one_way = [name for name, bi, _ in devices if bi is False]
    unknown = [(name, key) for name, bi, key in devices if bi is None]
    if one_way:
        parts.add(FAIL, f"{clause}: {', '.join(one_way)} {'is' if len(one_way) == 1 else 'are'} marked for one "
                        "direction (line/load) but has the source on its load side: fit a bidirectional device")
    if unknown:
        parts.add(NOT_ASSESSED, f"{clause}: whether {', '.join(n for n, _ in unknown)} may be fed from its load "
                                f"side is not recorded (record {', '.join(sorted({k for _, k in unknown}))})")
    if not one_way and not unknown:
        parts.add(PASS, f"{clause}: every device with the source on its load side is bidirectional")


def _isolation(f: Facts, parts: Parts, data: dict) -> None:
    clause = _clause(data["isolation"])
    for s in f.circuit.sources:
        if s.isolation is True:
            parts.add(PASS, f"{clause}: {s.id} has a means of isolation")
        elif s.isolation is False:
            parts.add(FAIL, f"{clause}: {s.id} has no means of isolating it from the supply — fit a lockable "
                            "isolator on the inverter's AC side")
        else:
            parts.add(NOT_ASSESSED, f"{clause}: whether {s.id} has a means of isolation is not recorded "
                                    "(record isolation on the source)")


def run(f: Facts, done) -> Outcome:
    data = catalogue.generation()
    cap = done.get("capacity")
    iz_a = getattr(cap.record, "iz_a", None) if cap is not None else None
    parts = Parts()
    value, limit = _ratings(f, iz_a, parts, data)
    _direction(f, parts, data)
    _isolation(f, parts, data)
    result = CheckResult(ID, parts.status, value, limit, "A", "<=", parts.detail())
    return Outcome(result, GenerationWorking(source_a=sum(s.inverter_a for s in f.circuit.sources)))
