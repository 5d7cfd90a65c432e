"""The working of one circuit, board or origin, as the details screen lays it out (no Textual).

Every figure here is the engine's own: read from the CheckResults, the `working` dict, the
model and the board context. Nothing is recomputed; where the engine has no figure the line
says "not assessed" and gives the engine's reason. The one derived quantity is each gauge's
utilisation, the ratio of a check's own value and limit, drawn so the eye finds the tight ones.
"""
from __future__ import annotations

from dataclasses import dataclass

from tracker.checks import registry
from tracker.checks.breaking_capacity import BreakingCapacityWorking
from tracker.checks.capacity import DESIGN, DEVICE, RING, CapacityWorking
from tracker.checks.circuit import CircuitResult
from tracker.checks.context import device_label
from tracker.checks.continuity import ContinuityWorking
from tracker.checks.cpc_adiabatic import CpcAdiabaticWorking
from tracker.checks.design_current import DesignCurrentWorking
from tracker.checks.fault_loop import FaultLoopWorking
from tracker.checks.line_adiabatic import LineAdiabaticWorking
from tracker.checks.readings import unmeasured
from tracker.inspection.suggest import LABEL, suggestions
from tracker.checks.rcd import RcdWorking
from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, CheckResult
from tracker.checks import demand_remedy
from tracker.checks.site import explain_circuit, SiteResult, headroom_words, origin_spare_kw, spare_words
from tracker.checks.voltage_drop import VoltageDropWorking
from tracker.output.terminal_text import clean
from tracker.model import PHASES
from tui.snapshot import BOARD, CIRCUIT, Row, Snapshot
from tui.wording import STATUS_WORD, number, plain

TIGHT = 0.9   # a passing check using this much of its limit is shown as tight

BASIS_WORDS = {
    DEVICE: "the device rating In (433.1.1)",
    RING: "20 A, a ring final circuit on a 30/32 A device (433.1.204)",
    DESIGN: "the design current Ib, the load cannot overload (433.3.1(ii))",
}


@dataclass(frozen=True)
class Line:
    label: str
    text: str
    status: str | None = None      # where the line is the figure of a check: its status


@dataclass(frozen=True)
class Section:
    title: str
    lines: tuple[Line, ...]


@dataclass(frozen=True)
class Gauge:
    check_id: str
    label: str
    ratio: float | None            # value/limit for '<=', limit/value for '>=' (None: no figure)
    status: str
    text: str
    word: str


@dataclass(frozen=True)
class CheckLine:
    check_id: str
    status: str
    figures: str                   # '35.00 A ≥ 36.96 A'
    detail: str
    since_revision: int | None = None
    since_at: str | None = None


@dataclass(frozen=True)
class Working:
    ref: str
    kind: str
    title: str
    status: str
    state: str
    file: str | None
    sections: tuple[Section, ...]
    gauges: tuple[Gauge, ...]
    checks: tuple[CheckLine, ...]
    headroom: str
    wants_remedy: bool


def utilisation(c: CheckResult) -> float | None:
    """How much of its limit a check uses: above 1 is over (the engine's status decides)."""
    if c.value is None or c.limit is None:
        return None
    if c.compare == "<=":
        return c.value / c.limit if c.limit > 0 else None
    return c.limit / c.value if c.value > 0 else None


def gauge(c: CheckResult) -> Gauge | None:
    spec = registry.spec(c.id)
    if spec is None or spec.gauge is None:
        return None
    ratio = utilisation(c)
    word = STATUS_WORD[c.status]
    if c.status == PASS and ratio is not None and ratio >= TIGHT:
        word = "tight"
    if ratio is None and c.status != NOT_ASSESSED:
        word += " (no figure)"
    if c.compare == "<=":
        text = f"{number(c.value, c.unit)} of {number(c.limit, c.unit)}"
    else:
        text = f"needs {number(c.limit, c.unit)}, has {number(c.value, c.unit)}"
    return Gauge(c.id, spec.gauge, ratio, c.status, text, word)


def figures(c: CheckResult) -> str:
    if c.value is None:
        return "—"
    if c.status == PASS:
        sign = {"<=": "≤", ">=": "≥"}.get(c.compare, c.compare)
    elif c.status == FAIL:
        sign = {"<=": ">", ">=": "<"}.get(c.compare, c.compare)
    else:
        sign = "vs"
    return f"{number(c.value, c.unit)} {sign} {number(c.limit, c.unit)}"


def check_lines(ref: str, checks, snapshot: Snapshot | None) -> tuple[CheckLine, ...]:
    out = []
    for c in checks:
        since = snapshot.since.get((ref, c.id)) if snapshot is not None and c.status == FAIL else None
        rev = at = None
        if since:
            rev = max(since["revision"], since.get("worse_revision", 0))
            at = since["at"] if rev == since["revision"] else None
        out.append(CheckLine(c.id, c.status, figures(c), clean(c.detail), rev, at))
    return tuple(out)


def _unknown(check: CheckResult | None) -> str:
    if check is None:
        return "not assessed"
    detail = check.detail
    return detail if detail.startswith("not assessed") else f"not assessed: {detail}"


def _where(sr: SiteResult, board_id: str) -> list[Line]:
    site = sr.site
    sup = site.supply
    lines = [Line("site", f"{site.id} — {clean(site.name)}" if site.name else site.id)]
    supply = [sup.system] + ([f"three-phase, U_L {sup.line_v:.0f} V"] if sup.three_phase else []) + [
        f"U0 {sup.u0_v:g} V", f"Ze {plain(sup.ze_ohm)} Ω" if sup.ze_ohm is not None else "Ze not given"]
    if sup.pfc_ka is not None:
        supply.append(f"PFC {sup.pfc_ka:g} kA" + (" three-phase" if sup.three_phase else ""))
    if sup.pfc_line_neutral_ka is not None:
        supply.append(f"line-neutral PFC {sup.pfc_line_neutral_ka:g} kA")
    if sup.service_fuse_a is not None:
        supply.append(f"supplier's fuse {sup.service_fuse_a:g} A")
    if sup.system == "TT" and sup.electrode_ohm is not None:
        supply.append(f"RA {sup.electrode_ohm:g} Ω")
    lines.append(Line("supply", ", ".join(supply)))
    chain = []
    b = site.board(board_id)
    while b is not None:
        chain.append(b)
        if b.at_origin:
            break
        b = site.board(b.fed_by.split("/")[0])
    for b in reversed(chain):
        fed = "the supply" if b.at_origin else f"sub-main {b.fed_by}"
        extra = f", main switch {b.main_switch_a:g} A" if b.main_switch_a is not None else ""
        rcd = f", RCD {b.rcd_ma:g} mA on the board" if b.rcd_ma is not None else ""
        ctx = sr.boards[f"{site.id}/{b.id}"].ctx if f"{site.id}/{b.id}" in sr.boards else None
        phases = ", three-phase" if b.three_phase else (f", on {ctx.line}" if ctx is not None and ctx.line else "")
        lines.append(Line(f"board {b.id}", f"{clean(b.name) or b.id} — fed by {fed}{phases}{extra}{rcd}"))
    return lines


def circuit_working(row: Row, sr: SiteResult, snapshot: Snapshot | None = None) -> Working:
    # The watcher keeps every circuit's verdicts and figures; the working text of the one shown
    # is produced here, from the same inputs (a pure re-evaluation by the engine).
    r = explain_circuit(sr.circuits[row.ref])
    c = r.circuit
    chk = {x.id: x for x in r.checks}
    sections = (
        Section("Where", tuple(_where(sr, c.board) + [Line("file", c.src.file if c.src else "—")])),
        Section("Equipment", _equipment(r)),
        Section("Currents", _currents(r, chk)),
        Section("Rating factors", _rating_factors(r, chk.get("capacity"))),
        Section("Voltage drop", _voltage_drop(r, chk.get("voltage-drop"))),
        Section("Earth fault loop", _fault_loop(r, chk.get("fault-loop"))),
        Section("Adiabatic (minimum sizes)", _adiabatic(r, chk.get("cpc-adiabatic"), chk.get("line-adiabatic"))),
        Section("Fault level", _fault_level(r, chk.get("breaking-capacity"))),
        Section("As measured", _as_measured(r, chk)),
    )
    head = headroom_words(sr, r)
    # A check on readings with nothing measured is said once, in "As measured", not in every list.
    shown = [x for x in r.checks if not unmeasured(x)]
    gauges = tuple(g for g in (gauge(x) for x in shown) if g is not None)
    title = clean(c.name) if c.name else row.ref
    return Working(row.ref, CIRCUIT, title, r.status, row.state, c.src.file if c.src else None, sections,
                   gauges, check_lines(row.ref, shown, snapshot), head, r.status == FAIL)


def _as_measured(r: CircuitResult, chk: dict) -> tuple[Line, ...]:
    """The latest readings beside the figures calculated from the model, each with its check."""
    rd = r.readings
    if rd is None:
        return (Line("readings", "none recorded for this circuit (inspections: results in the site files)"),)
    m = rd.measurement
    cont_rec = r.working.of(ContinuityWorking)
    fl_rec = r.working.of(FaultLoopWorking)
    lines = [Line("inspection", f"{rd.date.isoformat()} by {clean(rd.by)}"
                                + (f", Ze {plain(rd.ze_ohm)} Ω measured" if rd.ze_ohm is not None else ""))]
    if m.zs_ohm is not None:
        calc = f" — calculated {number(fl_rec.zs_ohm, 'ohm')} at the operating temperature" \
            if fl_rec is not None and fl_rec.zs_ohm is not None else ""
        lines.append(Line("Zs", f"{number(m.zs_ohm, 'ohm')} measured{calc}; {figures(chk['measured-zs'])}",
                          chk["measured-zs"].status))
    if m.r1_r2_ohm is not None or m.ring is not None:
        expected = cont_rec.r1_r2_expected_ohm if cont_rec is not None else None
        implied = cont_rec.implied_length_m if cont_rec is not None else None
        text = f"{number(m.r1_r2_ohm, 'ohm')} measured" if m.r1_r2_ohm is not None else "ring ends only"
        if expected is not None:
            text += f" — expected {number(expected, 'ohm')} for the modelled cable"
        if implied is not None:
            text += f" (implies {implied:.0f} m against {r.circuit.cable.length_m:g} m)"
        lines.append(Line("R1+R2", text, chk["continuity"].status))
    if m.ring is not None:
        lines.append(Line("ring ends", f"r1 {plain(m.ring.r1_ohm)} · rn {plain(m.ring.rn_ohm)} · "
                                       f"r2 {plain(m.ring.r2_ohm)} Ω"))
    if m.ir_mohm is not None:
        lines.append(Line("insulation", figures(chk["insulation-resistance"])
                          + (f" at {m.ir_test_v:g} V" if m.ir_test_v is not None else ""),
                          chk["insulation-resistance"].status))
    if m.rcd_ms is not None:
        lines.append(Line("RCD time", figures(chk["rcd-operation"]), chk["rcd-operation"].status))
    for sug in suggestions(r.checks):
        lines.append(Line("suggested code", f"{sug['code']} for {sug['check']}: {sug['why']} ({LABEL}; "
                                            "common practice)"))
    return tuple(lines)


def _equipment(r: CircuitResult) -> tuple[Line, ...]:
    c, dev = r.circuit, r.circuit.device
    kit = []
    if c.three_phase:
        kit.append(Line("phases", "three-phase (L1, L2, L3)"))
    elif c.phase or r.ctx.line:
        kit.append(Line("phases", f"single-phase on {c.phase or r.ctx.line}"))
    kit.append(Line("device", device_label(dev) + (f", breaking capacity {dev.breaking_ka:g} kA" if dev.breaking_ka else "")
                    + (f", maker's max Zs {dev.max_zs_ohm:g} Ω" if dev.max_zs_ohm is not None else "")))
    rcd_rec = r.working.of(RcdWorking)
    rcd = rcd_rec.rcd_ma if rcd_rec is not None else c.rcd_ma
    kit.append(Line("RCD", f"{rcd:g} mA" if rcd is not None else "none"))
    cab = c.cable
    cpc = f", cpc {cab.cpc_mm2:g} mm²" if cab.cpc_mm2 is not None else ""
    kit.append(Line("cable", f"{cab.csa_mm2:g} mm² {cab.kind}{cpc}, {cab.length_m:g} m, reference method {cab.method}"
                    + (", ring final circuit" if c.is_ring else "")))
    env = c.environment
    amb = f"{env.ambient_c:g} °C" if env.ambient_c is not None else "default ambient"
    group = f", grouped with {env.grouped_with} ({env.arrangement})" if env.grouped_with > 1 else ""
    ins = f", {env.insulation_mm:g} mm in thermal insulation" if env.insulation_mm else ""
    kit.append(Line("installed", amb + group + ins))
    for ld in c.loads:
        size = f"{ld.power_kw:g} kW" if ld.power_kw is not None else (
            f"{ld.current_a:g} A" if ld.current_a is not None else (
                "/".join(f"{i:g}" for i in ld.phase_currents_a) + " A (L1/L2/L3)" if ld.phase_currents_a
                else "no size"))
        pf = f", pf {ld.power_factor:g}" if ld.power_factor != 1.0 else ""
        where = f", {ld.location}" if ld.location else ""
        kit.append(Line(f"load {ld.id}", f"{ld.kind} {size}{pf}{where}"))
    if c.feeds:
        kit.append(Line("feeds", f"board {c.feeds}"))
    return tuple(kit)


def _currents(r: CircuitResult, chk: dict) -> tuple[Line, ...]:
    cap, dc = chk.get("capacity"), chk.get("design-current")
    dc_rec = r.working.of(DesignCurrentWorking)
    source = dc_rec.ib_source if dc_rec is not None else None
    ib = (f"{number(r.ib_a, 'A')} — {source}" if r.ib_a is not None and source
          else number(r.ib_a, "A") if r.ib_a is not None else _unknown(dc))
    lines = (Line("Ib", ib, dc.status if dc else None),)
    if r.ib_phases_a is not None:
        lines += (Line("per line", ", ".join(f"{ph} {i:.2f} A" for ph, i in zip(PHASES, r.ib_phases_a))),)
    return lines + (
            Line("In", f"{r.in_a:g} A ({device_label(r.circuit.device)})"),
            Line("Iz", number(r.iz_a, "A") if r.iz_a is not None else _unknown(cap), cap.status if cap else None),
            Line("Iz must reach", f"{number(cap.limit, 'A') if cap and cap.limit is not None else '—'}: "
                                  f"{BASIS_WORDS.get(r.basis, r.basis)}"))


def _rating_factors(r: CircuitResult, cap: CheckResult | None) -> tuple[Line, ...]:
    rec = r.working.of(CapacityWorking)
    if rec is None or rec.it_a is None:
        return (Line("factors", _unknown(cap), NOT_ASSESSED),)
    fac = [Line("It", f"{rec.it_a:g} A (tabulated, method {r.circuit.cable.method})"),
           Line("Ca", f"{rec.ca:.2f} (ambient)" if rec.ca is not None else "—"),
           Line("Cg", f"{rec.cg:.2f} (grouping)" if rec.cg is not None else "—")]
    if rec.ci is not None:
        fac.append(Line("Ci", f"{rec.ci:.2f} (thermal insulation)"))
    if rec.ch is not None:
        fac.append(Line("Ch", f"{rec.ch:.2f} (triple harmonics, Table 4Aa)"))
    if rec.neutral_a is not None:
        fac.append(Line("neutral", f"{number(rec.neutral_a, 'A')} (3 × third harmonic × Ib)"))
    fac.append(Line("Iz", number(rec.iz_a, "A"), cap.status if cap else None))
    return tuple(fac)


def _voltage_drop(r: CircuitResult, vd: CheckResult | None) -> tuple[Line, ...]:
    rec = r.working.of(VoltageDropWorking)
    if rec is None or rec.vd_total_pct is None:
        return (Line("voltage drop", _unknown(vd), vd.status if vd else NOT_ASSESSED),)
    return (Line("cable", f"{rec.mv_per_a_m if rec.mv_per_a_m is not None else '—'}"),
            Line("this circuit", number(rec.vd_circuit_v, "V")),
            Line("upstream", number(rec.vd_upstream_v, "V")),
            Line("total", f"{number(rec.vd_total_pct, '%')} of U0, limit {number(vd.limit, '%')}", vd.status))


def _fault_loop(r: CircuitResult, fl: CheckResult | None) -> tuple[Line, ...]:
    ctx = r.ctx
    ze = ctx.supply.ze_ohm
    loop = [Line("at the board", f"Ze {plain(ze)} Ω" if ze is not None else "Ze not given")
            if ctx.fed_via is None else Line("at the board", f"{number(ctx.z_ext_ohm, 'ohm')} (Ze and sub-mains)"
                                                           if ctx.z_ext_ohm is not None else "unknown")]
    rec = r.working.of(FaultLoopWorking)
    if rec is None:
        loop.append(Line("Zs", _unknown(fl), fl.status if fl else NOT_ASSESSED))
        return tuple(loop)
    loop.append(Line("R1+R2", number(rec.r1_r2_ohm, "ohm") + " (at operating temperature)"))
    loop.append(Line("Zs", number(rec.zs_ohm, "ohm"), fl.status if fl else None))
    loop.append(Line("max Zs", number(rec.max_zs_ohm, "ohm")))
    loop.append(Line("disconnect in", f"{rec.t_required_s:g} s"))
    return tuple(loop)


def _adiabatic(r: CircuitResult, cpc_c: CheckResult | None, line_c: CheckResult | None) -> tuple[Line, ...]:
    cpc, line = r.working.of(CpcAdiabaticWorking), r.working.of(LineAdiabaticWorking)
    if cpc is not None and cpc.cpc_min_mm2 is not None:
        energy = (f"t {cpc.t_disconnect_s:g} s" if cpc.t_disconnect_s is not None
                  else f"I²t {cpc.cpc_let_through_a2s:,.0f} A²s" if cpc.cpc_let_through_a2s is not None else "")
        out = [Line("cpc", f"needs {number(cpc.cpc_min_mm2, 'mm2')}, has {number(cpc_c.value, 'mm2')} "
                           f"(I {number(cpc.earth_fault_a, 'A', 0)}, {energy}, "
                           f"k {cpc.k_cpc:.0f})", cpc_c.status)]
    else:
        out = [Line("cpc", _unknown(cpc_c), cpc_c.status if cpc_c else NOT_ASSESSED)]
    if line is not None and line.line_min_mm2 is not None:
        at_board = (f", at the board {number(line.short_circuit_board_a, 'A', 0)}"
                    if line.short_circuit_board_a is not None else "")
        out.append(Line("live conductors", f"need {number(line.line_min_mm2, 'mm2')}, have "
                                           f"{number(line_c.value, 'mm2')} (I {number(line.short_circuit_min_a, 'A', 0)}"
                                           f"{at_board}, k {line.k_line:.0f})", line_c.status))
    else:
        out.append(Line("live conductors", _unknown(line_c), line_c.status if line_c else NOT_ASSESSED))
    return tuple(out)


def _fault_level(r: CircuitResult, bc: CheckResult | None) -> tuple[Line, ...]:
    rec = r.working.of(BreakingCapacityWorking)
    return (Line("PFC at board", number(rec.pfc_ka if rec is not None else r.ctx.pfc_ka, "kA")),
            Line("PFC allowed", number(bc.limit, "kA") if bc and bc.limit is not None else _unknown(bc),
                 bc.status if bc else None))


def board_working(row: Row, sr: SiteResult, snapshot: Snapshot | None = None) -> Working:
    site = sr.site
    if row.kind == BOARD:
        b = sr.boards[row.ref]
        board = site.board(b.board_id)
        check = b.check
        sections = [Section("Where", tuple(_where(sr, b.board_id)
                                           + [Line("file", board.src.file if board and board.src else "—")]))]
        parts = [Line(cat, f"{conn:.1f} A connected → {allowed:.1f} A after diversity") for cat, conn, allowed in
                 b.demand.parts]
        if b.demand.unknown:
            parts.append(Line("not counted", "no load data: circuit " + ", ".join(b.demand.unknown), NOT_ASSESSED))
        d = b.demand
        if d.phases_a is not None:
            parts.insert(0, Line("per line", ", ".join(f"{ph} {i:.1f} A" for ph, i in zip(PHASES, d.phases_a))))
            parts.insert(1, Line("neutral", f"{number(d.neutral_a, 'A')}, imbalance {d.imbalance_pct:.0f} %"))
        parts.append(Line("demand", number(b.demand.demand_a, "A") + (" (the largest line)" if d.phases_a else ""),
                          check.status))
        parts.append(Line("allowances", clean(b.demand.table)))
        sections.append(Section("Maximum demand", tuple(parts)))
        fix = demand_remedy.for_board(sr, row.ref)
        if fix is not None:
            sections.append(Section("Remedy", (Line("remedy", clean(fix["text"])),)))
        if b.margin_a is None:
            margin = "not assessed: a demand or a sub-main check upstream has no figure"
        else:
            kw = b.margin_a * site.supply.u0_v / 1000.0
            margin = (f"{spare_words(kw, 'the board')} ({abs(b.margin_a):.1f} A"
                      + (f"; limit: {b.margin_by})" if b.margin_by else ")"))
        title = clean(board.name) if board and board.name else row.ref
        file = board.src.file if board and board.src else None
    else:
        check = sr.supply_check
        sections = [Section("Where", tuple(_where(sr, next((b.id for b in site.boards if b.at_origin), ""))[:2]))]
        origin_boards = [b.id for b in site.boards if b.at_origin]
        sections.append(Section("Demand at the origin", (
            Line("boards", ", ".join(origin_boards)),
            *((Line("per line", ", ".join(f"{ph} {i:.1f} A" for ph, i in zip(PHASES, sr.supply_phases_a))),)
              if sr.supply_phases_a is not None else ()),
            Line("demand", number(check.value, "A"), check.status),
            Line("supplier's fuse", number(check.limit, "A") if check.limit is not None else "not given"))))
        margin = spare_words(origin_spare_kw(sr), "the origin")
        fix = demand_remedy.for_origin(sr)
        if fix is not None:
            sections.append(Section("Remedy", (Line("remedy", clean(fix["text"])),)))
        title = f"{clean(site.name) or site.id}: origin"
        file = site.files[0] if site.files else None
    gauges = tuple(g for g in (gauge(check),) if g is not None)
    return Working(row.ref, row.kind, title, check.status, row.state, file, tuple(sections), gauges,
                   check_lines(row.ref, (check,), snapshot), margin, False)


def working_of(row: Row, snapshot: Snapshot) -> Working | None:
    """The working of a row's element in this snapshot (None: it is no longer there)."""
    sr = snapshot.site_of(row.ref)
    if sr is None:
        return None
    if row.kind == CIRCUIT:
        return circuit_working(row, sr, snapshot) if row.ref in sr.circuits else None
    if row.kind == BOARD and row.ref not in sr.boards:
        return None
    return board_working(row, sr, snapshot)
