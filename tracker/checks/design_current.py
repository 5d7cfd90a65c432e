"""`design-current`: Ib ≤ In (BS 7671:2018 433.1.1(i)), and how Ib is found for a circuit."""
from __future__ import annotations

from typing import TYPE_CHECKING

from tracker.checks import rules
from tracker.checks.registry import RATING_UP, CheckSpec, Outcome, always_on_load
from tracker.checks.result import WARN, CheckResult, not_assessed, verdict, words
from tracker.checks.working import figure, record
from tracker.engine import three_phase
from tracker.engine.current import design_current_a
from tracker.model import PHASES, Circuit

if TYPE_CHECKING:
    from tracker.checks.context import Facts

ID = "design-current"


@record
class DesignCurrentWorking:
    ib_a: float | None = figure("A", "design current Ib; null where no load data is given")
    ib_source: str | None = figure("", "how Ib was found, in words", kind=str)


CHECK = CheckSpec(
    id=ID, rank=10, stage=10, name="design current, Ib ≤ In", unit="A", compare="<=", gauge="Ib / In",
    record=DesignCurrentWorking, helps=frozenset({RATING_UP}), load_dependent=always_on_load,
)


def circuit_ib(circuit: Circuit, u0_v: float, fed_demand_a: float | None, premises: str = "domestic",
               own: tuple = ()) -> tuple[float | None, str]:
    """(Ib, how it was found): design_current_a where given; a sub-main's fed demand; In for a
    socket-outlet circuit (common practice); the premises' cooker allowance; else the sum of the
    loads' currents, I = P / (U0 × pf [× efficiency])."""
    if circuit.design_current_a is not None:
        return circuit.design_current_a, f"Ib {circuit.design_current_a:g} A (design_current_a in the site file)"
    if circuit.is_submain:
        if fed_demand_a is None:
            return None, f"demand of {circuit.feeds} unknown"
        return fed_demand_a, f"Ib = demand of {circuit.feeds} after diversity, {fed_demand_a:.2f} A"
    if rules.has_kind(circuit, "socket-outlets"):
        return circuit.device.rating_a, (f"Ib taken as In = {circuit.device.rating_a:g} A "
                                         "(socket-outlet circuit, common practice)")
    if not circuit.loads and circuit.sources:
        # A circuit that only connects sources carries their inverters' rated output (551.7.2).
        total = sum(s.inverter_a for s in circuit.sources)
        parts = " + ".join(f"{s.id} {s.inverter_a:g} A" for s in circuit.sources)
        return total, f"Ib = rated inverter output {parts}" + (f" = {total:.2f} A" if len(circuit.sources) > 1 else "")
    if not circuit.loads:
        return None, "no load listed"
    if all(ld.kind == "cooker" for ld in circuit.loads):
        return _cooker_ib(circuit, u0_v, premises, own)
    parts, total = [], 0.0
    for ld in circuit.loads:
        i, how = load_current_a(ld, u0_v)
        total += i
        parts.append(how)
    how = "Ib = " + " + ".join(parts) + (f" = {total:.2f} A" if len(parts) > 1 else "")
    return total, how


def circuit_ib_three_phase(circuit: Circuit, u0_v: float, u_line_v: float,
                           fed_phases_a: tuple | None) -> tuple[float | None, str, tuple | None]:
    """(Ib, how, (I_L1, I_L2, I_L3)) of a three-phase circuit: Ib is the largest line current.

    design_current_a is a balanced line current; a three-phase sub-main carries the demand of
    each line of the board it feeds; a load's power_kw is balanced, I = P / (√3 × U_L × pf); its
    current_a is a balanced line current; phase_currents_a gives each line's current."""
    if circuit.design_current_a is not None:
        i = circuit.design_current_a
        return i, f"Ib {i:g} A in each line (design_current_a in the site file)", (i, i, i)
    if circuit.is_submain:
        if fed_phases_a is None:
            return None, f"demand of {circuit.feeds} unknown", None
        ib = max(fed_phases_a)
        lines = ", ".join(f"{ph} {i:.2f} A" for ph, i in zip(PHASES, fed_phases_a))
        return ib, f"Ib = largest line demand of {circuit.feeds} after diversity ({lines}) = {ib:.2f} A", fed_phases_a
    if not circuit.loads:
        return None, "no load listed", None
    totals = [0.0, 0.0, 0.0]
    parts = []
    for ld in circuit.loads:
        if ld.phase_currents_a is not None:
            for k, i in enumerate(ld.phase_currents_a):
                totals[k] += i
            parts.append(f"{ld.id} " + "/".join(f"{i:g}" for i in ld.phase_currents_a) + " A (L1/L2/L3)")
            continue
        if ld.current_a is not None:
            i, text = ld.current_a, f"{ld.id} {ld.current_a:g} A per line"
        else:
            i = three_phase.balanced_line_current_a(ld.power_kw, u_line_v, ld.power_factor)
            pf = f" × pf {ld.power_factor:g}" if ld.power_factor != 1.0 else ""
            text = f"{ld.id} {ld.power_kw:g} kW / (√3 × {u_line_v:g} V{pf}) = {i:.2f} A per line"
        for k in range(3):
            totals[k] += i
        parts.append(text)
    ib = max(totals)
    lines = "" if len(set(round(t, 6) for t in totals)) == 1 else (
        " (" + ", ".join(f"{ph} {t:.2f} A" for ph, t in zip(PHASES, totals)) + "; Ib the largest)")
    how = "Ib = " + " + ".join(parts) + (f" = {ib:.2f} A" if len(parts) > 1 or lines else "") + lines
    return ib, how, tuple(totals)


def load_current_a(ld, u0_v: float) -> tuple[float, str]:
    """A load's full current and how it was found: the maker's rated current where given (an EV
    charge point or heat pump at its rating, no diversity: 722.311), else current_a, else
    I = P / (U0 × pf), and for a motor with its efficiency, P being the shaft output,
    I = P / (U0 × pf × η) (the input power is the output over the efficiency: physics)."""
    if ld.rated_current_a is not None:
        return ld.rated_current_a, f"{ld.id} {ld.rated_current_a:g} A (maker's rated current)"
    if ld.current_a is not None:
        return ld.current_a, f"{ld.id} {ld.current_a:g} A"
    eff = ld.efficiency if ld.efficiency is not None else 1.0
    i = design_current_a(ld.power_kw / eff, u0_v, ld.power_factor)
    pf = f" × pf {ld.power_factor:g}" if ld.power_factor != 1.0 else ""
    eta = f" × efficiency {eff:g}" if ld.efficiency is not None else ""
    return i, f"{ld.id} {ld.power_kw:g} kW / ({u0_v:g} V{pf}{eta}) = {i:.2f} A"


def _cooker_ib(circuit: Circuit, u0_v: float, premises: str, own: tuple) -> tuple[float, str]:
    """A cooker circuit's Ib after the cooking-appliance allowance of the premises
    (tracker/data/diversity.yaml; households: 10 A + 30 % of the rest + 5 A where the control unit
    has a socket-outlet; shops, offices and hotels: 100 % of the largest, 80 % of the second,
    60 % of the rest)."""
    from tracker.checks.demand import allowances, allowed_a   # here: demand imports this module
    allow = allowances(premises, own)
    rule = allow.rule("cooker")
    currents = [load_current_a(ld, u0_v)[0] for ld in circuit.loads]
    connected = sum(currents)
    ib = allowed_a(rule, currents)
    if "full_a" in rule:
        how = (f"cooker allowance {rule['full_a']:g} A + {rule['rest_pct']:g} % of "
               f"({connected:.2f} − {rule['full_a']:g}) A")
    elif "by_rank_pct" in rule:
        how = ("cooker allowance " + " + ".join(f"{p:g} %" for p in rule["by_rank_pct"][:len(currents)])
               + (f" + {rule['others_pct']:g} % of the rest" if len(currents) > len(rule["by_rank_pct"]) else "")
               + f" of {', '.join(f'{a:.2f}' for a in sorted(currents, reverse=True))} A")
    else:
        how = f"cooker allowance {rule['pct']:g} % of {connected:.2f} A"
    sockets = sum(1 for ld in circuit.loads if ld.socket_outlet)
    if sockets and rule.get("socket_a"):
        ib += rule["socket_a"] * sockets
        how += f" + {rule['socket_a']:g} A (socket-outlet in the control unit)"
    return ib, f"Ib = {how} = {ib:.2f} A ({allow.table})"


def run(f: Facts, done) -> Outcome:
    rec = DesignCurrentWorking(ib_a=f.ib_a, ib_source=f.ib_how)
    if f.ib_a is None:
        return Outcome(not_assessed(ID, "A", "<=", f"{f.ib_how}: Ib unknown (list the loads or give design_current_a)",
                                    limit=f.in_a), rec)
    ok = f.ib_a <= f.in_a
    rounding = None if ok else rounded_rating(f.circuit, f.in_a, f.ctx.supply.u0_v)
    if rounding:
        # A nameplate's kW is the rated current times the voltage, rounded: over In only by that
        # rounding is not shown to exceed it (and a larger device is not the answer).
        return Outcome(not_assessed(ID, "A", "<=", f"{_text(f, ok, '')}; but {rounding}", value=f.ib_a,
                                    limit=f.in_a), rec)
    status = verdict(ok)
    start = _starting_trip(f)
    if start:
        status = WARN if ok else status
    return Outcome(CheckResult(ID, status, f.ib_a, f.in_a, "A", "<=", "", ib_limit_a=f.in_a), rec,
                   words(_text, f, ok, start))


def _text(f: Facts, ok: bool, start: str) -> str:
    text = f"{f.ib_how}; Ib {f.ib_a:.2f} A {'≤' if ok else '>'} In {f.in_a:g} A ({f.label}) — 433.1.1(i)"
    return f"{text}; {start}" if start else text


def _starting_trip(f: Facts) -> str:
    """A maker's starting current reaching the MCB/RCBO's instantaneous band: it may trip on start."""
    starts = [ld for ld in f.circuit.loads if ld.starting_current_a is not None]
    lower = (f.device_info or {}).get("instantaneous_lower_multiple", {}).get(f.circuit.device.curve)
    if not starts or lower is None:
        return ""
    band_a = lower[0] * f.in_a
    total = sum(ld.starting_current_a for ld in starts)
    if total < band_a:
        return ""
    return (f"starting current {total:g} A (maker's data) reaches the {f.label}'s instantaneous band from "
            f"{lower[0]:g} In = {band_a:g} A (BS EN 60898-1): it may trip on starting; a soft-start unit or "
            "the curve the maker asks for")


def _places(x: float) -> int:
    text = repr(float(x))
    return len(text.split(".")[1].rstrip("0")) if "." in text and "e" not in text else 0


def rounded_rating(circuit: Circuit, in_a: float, u0_v: float) -> str:
    """Words where a single load given in kW exceeds In only by the rounding of its power figure:
    In × U0 × pf rounded to the places the figure is given in is that figure (7.4 kW ≈ 32 A × 230 V
    = 7.36 kW). Empty otherwise, or where the maker's rated current is already given."""
    if len(circuit.loads) != 1 or circuit.design_current_a is not None:
        return ""
    ld = circuit.loads[0]
    if ld.power_kw is None or ld.current_a is not None or getattr(ld, "rated_current_a", None) is not None:
        return ""
    eff = ld.efficiency if ld.efficiency is not None else 1.0
    at_in_kw = in_a * u0_v * ld.power_factor * eff / 1000.0
    places = _places(ld.power_kw)
    if round(at_in_kw, places) != round(ld.power_kw, places):
        return ""
    return (f"{ld.power_kw:g} kW is {in_a:g} A × {u0_v:g} V = {at_in_kw:.2f} kW rounded: the appliance is likely "
            f"rated {in_a:g} A — give the maker's rated_current_a to settle it, rather than a larger device")
