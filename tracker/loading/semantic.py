"""Checks of a site that a schema of one file cannot make.

Ids unique in their scope; every `board`, `fed_by` and `feeds` resolves and they agree; every
board has exactly one path to the supply; cable kinds, methods and device ratings are in the
catalogue; loads say how big they are.
"""
from __future__ import annotations

from dataclasses import replace

from tracker import catalogue
from tracker.loading import phases
from tracker.model import SUPPLY, Board, Circuit, Inspection


def _fmt_rating(value: float) -> str:
    return f"{value:g}"


def check_site(boards: list[Board], circuits: list[Circuit], broken: set = frozenset(), supply=None):
    """Yield (file, path, message) for every problem found.

    `broken` names elements that failed the schema and were not built: references to them
    are not reported again. `supply` (when built) lets the phases be checked against it.
    """
    yield from _check_boards(boards)
    by_id = {b.id: b for b in boards}
    yield from _check_circuits(circuits, by_id, broken)
    yield from _check_feeding(boards, circuits, by_id, broken)
    yield from phases.check_phases(supply, boards, circuits, broken)


def _err(obj, sub: tuple, message: str):
    return (obj.src.file, obj.src.path + sub, message)


def _check_boards(boards: list[Board]):
    seen: dict[str, Board] = {}
    for b in boards:
        yield from _rcd_without_rating(b)
        if b.id == SUPPLY:
            yield _err(b, ("id",), "'supply' is reserved (it names the origin in fed_by); choose another board id")
        if b.id in seen:
            first = seen[b.id].src
            yield _err(b, ("id",), f"board id '{b.id}' is already used ({first.file}, boards[{first.path[1]}])")
        else:
            seen[b.id] = b


def _check_circuits(circuits: list[Circuit], boards: dict[str, Board], broken):
    seen: dict[tuple[str, str], Circuit] = {}
    kinds = catalogue.cable_kinds()
    for c in circuits:
        key = (c.board, c.id)
        if key in seen:
            first = seen[key].src
            yield _err(c, ("id",), f"circuit id '{c.id}' is already used on board {c.board} "
                                   f"({first.file}, circuits[{first.path[1]}])")
        else:
            seen[key] = c
        if c.board not in boards and ("board", c.board) not in broken:
            known = ", ".join(sorted(boards)) or "none"
            yield _err(c, ("board",), f"board '{c.board}' is not defined in this site (boards: {known})")
        kind = kinds.get(c.cable.kind)
        if kind is None:
            yield _err(c, ("cable", "kind"), f"'{c.cable.kind}' is not a cable kind of the catalogue "
                                             f"({', '.join(sorted(kinds))})")
        elif c.cable.method not in kind.methods:
            yield _err(c, ("cable", "method"), f"'{c.cable.method}' is not an installation method of "
                                               f"{kind.kind} ({', '.join(kind.methods)})")
        ratings = catalogue.standard_ratings(c.device.kind)
        if ratings and c.device.rating_a not in ratings:
            title = catalogue.device_info(c.device.kind)["title"]
            yield _err(c, ("device", "rating_a"), f"{_fmt_rating(c.device.rating_a)} A is not a standard rating "
                                                  f"({title}: {', '.join(map(_fmt_rating, ratings))})")
        yield from _check_cpc_route(c)
        if c.device.energy_class is not None and c.device.kind not in ("mcb", "rcbo"):
            yield _err(c, ("device", "energy_class"), "an energy-limiting class is marked on circuit-breakers "
                                                      "(mcb, rcbo), not on fuses")
        if c.is_ring and c.is_submain:
            yield _err(c, ("topology",), "a sub-main (feeds) cannot be a ring")
        if c.is_submain and c.loads:
            yield _err(c, ("loads",), f"a sub-main feeding {c.feeds} carries that board's load; "
                                      "list loads on the circuits of that board instead")
        yield from _check_upgrades(c)
        load_ids: set[str] = set()
        for ld in c.loads:
            if ld.id in load_ids:
                yield _err(ld, ("id",), f"load id '{ld.id}' is already used in this circuit")
            load_ids.add(ld.id)
            if ld.power_kw is not None and ld.current_a is not None:
                yield _err(ld, ("current_a",), "give power_kw or current_a, not both")
            elif (ld.power_kw is None and ld.current_a is None and ld.phase_currents_a is None
                  and ld.rated_current_a is None and ld.kind != "socket-outlets"):
                yield _err(ld, (), f"a {ld.kind} load needs power_kw, current_a or rated_current_a")
            if ld.load_control_a is not None and ld.kind != "ev-charger":
                yield _err(ld, ("load_control_a",), "load_control_a is for an ev-charger load (722.311)")


_RCD_KEYS = (("rcd_type", "type"), ("rcd_delay", "delay"), ("rcd_all_poles", "all_poles"),
             ("rcd_bidirectional", "bidirectional"))


def _rcd_without_rating(obj):
    """RCD details given where no RCD (rcd_ma) is: a slip worth stopping for."""
    if obj.rcd_ma is not None:
        return
    for key, attr in _RCD_KEYS:
        value = getattr(obj.rcd, attr)
        if value is not None and not (attr == "delay" and value == "general"):
            yield _err(obj, (key,), f"{key} is given but there is no RCD here: give rcd_ma (its IΔn) too")
            return


def _check_upgrades(c: Circuit):
    """Sources, RCD details and the EV earthing measure of one circuit."""
    yield from _rcd_without_rating(c)
    if c.sources and c.is_submain:
        yield _err(c, ("sources",), f"a sub-main feeding {c.feeds} cannot list sources; "
                                    "list them on the circuit of that board they are connected to")
    ids = {ld.id for ld in c.loads}
    for s in c.sources:
        if s.id in ids:
            yield _err(s, ("id",), f"id '{s.id}' is already used by a load or source of this circuit")
        ids.add(s.id)
    if c.earthing_measure == "tt-electrode" and c.electrode_ohm is None:
        yield _err(c, ("earthing_measure",), "tt-electrode: give electrode_ohm, the resistance RA of the "
                                             "charging point's own electrode (fault protection rests on it, 411.5.3)")
    if c.electrode_ohm is not None and c.earthing_measure != "tt-electrode":
        yield _err(c, ("electrode_ohm",), "electrode_ohm on a circuit is for a circuit earthed by its own "
                                          "electrode: set earthing_measure: tt-electrode")


def _check_feeding(boards: list[Board], circuits: list[Circuit], by_id: dict[str, Board], broken):
    by_ref = {f"{c.board}/{c.id}": c for c in circuits}
    feeders: dict[str, list[Circuit]] = {}
    for c in circuits:
        if c.feeds is None:
            continue
        feeders.setdefault(c.feeds, []).append(c)
        target = by_id.get(c.feeds)
        if target is None:
            if ("board", c.feeds) not in broken:
                yield _err(c, ("feeds",), f"board '{c.feeds}' is not defined in this site")
        elif c.feeds == c.board:
            yield _err(c, ("feeds",), "a circuit cannot feed the board it leaves from")
        elif target.fed_by != f"{c.board}/{c.id}":
            yield _err(c, ("feeds",), f"board {c.feeds} says it is fed by '{target.fed_by}', "
                                      f"not by this circuit ({c.board}/{c.id})")
    for b in boards:
        if b.fed_by == SUPPLY:
            continue
        feeder = by_ref.get(b.fed_by)
        if feeder is None:
            if ("circuit", b.fed_by) not in broken:
                yield _err(b, ("fed_by",), f"no circuit '{b.fed_by}' in this site to feed this board")
        elif feeder.feeds != b.id:
            said = f"says it feeds '{feeder.feeds}'" if feeder.feeds else "has no 'feeds: " + b.id + "'"
            yield _err(b, ("fed_by",), f"circuit {b.fed_by} {said}; fed_by and feeds must agree")
    # Exactly one path to the supply: fed_by is single-valued, so only a loop can break it.
    for b in boards:
        chain, cur = [b.id], b
        while cur is not None and cur.fed_by != SUPPLY:
            feeder = by_ref.get(cur.fed_by)
            if feeder is None:
                break
            nxt = by_id.get(feeder.board)
            if nxt is None:
                break
            if nxt.id in chain:
                if nxt.id == b.id:
                    loop = " → ".join(chain + [b.id])
                    yield _err(b, ("fed_by",), f"boards feed each other in a loop ({loop}); "
                                               "every board needs one path to the supply")
                break
            chain.append(nxt.id)
            cur = nxt


def keyed_inspections(inspections: list[Inspection]) -> tuple[Inspection, ...]:
    """Oldest first (files in the site's order, then the order of each list, for one day), each
    with its key: the date, and for a second inspection of the same day the date and '.2'."""
    ordered = sorted(inspections, key=lambda x: x.date)
    seen: dict[str, int] = {}
    out = []
    for x in ordered:
        day = x.date.isoformat()
        seen[day] = seen.get(day, 0) + 1
        out.append(replace(x, key=day if seen[day] == 1 else f"{day}.{seen[day]}"))
    return tuple(out)


def check_inspections(inspections, circuits: list[Circuit], broken=frozenset()) -> list:
    """(file, path, message) for every result or observation whose ref names no circuit of the
    site, and every circuit measured twice in one inspection."""
    refs = {f"{c.board}/{c.id}" for c in circuits}
    out = []

    def unknown(ref: str) -> bool:
        return ref not in refs and ("circuit", ref) not in broken

    for x in inspections:
        measured: dict[str, object] = {}
        for m in x.results:
            if unknown(m.ref):
                out.append((m.src.file, m.src.path + ("ref",), _no_circuit(m.ref, refs)))
            elif m.ref in measured:
                first = measured[m.ref].src
                out.append((m.src.file, m.src.path + ("ref",),
                            f"circuit {m.ref} is already measured in this inspection (results[{first.path[-1]}])"))
            else:
                measured[m.ref] = m
        for o in x.observations:
            if o.ref is not None and unknown(o.ref):
                out.append((o.src.file, o.src.path + ("ref",), _no_circuit(o.ref, refs)))
    return out


def _no_circuit(ref: str, refs: set[str]) -> str:
    board = ref.split("/", 1)[0]
    on_board = sorted(r for r in refs if r.startswith(board + "/"))
    hint = f" (circuits of {board}: {', '.join(on_board)})" if on_board else ""
    return f"no circuit '{ref}' in this site{hint}"


def _check_cpc_route(c: Circuit):
    """cpc_route must fit the cable kind (BS 7671 Tables 54.2–54.4 tell the routes apart)."""
    route, cable = c.cable.cpc_route, c.cable
    if route is None:
        return
    if route == "armour" and cable.kind != "swa-90":
        yield _err(c, ("cable", "cpc_route"), f"only an armoured cable (swa-90) has armour to serve as the cpc, "
                                              f"not {cable.kind}")
    elif route == "armour" and cable.cpc_mm2 is not None:
        yield _err(c, ("cable", "cpc_mm2"), "cpc_mm2 is a copper cpc's size; with cpc_route armour give "
                                            "armour_mm2 (and armour_mohm_per_m) instead")
    elif route == "core" and cable.kind == "singles-70":
        yield _err(c, ("cable", "cpc_route"), "single-core cables have no spare core: the cpc is bunched with "
                                              "them in the conduit or trunking, or separate")
