"""What a circuit's checks need from upstream, and the facts derived once per circuit."""
from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from typing import NamedTuple

from tracker import catalogue
from tracker.checks import rules
from tracker.checks.design_current import circuit_ib, circuit_ib_three_phase
from tracker.engine import disconnection, fault_level, impedance, three_phase
from tracker.model import PHASES, Circuit, RcdData, Site, Supply, rebuilt_by_constructor


class RcdSeen(NamedTuple):
    """An RCD a circuit's current passes through: its IΔn, what is recorded of it, and where it is."""

    idn_ma: float
    data: RcdData
    at: str            # "this circuit", "board CU1", ...

    @property
    def delayed(self) -> bool:
        return self.data.delay == "S"


def _rcd_at(obj, where: str) -> tuple[RcdSeen, ...]:
    return (RcdSeen(obj.rcd_ma, obj.rcd, where),) if obj.rcd_ma is not None else ()


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class SupplyContext:
    system: str
    u0_v: float
    ze_ohm: float | None
    pfc_ka: float
    pfc_declared: bool
    private: bool
    electrode_ohm: float | None
    z_ln_source_ohm: float | None   # line-neutral source impedance, for minimum short-circuit current
    z_ln_source_how: str
    domestic: bool = True
    phases: int = 1
    u_line_v: float | None = None   # three-phase: line-to-line voltage
    pfc3_ka: float | None = None    # three-phase: symmetrical three-phase fault current at the origin
    pfc3_how: str = ""              # how pfc3_ka was found (declared, × 2 rule, assumed)
    pfc_ln_bound: bool = False      # three-phase: pfc_ka is only an upper bound of the line-neutral value
    premises: str = "domestic"      # the class of premises: its allowances for diversity
    diversity: tuple = ()           # the site's own allowances (Site.diversity)

    @property
    def three_phase(self) -> bool:
        return self.phases == 3


def supply_context(supply: Supply, domestic: bool = True, premises: str = "domestic",
                   diversity: tuple = ()) -> SupplyContext:
    u0 = supply.u0_v
    if supply.three_phase:
        return _three_phase_supply_context(supply, domestic, premises, diversity)
    pfc = supply.pfc_ka if supply.pfc_ka is not None else fault_level.ASSUMED_PUBLIC_PFC_KA
    candidates = []
    if supply.system != "TT" and supply.ze_ohm is not None:
        candidates.append((supply.ze_ohm, f"Ze {supply.ze_ohm:g} Ω (line-neutral loop taken as the earth loop "
                                          "on TN, common practice)"))
    if supply.pfc_ka is not None:
        z = u0 / (supply.pfc_ka * 1000.0)
        candidates.append((z, f"U0 / PFC = {u0:g} / {supply.pfc_ka:g} kA = {z:.3f} Ω"))
    # The minimum short-circuit current comes from the largest plausible source impedance.
    z_ln, how = max(candidates, default=(None, "TT supply without pfc_ka: line-neutral source impedance unknown"))
    return SupplyContext(
        system=supply.system, u0_v=u0, ze_ohm=supply.ze_ohm, pfc_ka=pfc,
        pfc_declared=supply.pfc_ka is not None, private=supply.private,
        electrode_ohm=supply.electrode_ohm, z_ln_source_ohm=z_ln, z_ln_source_how=how, domestic=domestic,
        premises=premises, diversity=diversity,
    )


def _three_phase_supply_context(supply: Supply, domestic: bool, premises: str = "domestic",
                                diversity: tuple = ()) -> SupplyContext:
    """A three-phase origin. `pfc_ka` is the three-phase fault current; without it, twice the
    line-neutral value `pfc_line_neutral_ka` (the ×2 rule of guidance, tracker.engine.three_phase),
    and without either, twice the single-phase figure assumed for a public supply.

    Single-phase circuits are checked against the line-neutral value: where only the three-phase
    figure is known, that figure bounds it from above (a line-neutral fault drives U0 through the
    line and the neutral, a three-phase one through the line alone) and a verdict that fails on
    the bound is not given. The minimum short-circuit current takes the line-neutral source as
    U0 / (PFC3 / 2) — the ×2 rule read backwards — or Ze if larger.
    """
    u0 = supply.u0_v
    ln_given = supply.pfc_line_neutral_ka
    if supply.pfc_ka is not None:
        pfc3, how3 = supply.pfc_ka, f"{supply.pfc_ka:g} kA three-phase at the origin (pfc_ka)"
    elif ln_given is not None:
        pfc3 = three_phase.three_phase_pfc_from_single_ka(ln_given)
        how3 = (f"{pfc3:g} kA three-phase = 2 × line-neutral {ln_given:g} kA (the ×2 rule of guidance for a "
                "three-phase supply)")
    else:
        pfc3 = three_phase.three_phase_pfc_from_single_ka(fault_level.ASSUMED_PUBLIC_PFC_KA)
        how3 = (f"{pfc3:g} kA three-phase assumed = 2 × {fault_level.ASSUMED_PUBLIC_PFC_KA:g} kA (no pfc_ka: the "
                "usual maximum declared for a public supply, by the ×2 rule)")
    pfc_ln = ln_given if ln_given is not None else pfc3
    candidates = []
    if supply.system != "TT" and supply.ze_ohm is not None:
        candidates.append((supply.ze_ohm, f"Ze {supply.ze_ohm:g} Ω (line-neutral loop taken as the earth loop "
                                          "on TN, common practice)"))
    if ln_given is not None:
        z = u0 / (ln_given * 1000.0)
        candidates.append((z, f"U0 / line-neutral PFC = {u0:g} / {ln_given:g} kA = {z:.3f} Ω"))
    elif supply.pfc_ka is not None:
        z = u0 / (supply.pfc_ka / three_phase.THREE_PHASE_FROM_SINGLE_PHASE_FACTOR * 1000.0)
        candidates.append((z, f"U0 / (PFC3 / 2) = {u0:g} / ({supply.pfc_ka:g} / 2) kA = {z:.3f} Ω (×2 rule)"))
    z_ln, how = max(candidates, default=(None, "TT supply without pfc_ka: line-neutral source impedance unknown"))
    return SupplyContext(
        system=supply.system, u0_v=u0, ze_ohm=supply.ze_ohm, pfc_ka=pfc_ln,
        pfc_declared=supply.pfc_ka is not None or ln_given is not None, private=supply.private,
        electrode_ohm=supply.electrode_ohm, z_ln_source_ohm=z_ln, z_ln_source_how=how, domestic=domestic,
        premises=premises, diversity=diversity, phases=3, u_line_v=supply.line_v, pfc3_ka=pfc3, pfc3_how=how3, pfc_ln_bound=ln_given is None,
    )


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class BoardContext:
    """Conditions at a board's busbars, from the origin through every sub-main above it."""

    site_id: str
    board_id: str
    supply: SupplyContext
    z_ext_ohm: float | None     # earth fault loop impedance at the board (Ze + sub-mains' R1+R2)
    z_ln_ohm: float | None      # line-neutral loop impedance at the board
    vd_v: float | None          # voltage drop from the origin to the board, V
    v_per_a: float              # volts dropped upstream per extra ampere drawn below (sub-mains)
    pfc_ka: float               # prospective fault current at the board, kA
    rcd_ma: float | None        # smallest IΔn of an RCD upstream of the board's circuits
    conditional_rating_ka: float | None
    fed_via: str | None = None  # ref of the sub-main feeding the board
    unknown_vd: str = ""        # why vd_v is unknown
    unknown_z: str = ""         # why z_ext_ohm is unknown
    # Three-phase systems. A three-phase board holds the drop to it per line (volts to neutral,
    # L1, L2, L3; vd_v is then the largest) and the three-phase fault current; a single-phase board
    # fed from one line of a three-phase board names that line. pfc_ka is the line-neutral value.
    phases: int = 1
    vd_phase_v: tuple | None = None
    line: str | None = None
    pfc3_ka: float | None = None
    pfc_ln_bound: bool = False  # pfc_ka is only an upper bound (the three-phase value)

    @property
    def three_phase(self) -> bool:
        return self.phases == 3

    def line_vd_v(self, line: str | None) -> float | None:
        """Volts to neutral dropped from the origin to this board on `line` (a three-phase board),
        or the board's own drop (a single-phase board)."""
        if self.vd_phase_v is None or line is None:
            return self.vd_v
        return self.vd_phase_v[PHASES.index(line)]
    rcds: tuple = ()            # RcdSeen of every RCD upstream of the board's circuits, nearest first


def origin_context(site: Site, board_id: str, supply: SupplyContext) -> BoardContext:
    board = site.board(board_id)
    three = board.three_phase
    return BoardContext(
        site_id=site.id, board_id=board_id, supply=supply,
        z_ext_ohm=supply.ze_ohm, z_ln_ohm=supply.z_ln_source_ohm, vd_v=0.0, v_per_a=0.0,
        pfc_ka=supply.pfc_ka, rcd_ma=board.rcd_ma, conditional_rating_ka=board.conditional_rating_ka,
        unknown_z="" if supply.ze_ohm is not None else "Ze is not given (supply.ze_ohm)",
        phases=3 if three else 1, vd_phase_v=(0.0, 0.0, 0.0) if three else None, line=board.phase,
        pfc3_ka=supply.pfc3_ka if three else None, pfc_ln_bound=supply.pfc_ln_bound,
        rcds=_rcd_at(board, f"board {board.id}"),
    )


def _min_rcd(*values):
    known = [v for v in values if v is not None]
    return min(known) if known else None


def device_label(device) -> str:
    return _label(device.kind, device.curve, device.rating_a)


@lru_cache(maxsize=1024)
def _label(kind: str, curve: str | None, rating_a: float) -> str:
    r = f"{rating_a:g}"
    return {
        "mcb": f"{curve}{r} MCB",
        "rcbo": f"{curve}{r} RCBO",
        "fuse-gg": f"{r} A BS 88-2 gG fuse",
        "fuse-domestic-cartridge": f"{r} A BS 88-3 fuse",
        "fuse-bs1361": f"{r} A BS 1361 fuse",
        "fuse-bs1362": f"{r} A BS 1362 fuse",
        "fuse-semi-enclosed": f"{r} A BS 3036 rewirable fuse",
    }.get(kind, f"{r} A {kind}")


@dataclass(slots=True)
class Facts:
    """Everything derived once per circuit and shared by its checks."""

    circuit: Circuit
    ctx: BoardContext
    kind: catalogue.CableKind | None
    device_info: dict | None
    label: str
    in_a: float
    ib_a: float | None           # None: no load data
    ib_how: str
    ib_vd_a: float               # the current used for voltage drop (Ib, or In where Ib is unknown)
    sockets: bool
    lighting: bool
    distribution: bool
    rcd_ma: float | None
    cpc_mm2: float | None
    cpc_how: str
    r_line_mohm_per_m: float | None   # line conductor resistance at 20 °C
    r_cpc_mohm_per_m: float | None    # protective conductor resistance at 20 °C
    multiplier: float
    loop_ohm: float | None       # the circuit's own R1 + R2 at operating temperature
    zs_ohm: float | None
    zs_why: str
    zln_far_ohm: float | None
    zln_why: str
    t_req_s: float
    cpc_route: str = "core"      # core | bunched | separate | armour: where the cpc runs (sets its k)
    readings: object = None      # tracker.checks.readings.Readings: the latest measurements, if any
    ib_phases_a: tuple | None = None   # three-phase circuits: current in L1, L2, L3 (Ib is the largest)

    @property
    def phases(self) -> int:
        return 3 if self.circuit.three_phase else 1
    rcds: tuple = ()             # RcdSeen: the circuit's own RCD (if any), then those upstream
    system: str = ""             # earthing system of the circuit (TT where it has its own electrode)
    electrode_ohm: float | None = None   # RA of the electrode its fault protection rests on (TT)


# Where the cpc runs (BS 7671 Tables 54.2–54.4): a core of the cable; an insulated conductor bunched
# with the live conductors in conduit or trunking; an insulated conductor on its own; the armour.
CORE, BUNCHED, SEPARATE, ARMOUR = "core", "bunched", "separate", "armour"


def cpc_route(circuit: Circuit) -> str:
    """The cpc's route: `cable.cpc_route` where given, else the kind's usual one: twin-earth-70 a
    core; singles-70 bunched with the live singles in the same conduit or trunking; swa-90 a core
    of a three- or four-core cable where the site gives cpc_mm2, else the armour (a two-core SWA
    has no copper cpc core)."""
    cable = circuit.cable
    if cable.cpc_route is not None:
        return cable.cpc_route
    if cable.kind == "singles-70":
        return BUNCHED
    if cable.kind == "swa-90" and cable.cpc_mm2 is None:
        return ARMOUR
    return CORE


def _armour_cpc(cable, three_phase_circuit: bool = False) -> tuple[float | None, float | None, str]:
    """(armour cross-section, armour resistance at 20 °C, why unknown) where the armour is the cpc.
    No published armour resistances are held: the maker's figures come from the site file."""
    missing = [key for key, v in (("cable.armour_mohm_per_m", cable.armour_mohm_per_m),
                                  ("cable.armour_mm2", cable.armour_mm2)) if v is None]
    no_core = ("a four-core SWA on three lines and neutral has no spare core" if three_phase_circuit
               else "a two-core SWA has no copper cpc core")
    why = (f"the armour is the cpc ({no_core}; with a spare core as the cpc give "
           "cable.cpc_mm2): give " + " and ".join(missing) + " from the maker's data") if missing else ""
    return cable.armour_mm2, cable.armour_mohm_per_m, why


def _cpc(circuit: Circuit, kind, route: str) -> tuple[float | None, float | None, str]:
    """(cpc cross-section, its resistance at 20 °C in mΩ/m, why either is unknown or assumed): the
    armour's from the site file, else the cpc the site gives or the kind's standard construction,
    with the IEC 60228 resistance of that size."""
    cable = circuit.cable
    if route == ARMOUR:
        return _armour_cpc(cable, circuit.three_phase)
    if cable.cpc_mm2 is not None:
        cpc, cpc_how = cable.cpc_mm2, ""
    else:
        cpc = kind.default_cpc_mm2(cable.csa_mm2) if kind else None
        cpc_how = (f"cpc {cpc:g} mm² assumed (standard construction of {kind.kind})" if cpc is not None
                   else "cpc size not given (cable.cpc_mm2)")
    r_cpc_held = catalogue.conductor_resistance(cpc) if cpc is not None else None
    return cpc, (r_cpc_held.value if r_cpc_held else None), cpc_how


def build_facts(circuit: Circuit, ctx: BoardContext, fed_demand_a: float | None = None,
                readings=None, fed_phases_a: tuple | None = None) -> Facts:
    sup = ctx.supply
    kind = catalogue.cable_kind(circuit.cable.kind)
    info = catalogue.device_info(circuit.device.kind)
    ib_phases = None
    if circuit.three_phase:
        ib, how, ib_phases = circuit_ib_three_phase(circuit, sup.u0_v, sup.u_line_v or sup.u0_v * three_phase.SQRT3,
                                                    fed_phases_a)
    else:
        ib, how = circuit_ib(circuit, sup.u0_v, fed_demand_a, sup.premises, sup.diversity)
    in_a = circuit.device.rating_a
    sockets = rules.has_kind(circuit, "socket-outlets")
    cable = circuit.cable
    route = cpc_route(circuit)
    r_line_held = catalogue.conductor_resistance(cable.csa_mm2)
    r_line_mohm_per_m = r_line_held.value if r_line_held else None
    cpc, r_cpc_mohm_per_m, cpc_how = _cpc(circuit, kind, route)
    multiplier = kind.resistance_multiplier if kind else impedance.resistance_multiplier(70.0)
    loop = zs = zln = None
    zs_why = zln_why = ""
    if r_line_mohm_per_m is not None and r_cpc_mohm_per_m is not None:
        loop = impedance.loop_resistance_ohm(r_line_mohm_per_m, r_cpc_mohm_per_m, cable.length_m, multiplier,
                                             circuit.is_ring)
    if ctx.z_ext_ohm is None:
        zs_why = ctx.unknown_z or "the loop impedance at the board is unknown"
    elif loop is None:
        zs_why = (cpc_how if (cpc is None or r_cpc_mohm_per_m is None) and cpc_how
                  else "no conductor resistance held for that size")
    else:
        zs = ctx.z_ext_ohm + loop
    if ctx.z_ln_ohm is None:
        zln_why = ctx.supply.z_ln_source_how
    elif r_line_mohm_per_m is None:
        zln_why = "no conductor resistance held for that size"
    else:
        zln = ctx.z_ln_ohm + impedance.loop_resistance_ohm(r_line_mohm_per_m, r_line_mohm_per_m, cable.length_m,
                                                           multiplier, circuit.is_ring)
    own_electrode = circuit.earthing_measure == "tt-electrode" and circuit.electrode_ohm is not None
    system = "TT" if own_electrode else sup.system
    t_req = disconnection.required_disconnection_s(system, circuit.is_submain, in_a, sockets)
    return Facts(
        circuit=circuit, ctx=ctx, kind=kind, device_info=info, label=device_label(circuit.device),
        in_a=in_a, ib_a=ib, ib_how=how, ib_vd_a=ib if ib is not None else in_a,
        sockets=sockets, lighting=rules.has_kind(circuit, "lighting"), distribution=circuit.is_submain,
        rcd_ma=_min_rcd(circuit.rcd_ma, ctx.rcd_ma), cpc_mm2=cpc, cpc_how=cpc_how, cpc_route=route,
        r_line_mohm_per_m=r_line_mohm_per_m, r_cpc_mohm_per_m=r_cpc_mohm_per_m, multiplier=multiplier,
        loop_ohm=loop, zs_ohm=zs, zs_why=zs_why,
        zln_far_ohm=zln, zln_why=zln_why, t_req_s=t_req, readings=readings,
        ib_phases_a=ib_phases,
        rcds=_rcd_at(circuit, "this circuit") + ctx.rcds, system=system,
        electrode_ohm=circuit.electrode_ohm if own_electrode else sup.electrode_ohm,
    )


def child_context(f: Facts, fed_board, vd_end_v: float | None, mv_v_per_a: float | None,
                  vd_phase_end_v: tuple | None = None) -> BoardContext:
    """The context at the board a sub-main feeds, from the sub-main's own facts.

    A three-phase sub-main carries the per-line drop (`vd_phase_end_v`) and the three-phase fault
    current down; a single-phase sub-main from a three-phase board puts the board it feeds on its
    line (and the drop of that line above it is already in `vd_end_v`)."""
    ctx, sup = f.ctx, f.ctx.supply
    cable = f.circuit.cable
    pfc3 = None
    if f.r_line_mohm_per_m is not None:
        cold = impedance.loop_resistance_ohm(f.r_line_mohm_per_m, f.r_line_mohm_per_m, cable.length_m, 1.0)
        pfc = fault_level.downstream_pfc_ka(sup.u0_v, ctx.pfc_ka, cold)
        if f.circuit.three_phase and ctx.pfc3_ka is not None:
            pfc3 = three_phase.downstream_three_phase_pfc_ka(sup.u0_v, ctx.pfc3_ka, cold / 2.0)
            if ctx.pfc_ln_bound:
                pfc = pfc3   # still only bounded by the three-phase value
    else:
        pfc, pfc3 = ctx.pfc_ka, ctx.pfc3_ka if f.circuit.three_phase else None
    three = f.circuit.three_phase and fed_board.three_phase
    line = None if three else (f.circuit.phase or ctx.line)
    return BoardContext(
        site_id=ctx.site_id, board_id=fed_board.id, supply=sup,
        z_ext_ohm=f.zs_ohm, z_ln_ohm=f.zln_far_ohm,
        vd_v=vd_end_v, v_per_a=ctx.v_per_a + (mv_v_per_a or 0.0),
        pfc_ka=pfc, rcd_ma=_min_rcd(fed_board.rcd_ma, f.rcd_ma),
        conditional_rating_ka=fed_board.conditional_rating_ka,
        fed_via=f"{ctx.site_id}/{f.circuit.board}/{f.circuit.id}",
        unknown_vd="" if vd_end_v is not None else f"voltage drop of sub-main {f.circuit.board}/{f.circuit.id} unknown",
        unknown_z="" if f.zs_ohm is not None else f"loop impedance of sub-main {f.circuit.board}/{f.circuit.id} "
                                                  f"unknown ({f.zs_why})",
        phases=3 if three else 1, vd_phase_v=vd_phase_end_v if three else None, line=line,
        pfc3_ka=pfc3 if three else None, pfc_ln_bound=ctx.pfc_ln_bound,
        rcds=(_rcd_at(fed_board, f"board {fed_board.id}")
              + _rcd_at(f.circuit, f"sub-main {f.circuit.board}/{f.circuit.id}") + ctx.rcds),
    )
