"""The catalogue keeps its promises: fixed cable kinds and methods, sources, statuses, sanity."""
from __future__ import annotations

import pytest

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


@pytest.mark.parametrize("delay, multiple, limits", [
    ("general", 1, (None, 300.0)),   # BS EN 61008-1 / 61009-1 general type: ≤ 300 ms at IΔn
    ("general", 5, (None, 40.0)),    # and ≤ 40 ms at 5 IΔn
    ("S", 1, (130.0, 500.0)),        # time-delayed (S): 130–500 ms at IΔn
    ("S", 5, (50.0, 150.0)),         # and 50–150 ms at 5 IΔn
])
def test_rcd_times_by_delay_are_one_datum(delay, multiple, limits):
    """The RCD operating times of tracker/data/devices.yaml, read by the fault-loop and adiabatic
    checks and by rcd-operation alike (no copy elsewhere), are those of the product standards."""
    assert catalogue.rcd_time_limits_ms(delay, multiple) == limits
