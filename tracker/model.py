"""The estate model: plain, immutable data read from the site files.

Every quantity carries its unit in its name. Objects compare by their data only
(the `src` field saying where an element was read from is left out of equality), so
two loads of the same file compare equal when nothing that matters changed.

Refs (SPEC §2): board ``SITE/BOARD``, circuit ``SITE/BOARD/CIRCUIT``, load
``SITE/BOARD/CIRCUIT/LOAD``. The origin of a site (its supply) is the node ``SITE``.
"""
from __future__ import annotations

import datetime
from dataclasses import dataclass, field, fields

SUPPLY = "supply"  # the reserved value of `fed_by` for a board at the origin
PHASES = ("L1", "L2", "L3")
THREE_PHASE_SQRT3 = 3 ** 0.5


def rebuilt_by_constructor(cls):
    """Pickle an immutable dataclass as its class and field values: unpickling calls the class
    (about twice as fast as restoring slots one by one, which matters when a watcher's start
    brings a whole estate back from its worker processes)."""
    names = tuple(f.name for f in fields(cls))

    def __reduce__(self):
        return (cls, tuple(getattr(self, n) for n in names))

    cls.__reduce__ = __reduce__
    return cls


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Src:
    """Where an element was read: a file (relative to the path the user gave) and the
    element's path inside it, as a tuple of keys and indices."""

    file: str
    path: tuple = ()


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Supply:
    system: str
    u0_v: float = 230.0
    ze_ohm: float | None = None
    pfc_ka: float | None = None
    service_fuse_a: float | None = None
    electrode_ohm: float | None = None
    private: bool = False
    phases: int = 1
    u_line_v: float | None = None   # None: √3 · U0 on a three-phase supply
    pfc_line_neutral_ka: float | None = None   # three-phase: the line-neutral prospective fault current
    looped: bool = False               # the service is looped with another property's
    src: Src | None = field(default=None, compare=False)

    @property
    def three_phase(self) -> bool:
        return self.phases == 3

    @property
    def line_v(self) -> float:
        """Line-to-line voltage of a three-phase supply (given, or √3 · U0)."""
        return self.u_line_v if self.u_line_v is not None else THREE_PHASE_SQRT3 * self.u0_v


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class RcdData:
    """What is known of an RCD beyond its IΔn (None: not recorded)."""

    type: str | None = None            # AC | A | F | B (residual currents it responds to)
    delay: str = "general"             # general | S (time-delayed)
    dc_fault_detection: bool | None = None   # a 6 mA smooth-DC detecting device (RDC-DD) with it
    all_poles: bool | None = None      # it breaks every live conductor (line and neutral)
    bidirectional: bool | None = None  # not marked line/load (in/out): may be fed from either side


NO_RCD_DATA = RcdData()


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Board:
    id: str
    fed_by: str
    name: str = ""
    main_switch_a: float | None = None
    conditional_rating_ka: float | None = None
    rcd_ma: float | None = None
    phases: int = 1
    phase: str | None = None   # a single-phase board fed straight from a three-phase supply: its line
    rcd: RcdData = NO_RCD_DATA
    src: Src | None = field(default=None, compare=False)

    @property
    def at_origin(self) -> bool:
        return self.fed_by == SUPPLY

    @property
    def three_phase(self) -> bool:
        return self.phases == 3


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Device:
    kind: str
    rating_a: float
    curve: str | None = None
    breaking_ka: float | None = None
    max_zs_ohm: float | None = None
    let_through_a2s: float | None = None
    energy_class: int | None = None     # BS EN 60898-1 / 61009-1 energy-limiting class (1, 2, 3)
    bidirectional: bool | None = None   # not marked line/load: may be fed from either side (530.3.201)


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Cable:
    kind: str
    csa_mm2: float
    length_m: float
    method: str
    cpc_mm2: float | None = None
    cpc_route: str | None = None        # core | bunched | separate | armour (None: the kind's default)
    armour_mm2: float | None = None     # steel armour cross-section (armour as the cpc)
    armour_mohm_per_m: float | None = None   # armour resistance at 20 °C, maker's data


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Environment:
    ambient_c: float | None = None   # None: 30 °C in air, the 20 °C reference in the ground (method D)
    grouped_with: int = 1
    arrangement: str = "bunched"
    insulation_mm: float = 0.0


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Load:
    id: str
    kind: str
    name: str = ""
    power_kw: float | None = None
    current_a: float | None = None
    power_factor: float = 1.0
    location: str | None = None
    mobile: bool = False                # equipment moved about in use (411.3.3(b) when outdoors)
    phase_currents_a: tuple[float, float, float] | None = None   # L1, L2, L3 of an unbalanced three-phase load
    rated_current_a: float | None = None     # the maker's rated (maximum running) current
    starting_current_a: float | None = None  # the maker's starting current
    socket_outlet: bool = False              # cooker: its control unit has a socket-outlet (+ 5 A, households)
    efficiency: float | None = None          # motor: power_kw is the shaft output
    load_control_a: float | None = None      # a load control holds it to this current (722.311)
    connected_on: str | None = None          # ISO date: when it was (or will be) connected
    notified_on: str | None = None           # ISO date: when the network operator was told
    src: Src | None = field(default=None, compare=False)


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Source:
    """A generator or store feeding the installation through this circuit (an inverter)."""

    id: str
    kind: str                            # pv | battery
    inverter_a: float                    # rated AC output current of the inverter
    name: str = ""
    isolation: bool | None = None        # a means of isolating it from the supply (551.7.6)
    connected_on: str | None = None      # ISO date: commissioned
    notified_on: str | None = None       # ISO date: network operator told
    src: Src | None = field(default=None, compare=False)


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Circuit:
    id: str
    board: str
    device: Device
    cable: Cable
    name: str = ""
    topology: str = "radial"
    feeds: str | None = None
    design_current_a: float | None = None
    overload_exempt: bool = False
    rcd_ma: float | None = None
    environment: Environment = Environment()
    loads: tuple[Load, ...] = ()
    phases: int = 1
    phase: str | None = None                 # L1 | L2 | L3: a single-phase circuit on a three-phase board
    triplen_harmonics_pct: float | None = None
    concealed_in_wall: bool | None = None   # concealed < 50 mm without earthed protection (522.6.202)
    rcd: RcdData = NO_RCD_DATA
    earthing_measure: str | None = None     # 722.411.4.1: how an outdoor charge point avoids the PME terminal
    electrode_ohm: float | None = None      # the circuit's own earth electrode (earthing_measure tt-electrode)
    sources: tuple[Source, ...] = ()
    src: Src | None = field(default=None, compare=False)

    @property
    def three_phase(self) -> bool:
        return self.phases == 3

    @property
    def is_ring(self) -> bool:
        return self.topology == "ring"

    @property
    def is_submain(self) -> bool:
        return self.feeds is not None


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class RingReading:
    """End-to-end resistances of a ring final circuit's conductors, ohms."""

    r1_ohm: float | None = None
    rn_ohm: float | None = None
    r2_ohm: float | None = None


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Measurement:
    """One circuit's readings at an inspection. `ref` is BOARD/CIRCUIT within the site."""

    ref: str
    r1_r2_ohm: float | None = None
    zs_ohm: float | None = None
    ir_mohm: float | None = None
    ir_test_v: float | None = None
    rcd_ms: float | None = None
    ring: RingReading | None = None
    src: Src | None = field(default=None, compare=False)


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Observation:
    code: str                       # C1 | C2 | C3 | FI
    text: str
    ref: str | None = None          # BOARD/CIRCUIT within the site
    within_days: int | None = None  # a shorter period the report sets for the work
    done_on: datetime.date | None = None
    confirmed_on: datetime.date | None = None
    src: Src | None = field(default=None, compare=False)


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Inspection:
    date: datetime.date
    by: str
    kind: str                       # periodic | initial | minor-works | remedial
    next_due: datetime.date | None = None
    ze_ohm: float | None = None
    pfc_ka: float | None = None
    test_temp_c: float = 20.0
    copy_to_tenant_on: datetime.date | None = None
    results: tuple[Measurement, ...] = ()
    observations: tuple[Observation, ...] = ()
    key: str = ""                   # the date, made unique within the site (2026-03-11, 2026-03-11.2)
    src: Src | None = field(default=None, compare=False)

    @property
    def restarts_interval(self) -> bool:
        """A periodic or initial inspection restarts the interval to the next one."""
        return self.kind in ("periodic", "initial")


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Site:
    id: str
    supply: Supply
    name: str = ""
    rules: str = "bs7671"
    premises: str = "domestic"
    # the site's own allowances for diversity: (load kind, ((key, value), ...)) sorted by kind
    diversity: tuple[tuple[str, tuple[tuple[str, object], ...]], ...] = ()
    boards: tuple[Board, ...] = ()
    circuits: tuple[Circuit, ...] = ()
    jurisdiction: str = "england"
    tenure: str | None = None
    inspections: tuple[Inspection, ...] = ()   # oldest first
    folder: str = ""  # relative to the path the user gave ('' for a single site)
    files: tuple[str, ...] = ()  # every site file read, relative to the user's path

    def board(self, board_id: str) -> Board | None:
        for b in self.boards:
            if b.id == board_id:
                return b
        return None


# -- refs ---------------------------------------------------------------------------

def board_ref(site_id: str, board_id: str) -> str:
    return f"{site_id}/{board_id}"


def circuit_ref(site_id: str, circuit: Circuit) -> str:
    return f"{site_id}/{circuit.board}/{circuit.id}"


def load_ref(site_id: str, circuit: Circuit, load: Load) -> str:
    return f"{site_id}/{circuit.board}/{circuit.id}/{load.id}"


def inspection_ref(site_id: str, inspection: Inspection) -> str:
    """``SITE/inspection:2026-03-11`` (':' never appears in a board id, so it cannot be mistaken for one)."""
    return f"{site_id}/inspection:{inspection.key}"


def source_ref(site_id: str, circuit: Circuit, source: Source) -> str:
    return f"{site_id}/{circuit.board}/{circuit.id}/{source.id}"
