"""The catalogue: cable, conductor, device, factor and diversity tables from `tracker/data/`.

Every value is kept with its confirmation status (see `tracker/data/README.md`). Lookups
return a :class:`Value` (number + status) or ``None`` where the catalogue holds nothing: the
checks turn ``None`` into ``not-assessed``.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path

import yaml

DATA = Path(__file__).parent / "data"


@dataclass(frozen=True, slots=True)
class Value:
    value: float
    status: str  # seen | code | derived | recalled

    @property
    def confirmed(self) -> bool:
        return self.status == "seen"


def _value(pair) -> Value:
    number, status = pair
    return Value(float(number), str(status))


def _size_key(csa_mm2: float) -> float:
    return float(csa_mm2)


@dataclass(frozen=True)
class CableKind:
    kind: str
    title: str
    conductor_c: float
    fault_final_c: float
    cpc: str                      # incorporated | separate
    resistance_multiplier: float
    methods: dict                 # method -> description
    ratings: dict                 # csa -> {method: Value}
    mv_per_a_m: dict              # csa -> Value
    cpc_sizes: dict               # csa -> Value (standard construction), may be empty
    cpc_default: str | None       # 'equal' where a core equal to the line conductor is the cpc
    ground_reference_c: float | None
    sources: dict
    # Three loaded conductors (a three-phase circuit): the tables' three-phase columns. Empty
    # for a kind that has none (flat twin and cpc is a single-phase cable).
    ratings_3ph: dict = field(default_factory=dict)       # csa -> {method: Value}
    mv_per_a_m_3ph: dict = field(default_factory=dict)    # csa -> Value
    sources_3ph: dict = field(default_factory=dict)

    @property
    def three_phase(self) -> bool:
        """Whether the catalogue holds three-phase columns for this kind."""
        return bool(self.ratings_3ph)

    def methods_for(self, phases: int = 1) -> list[str]:
        table = self.ratings_3ph if phases == 3 else self.ratings
        return [m for m in self.methods if any(m in row for row in table.values())]

    def rating(self, csa_mm2: float, method: str, phases: int = 1) -> Value | None:
        table = self.ratings_3ph if phases == 3 else self.ratings
        return table.get(_size_key(csa_mm2), {}).get(method)

    def voltage_drop(self, csa_mm2: float, phases: int = 1) -> Value | None:
        """mV/A/m: the single-phase column (line and neutral), or for phases=3 the three-phase
        column (a line-to-line figure for a balanced load)."""
        table = self.mv_per_a_m_3ph if phases == 3 else self.mv_per_a_m
        return table.get(_size_key(csa_mm2))

    def sizes(self, method: str, phases: int = 1) -> list[float]:
        table = self.ratings_3ph if phases == 3 else self.ratings
        return sorted(c for c, row in table.items() if method in row)

    def default_cpc_mm2(self, csa_mm2: float) -> float | None:
        if self.cpc_default == "equal":
            return float(csa_mm2)
        v = self.cpc_sizes.get(_size_key(csa_mm2))
        return v.value if v else None


@lru_cache(maxsize=None)
def _load(name: str) -> dict:
    with open(DATA / name, encoding="utf-8") as fh:
        return yaml.load(fh, Loader=yaml.CSafeLoader)


@lru_cache(maxsize=None)
def cable_kinds() -> dict[str, CableKind]:
    kinds = {}
    for path in sorted((DATA / "cables").glob("*.yaml")):
        raw = _load(f"cables/{path.name}")
        kinds[raw["kind"]] = CableKind(
            kind=raw["kind"],
            title=raw["title"],
            conductor_c=float(raw["conductor_c"]),
            fault_final_c=float(raw["fault_final_c"]),
            cpc=raw["cpc"],
            resistance_multiplier=float(raw["resistance_multiplier"]),
            methods={str(k): v for k, v in raw["methods"].items()},
            ratings={_size_key(c): {str(m): _value(v) for m, v in row.items()}
                     for c, row in raw["ratings_a"].items()},
            mv_per_a_m={_size_key(c): _value(v) for c, v in raw["mv_per_a_m"].items()},
            cpc_sizes={_size_key(c): _value(v) for c, v in raw.get("cpc_mm2", {}).items()},
            cpc_default=raw.get("cpc_default"),
            ground_reference_c=raw.get("ground_reference_c"),
            sources=raw["sources"],
            **_three_phase(raw.get("three_phase")),
        )
    return kinds


def _three_phase(raw: dict | None) -> dict:
    if not raw:
        return {}
    return {
        "ratings_3ph": {_size_key(c): {str(m): _value(v) for m, v in row.items()}
                        for c, row in raw["ratings_a"].items()},
        "mv_per_a_m_3ph": {_size_key(c): _value(v) for c, v in raw["mv_per_a_m"].items()},
        "sources_3ph": raw["sources"],
    }


def cable_kind(kind: str) -> CableKind | None:
    return cable_kinds().get(kind)


@lru_cache(maxsize=None)
def conductor_resistances() -> dict[float, Value]:
    raw = _load("conductors.yaml")
    return {_size_key(c): _value(v) for c, v in raw["resistance_mohm_per_m"].items()}


def conductor_resistance(csa_mm2: float) -> Value | None:
    """Resistance of a copper conductor at 20 °C, mohm/m (IEC 60228)."""
    return conductor_resistances().get(_size_key(csa_mm2))


@lru_cache(maxsize=None)
def devices() -> dict:
    return _load("devices.yaml")


def device_info(kind: str) -> dict | None:
    return devices().get(kind)


def rcd_time_limits_ms(delay: str = "general", multiple: int = 1) -> tuple[float | None, float]:
    """(shortest, longest) operating time in ms of an RCD at `multiple` × IΔn (1 or 5) by its
    product standards (devices.yaml `rcd`): `delay` 'general' (no delay, no shortest) or 'S'
    (time-delayed, with the hold-off it must give). The one source of these figures: the fault-loop
    and adiabatic checks read the same rows."""
    rcd = device_info("rcd")
    if delay == "S":
        return (float(rcd["delayed_least_time_s"][multiple][0]) * 1000.0,
                float(rcd["delayed_break_time_s"][multiple][0]) * 1000.0)
    return None, float(rcd["break_time_s"][multiple][0]) * 1000.0


def standard_ratings(kind: str) -> list[float]:
    info = device_info(kind)
    return [float(r) for r in info["ratings_a"]] if info else []


@lru_cache(maxsize=None)
def factors() -> dict:
    return _load("factors.yaml")


@lru_cache(maxsize=None)
def triplen_harmonic_rows() -> tuple[tuple[float | None, Value, str], ...]:
    """BS 7671 Appendix 4 Table 4Aa as (up to %, factor, 'line' | 'neutral') rows, in order."""
    rows = factors()["triplen_harmonics"]["rows"]
    return tuple((None if r["up_to_pct"] is None else float(r["up_to_pct"]), _value(r["factor"]), r["size_on"])
                 for r in rows)


@lru_cache(maxsize=None)
def diversity() -> dict:
    return _load("diversity.yaml")


@lru_cache(maxsize=None)
def let_through_table() -> dict:
    return _load("let_through.yaml")


@lru_cache(maxsize=None)
def energy_class_rows(energy_class: int, rating_a: float, curve: str | None
                      ) -> tuple[tuple[float, ...], tuple[Value, ...], float] | None:
    """(prospective currents A, maximum I²t A²s, the band's upper In) of an energy-limiting class
    for a breaker of that rating and type, or None where the class sets no limit (class 1) or
    the table holds no band or type for it (type D, In over 32 A)."""
    table = let_through_table()
    bands = table["classes"].get(int(energy_class))
    if not bands or curve is None:
        return None
    for top in sorted(bands):
        if rating_a <= top:
            row = bands[top].get(curve)
            if row is None:
                return None
            return tuple(float(a) for a in table["prospective_a"]), tuple(_value(v) for v in row), float(top)
    return None


@lru_cache(maxsize=None)
def protective_k() -> dict:
    return _load("protective_k.yaml")


@dataclass(frozen=True, slots=True)
class KFactor:
    k: Value
    initial_c: float
    final_c: float
    table: str


@lru_cache(maxsize=None)
def k_factor(role: str, conductor_c: float, route: str | None = None) -> KFactor | None:
    """k of BS 7671 Tables 43.1 / 54.2 / 54.3 / 54.4: role 'line', 'cpc' (route 'in-cable' or
    'separate') or 'armour', for a cable whose conductors run at `conductor_c`."""
    raw = protective_k()
    rows = raw[role] if role != "cpc" else raw["cpc"].get(route or "in-cable", {})
    row = rows.get(int(conductor_c))
    if row is None:
        return None
    return KFactor(_value(row["k"]), float(row["initial_c"]), float(row["final_c"]), str(row["table"]))


@lru_cache(maxsize=None)
def deadlines() -> dict:
    """The inspection cycle's deadline rules (tracker/data/deadlines.yaml)."""
    return _load("deadlines.yaml")


@lru_cache(maxsize=None)
def suggested_codes() -> dict:
    """Suggested classification codes for failing measured checks (tracker/data/suggested_codes.yaml:
    common practice, a suggestion for the inspector to confirm)."""
    return _load("suggested_codes.yaml")


@lru_cache(maxsize=None)
def ev_charging() -> dict:
    """BS 7671 Section 722 rules and the earthing measures of 722.411.4.1."""
    return _load("ev_charging.yaml")


@lru_cache(maxsize=None)
def generation() -> dict:
    """Generating sets and PV (551.7, Section 712, 530.3.201)."""
    return _load("generation.yaml")


@lru_cache(maxsize=None)
def connection() -> dict:
    """The network operators' thresholds for notifying after or applying before connecting."""
    return _load("connection.yaml")
