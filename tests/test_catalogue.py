"""The catalogue keeps its promises: fixed cable kinds and methods, sources, statuses, sanity."""
from __future__ import annotations

from tracker import catalogue

STATUSES = {"seen", "code", "derived", "recalled"}


def test_fixed_cable_kinds_and_methods_of_the_spec():
    kinds = catalogue.cable_kinds()
    assert set(kinds["twin-earth-70"].methods) == {"100", "101", "102", "103", "A", "C"}
    assert set(kinds["singles-70"].methods) == {"A", "B", "C"}
    assert set(kinds["swa-90"].methods) == {"C", "D", "E"}


def test_every_value_has_a_status_and_every_table_a_source():
    for kind in catalogue.cable_kinds().values():
        assert kind.sources["ratings"] and kind.sources["voltage_drop"]
        for row in kind.ratings.values():
            assert all(v.status in STATUSES for v in row.values())
        assert all(v.status in STATUSES for v in kind.mv_per_a_m.values())
    assert all(v.status == "seen" for v in catalogue.conductor_resistances().values())
    assert catalogue.factors()["ambient"]["source"] and catalogue.diversity()["source"]


def test_twin_and_earth_ratings_are_those_of_table_4d5():
    """Spot values of BS 7671:2018 Table 4D5 confirmed in public sources ("seen")."""
    kind = catalogue.cable_kind("twin-earth-70")
    seen = {(1, "100"): 13, (1.5, "101"): 13, (2.5, "102"): 21, (2.5, "103"): 13.5, (2.5, "C"): 27,
            (6, "C"): 47, (10, "100"): 45, (16, "C"): 85, (1.5, "A"): 14.5}
    for (csa, method), amps in seen.items():
        v = kind.rating(csa, method)
        assert v.value == amps and v.status == "seen", (csa, method)


def test_ratings_grow_with_size_and_fall_with_insulation():
    """Physics sanity: a bigger conductor carries more; a cable in more insulation carries less
    (method 103 ≤ 101 ≤ 100 ≤ C for flat twin and cpc)."""
    for kind in catalogue.cable_kinds().values():
        for method in kind.methods:
            sizes = kind.sizes(method)
            amps = [kind.rating(s, method).value for s in sizes]
            assert amps == sorted(amps), (kind.kind, method)
    te = catalogue.cable_kind("twin-earth-70")
    for csa in te.ratings:
        r = {m: te.rating(csa, m).value for m in ("103", "101", "100", "C")}
        assert r["103"] <= r["101"] <= r["100"] <= r["C"], csa


def test_device_ratings_and_fuse_tables_are_consistent():
    for kind in ("fuse-domestic-cartridge", "fuse-semi-enclosed"):
        info = catalogue.device_info(kind)
        for t, row in info["max_zs_ohm"].items():
            for rating in row:
                assert float(rating) in catalogue.standard_ratings(kind)
        # A longer permitted time allows a higher impedance (lower current).
        for rating, v04 in info["max_zs_ohm"]["0.4"].items():
            assert info["max_zs_ohm"]["5"][rating][0] > v04[0]


def test_rcd_break_times_are_one_datum():
    """The longest break times of tracker/data/devices.yaml (read by the fault-loop and adiabatic
    checks) and those the rcd-operation check holds a measurement against
    (tracker.engine.measured.RCD_TIMES_MS) are the same figures of BS EN 61008-1 / 61009-1:
    300 ms at IΔn and 40 ms at 5 IΔn for a general RCD, 500 ms and 150 ms for a type S."""
    from tracker.engine import measured

    rcd = catalogue.device_info("rcd")
    for delay, key in (("general", "break_time_s"), ("S", "delayed_break_time_s")):
        for multiple in (1, 5):
            held_s = float(rcd[key][multiple][0])
            assert measured.rcd_time_limits_ms(delay, multiple)[1] == held_s * 1000.0, (delay, multiple)
    assert [float(rcd["break_time_s"][m][0]) for m in (1, 5)] == [0.3, 0.04]
    assert [float(rcd["delayed_break_time_s"][m][0]) for m in (1, 5)] == [0.5, 0.15]
