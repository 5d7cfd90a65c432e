"""Parsed, schema-valid documents → model objects, with the schema's defaults applied.

Also finds what a schema cannot: numbers that are not finite (``.nan``, ``.inf``) and keys
that look like misspellings of known ones (a warning: unknown keys are allowed).
"""
from __future__ import annotations

import datetime
import difflib
import math

from tracker.model import (NO_RCD_DATA, PHASES, Board, Cable, Circuit, Device, Environment, Inspection, Load,
                           Measurement, Observation, RcdData, RingReading, Source, Src, Supply)
from tracker.schemas_access import schema_json


class Problems:
    """Collects (file, path, message) errors and warnings while building."""

    def __init__(self, file: str):
        self.file = file
        self.errors: list[tuple[str, tuple, str]] = []
        self.warnings: list[tuple[str, tuple, str]] = []

    def error(self, path: tuple, message: str) -> None:
        self.errors.append((self.file, path, message))

    def warn(self, path: tuple, message: str) -> None:
        self.warnings.append((self.file, path, message))


def _known_keys() -> dict[str, frozenset]:
    defs = schema_json("site.schema.json")["$defs"]
    return {name: frozenset(d.get("properties", {})) for name, d in defs.items()}


_KNOWN = _known_keys()
_TOP = frozenset(schema_json("site.schema.json")["properties"])


def _check_keys(d: dict, known: frozenset, path: tuple, p: Problems) -> None:
    extra = d.keys() - known
    for key in extra:
        if not isinstance(key, str):
            continue
        close = difflib.get_close_matches(key, known, n=1, cutoff=0.6)
        if close:
            p.warn(path + (key,), f"unknown key, ignored (did you mean '{close[0]}'?)")


def _num(d: dict, key: str, path: tuple, p: Problems, default=None):
    value = d.get(key, default)
    if value is None or isinstance(value, bool):
        return value
    if isinstance(value, float) and not math.isfinite(value):
        p.error(path + (key,), f"{value} is not a finite number")
        return default
    return float(value)


def _text(value) -> str:
    return value if isinstance(value, str) else str(value)


def _date_text(d: dict, key: str, path: tuple, p: Problems) -> str | None:
    """A date key of a circuit's load or source as ISO text (YAML reads 2026-11-20 as a date;
    quoted, it is text). Circuits are not walked by yamlread.dates_as_text (large board files)."""
    value = d.get(key)
    if value is None:
        return None
    if isinstance(value, datetime.datetime):
        return value.date().isoformat()
    if isinstance(value, datetime.date):
        return value.isoformat()
    if isinstance(value, str):
        try:
            return datetime.date.fromisoformat(value.strip()).isoformat()
        except ValueError:
            pass
    p.error(path + (key,), f"{value!r} is not a date (write YYYY-MM-DD, e.g. 2026-11-20)")
    return None


def _rcd(d: dict) -> RcdData:
    if not any(k in d for k in ("rcd_type", "rcd_delay", "dc_fault_detection", "rcd_all_poles", "rcd_bidirectional")):
        return NO_RCD_DATA
    return RcdData(type=d.get("rcd_type"), delay=d.get("rcd_delay", "general"),
                   dc_fault_detection=d.get("dc_fault_detection"), all_poles=d.get("rcd_all_poles"),
                   bidirectional=d.get("rcd_bidirectional"))


def build_top(doc: dict, p: Problems) -> None:
    _check_keys(doc, _TOP, (), p)


def build_supply(d: dict, p: Problems) -> Supply:
    path = ("supply",)
    _check_keys(d, _KNOWN["supply"], path, p)
    return Supply(
        system=d["system"],
        u0_v=_num(d, "u0_v", path, p, 230.0),
        ze_ohm=_num(d, "ze_ohm", path, p),
        pfc_ka=_num(d, "pfc_ka", path, p),
        service_fuse_a=_num(d, "service_fuse_a", path, p),
        electrode_ohm=_num(d, "electrode_ohm", path, p),
        private=bool(d.get("private", False)),
        phases=int(d.get("phases", 1)),
        u_line_v=_num(d, "u_line_v", path, p),
        pfc_line_neutral_ka=_num(d, "pfc_line_neutral_ka", path, p),
        looped=bool(d.get("looped", False)),
        src=Src(p.file, path),
    )


def build_board(d: dict, index: int, p: Problems) -> Board:
    path = ("boards", index)
    _check_keys(d, _KNOWN["board"], path, p)
    return Board(
        id=_text(d["id"]),
        fed_by=d["fed_by"],
        name=d.get("name", ""),
        main_switch_a=_num(d, "main_switch_a", path, p),
        conditional_rating_ka=_num(d, "conditional_rating_ka", path, p),
        rcd_ma=_num(d, "rcd_ma", path, p),
        phases=int(d.get("phases", 1)),
        phase=d.get("phase"),
        rcd=_rcd(d),
        src=Src(p.file, path),
    )


def build_circuit(d: dict, index: int, p: Problems) -> Circuit:
    path = ("circuits", index)
    _check_keys(d, _KNOWN["circuit"], path, p)
    dev, cab = d["device"], d["cable"]
    _check_keys(dev, _KNOWN["device"], path + ("device",), p)
    _check_keys(cab, _KNOWN["cable"], path + ("cable",), p)
    env = d.get("environment") or {}
    _check_keys(env, _KNOWN["environment"], path + ("environment",), p)
    device = Device(
        kind=dev["kind"],
        rating_a=_num(dev, "rating_a", path + ("device",), p),
        curve=dev.get("curve"),
        breaking_ka=_num(dev, "breaking_ka", path + ("device",), p),
        max_zs_ohm=_num(dev, "max_zs_ohm", path + ("device",), p),
        let_through_a2s=_num(dev, "let_through_a2s", path + ("device",), p),
        energy_class=None if dev.get("energy_class") is None else int(dev["energy_class"]),
        bidirectional=dev.get("bidirectional"),
    )
    cable = Cable(
        kind=cab["kind"],
        csa_mm2=_num(cab, "csa_mm2", path + ("cable",), p),
        length_m=_num(cab, "length_m", path + ("cable",), p),
        method=_text(cab["method"]),
        cpc_mm2=_num(cab, "cpc_mm2", path + ("cable",), p),
        cpc_route=cab.get("cpc_route"),
        armour_mm2=_num(cab, "armour_mm2", path + ("cable",), p),
        armour_mohm_per_m=_num(cab, "armour_mohm_per_m", path + ("cable",), p),
    )
    environment = Environment(
        ambient_c=_num(env, "ambient_c", path + ("environment",), p),
        grouped_with=int(env.get("grouped_with", 1)),
        arrangement=env.get("arrangement", "bunched"),
        insulation_mm=_num(env, "insulation_mm", path + ("environment",), p, 0.0),
    )
    loads = tuple(build_load(ld, index, j, p) for j, ld in enumerate(d.get("loads") or ()))
    sources = tuple(build_source(sd, index, j, p) for j, sd in enumerate(d.get("sources") or ()))
    feeds = d.get("feeds")
    return Circuit(
        id=_text(d["id"]),
        board=_text(d["board"]),
        device=device,
        cable=cable,
        name=d.get("name", ""),
        topology=d.get("topology", "radial"),
        feeds=None if feeds is None else _text(feeds),
        design_current_a=_num(d, "design_current_a", path, p),
        overload_exempt=bool(d.get("overload_exempt", False)),
        rcd_ma=_num(d, "rcd_ma", path, p),
        environment=environment,
        loads=loads,
        phases=int(d.get("phases", 1)),
        phase=d.get("phase"),
        triplen_harmonics_pct=_num(d, "triplen_harmonics_pct", path, p),
        concealed_in_wall=None if d.get("concealed_in_wall") is None else bool(d["concealed_in_wall"]),
        rcd=_rcd(d),
        earthing_measure=d.get("earthing_measure"),
        electrode_ohm=_num(d, "electrode_ohm", path, p),
        sources=sources,
        src=Src(p.file, path),
    )


def build_load(d: dict, circuit_index: int, index: int, p: Problems) -> Load:
    path = ("circuits", circuit_index, "loads", index)
    _check_keys(d, _KNOWN["load"], path, p)
    return Load(
        id=_text(d["id"]),
        kind=d["kind"],
        name=d.get("name", ""),
        power_kw=_num(d, "power_kw", path, p),
        current_a=_num(d, "current_a", path, p),
        power_factor=_num(d, "power_factor", path, p, 1.0),
        location=d.get("location"),
        mobile=bool(d.get("mobile", False)),
        phase_currents_a=_phase_currents(d, path, p),
        rated_current_a=_num(d, "rated_current_a", path, p),
        starting_current_a=_num(d, "starting_current_a", path, p),
        socket_outlet=bool(d.get("socket_outlet", False)),
        efficiency=_num(d, "efficiency", path, p),
        load_control_a=_num(d, "load_control_a", path, p),
        connected_on=_date_text(d, "connected_on", path, p),
        notified_on=_date_text(d, "notified_on", path, p),
        src=Src(p.file, path),
    )


def build_source(d: dict, circuit_index: int, index: int, p: Problems) -> Source:
    path = ("circuits", circuit_index, "sources", index)
    _check_keys(d, _KNOWN["source"], path, p)
    return Source(
        id=_text(d["id"]),
        kind=d["kind"],
        inverter_a=_num(d, "inverter_a", path, p),
        name=d.get("name", ""),
        isolation=d.get("isolation"),
        connected_on=_date_text(d, "connected_on", path, p),
        notified_on=_date_text(d, "notified_on", path, p),
        src=Src(p.file, path),
    )


def _phase_currents(d: dict, path: tuple, p: Problems) -> tuple[float, float, float] | None:
    given = d.get("phase_currents_a")
    if not given:
        return None
    values = tuple(_num(given, ph, path + ("phase_currents_a",), p, 0.0) for ph in PHASES)
    return values


def _date(d: dict, key: str, path: tuple, p: Problems) -> datetime.date | None:
    """A date the schema has checked for its form (YYYY-MM-DD); quoted text may still name no day."""
    value = d.get(key)
    if value is None:
        return None
    try:
        return datetime.date.fromisoformat(value)
    except (TypeError, ValueError):
        p.error(path + (key,), f"'{value}' is not a date of the calendar (YYYY-MM-DD)")
        return None


def build_inspection(d: dict, index: int, p: Problems) -> Inspection | None:
    """One inspection with its results and observations; None where its date is not a date."""
    path = ("inspections", index)
    _check_keys(d, _KNOWN["inspection"], path, p)
    when = _date(d, "date", path, p)
    results = []
    for j, r in enumerate(d.get("results") or ()):
        rpath = path + ("results", j)
        _check_keys(r, _KNOWN["result"], rpath, p)
        ring = None
        if isinstance(r.get("ring"), dict):
            _check_keys(r["ring"], _KNOWN["ring"], rpath + ("ring",), p)
            ring = RingReading(r1_ohm=_num(r["ring"], "r1_ohm", rpath + ("ring",), p),
                               rn_ohm=_num(r["ring"], "rn_ohm", rpath + ("ring",), p),
                               r2_ohm=_num(r["ring"], "r2_ohm", rpath + ("ring",), p))
        results.append(Measurement(
            ref=r["ref"], r1_r2_ohm=_num(r, "r1_r2_ohm", rpath, p), zs_ohm=_num(r, "zs_ohm", rpath, p),
            ir_mohm=_num(r, "ir_mohm", rpath, p), ir_test_v=_num(r, "ir_test_v", rpath, p),
            rcd_ms=_num(r, "rcd_ms", rpath, p), ring=ring, src=Src(p.file, rpath)))
    observations = []
    for j, o in enumerate(d.get("observations") or ()):
        opath = path + ("observations", j)
        _check_keys(o, _KNOWN["observation"], opath, p)
        observations.append(Observation(
            code=o["code"], text=o["text"], ref=o.get("ref"), within_days=o.get("within_days"),
            done_on=_date(o, "done_on", opath, p), confirmed_on=_date(o, "confirmed_on", opath, p),
            src=Src(p.file, opath)))
    if when is None:
        return None
    return Inspection(
        date=when, by=d["by"], kind=d["kind"], next_due=_date(d, "next_due", path, p),
        ze_ohm=_num(d, "ze_ohm", path, p), pfc_ka=_num(d, "pfc_ka", path, p),
        test_temp_c=_num(d, "test_temp_c", path, p, 20.0),
        copy_to_tenant_on=_date(d, "copy_to_tenant_on", path, p),
        results=tuple(results), observations=tuple(observations), key=when.isoformat(), src=Src(p.file, path))


def own_allowances(d) -> tuple:
    """site.diversity as the model holds it: (load kind, ((key, value), ...)) sorted, lists as tuples
    (the schema has already checked its shape)."""
    if not isinstance(d, dict):
        return ()
    return tuple(sorted(
        (str(kind), tuple(sorted((k, tuple(v) if isinstance(v, list) else v) for k, v in rule.items())))
        for kind, rule in d.items() if isinstance(rule, dict)))
