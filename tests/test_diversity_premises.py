"""Maximum demand by class of premises: the published allowances for diversity (IET On-Site
Guide Appendix A, the same table as Guidance Note 1 Appendix H; seen in public reproductions),
the site's own allowances, premises of no tabulated class, the cooker's socket-outlet and a
motor's efficiency."""
from __future__ import annotations

import textwrap

import pytest

from tracker.checks.site import evaluate_site
from tracker.loading import load_estate



def _circuit(cid, name, kind, rating, loads, csa=2.5, method="C", curve="B", topology="radial"):
    return textwrap.dedent(f"""\
      - id: "{cid}"
        board: DB1
        name: "{name}"
        topology: {topology}
        device: {{kind: mcb, curve: {curve}, rating_a: {rating}, breaking_ka: 6}}
        rcd_ma: 30
        cable: {{kind: twin-earth-70, csa_mm2: {csa}, cpc_mm2: 1.5, length_m: 5, method: "{method}"}}
        loads:
    """) + "".join(f"      - {ld}\n" for ld in loads)


def _site(tmp_path, premises, circuits, extra_site="", main_switch=100, service_fuse=100):
    text = (f"site:\n  id: s\n  premises: {premises}\n{extra_site}"
            f"supply: {{system: TN-C-S, ze_ohm: 0.35, pfc_ka: 1.5, service_fuse_a: {service_fuse}}}\n"
            f"boards:\n  - {{id: DB1, fed_by: supply, main_switch_a: {main_switch}}}\n"
            "circuits:\n" + "".join(circuits))
    folder = tmp_path / "s"
    folder.mkdir()
    (folder / "site.yaml").write_text(text)
    estate = load_estate(folder)
    assert not estate.errors, estate.errors
    return evaluate_site(estate.sites["s"])


LIGHTS = [_circuit("1", "Lights", "lighting", 10, ["{id: l, kind: lighting, current_a: 10}"], csa=1.5)]
HEATERS = [_circuit(str(i), f"Heater {i}", "space-heater", 32, [f"{{id: h, kind: space-heater, current_a: {a}}}"],
                    csa=6) for i, a in ((2, 20), (3, 10), (4, 10))]
SOCKETS = [_circuit(str(i), f"Sockets {i}", "socket-outlets", r, ["{id: s, kind: socket-outlets}"],
                    csa=4 if r == 32 else 2.5) for i, r in ((5, 32), (6, 32), (7, 20))]


def _parts(sr):
    b = sr.boards["s/DB1"]
    return {cat: allowed for cat, _conn, allowed in b.demand.parts}, b


class TestPremisesTables:
    def test_household(self, tmp_path):
        parts, b = _parts(_site(tmp_path, "domestic", LIGHTS + HEATERS + SOCKETS))
        assert parts["lighting"] == pytest.approx(6.6)          # 66 % of 10 A (household column)
        assert parts["heating-power"] == pytest.approx(25.0)   # 10 A + 50 % of the other 30 A = 25 A
        assert parts["socket-circuits"] == pytest.approx(52.8)  # largest 32 A + 40 % of the other 52 A = 52.8 A
        assert "households" in b.check.detail and "On-Site Guide" in b.check.detail

    def test_small_shops_stores_offices(self, tmp_path):
        parts, b = _parts(_site(tmp_path, "shop-office", LIGHTS + HEATERS + SOCKETS))
        assert parts["lighting"] == pytest.approx(9.0)          # 90 % of total demand (shops column)
        assert parts["heating-power"] == pytest.approx(35.0)   # 100 % X 20 A + 75 % of (Y + Z) 20 A = 35 A
        assert parts["socket-circuits"] == pytest.approx(58.0)  # 100 % X 32 A + 50 % of (Y + Z) 52 A = 58 A
        assert "small shops, stores, offices" in b.check.detail

    def test_small_hotels_and_guest_houses(self, tmp_path):
        parts, b = _parts(_site(tmp_path, "hotel", LIGHTS + HEATERS + SOCKETS))
        assert parts["lighting"] == pytest.approx(7.5)          # 75 % of total demand (hotels column)
        assert parts["heating-power"] == pytest.approx(34.0)   # 100 % X 20 A + 80 % Y 8 A + 60 % Z 6 A = 34 A
        assert parts["socket-circuits"] == pytest.approx(58.0)  # 100 % X 32 A + 50 % of (Y + Z) 52 A = 58 A
        assert "small hotels" in b.check.detail

    def test_motors_count_apart_outside_households(self, tmp_path):
        motors = [_circuit(str(i), f"Motor {i}", "motor", 32, [f"{{id: m, kind: motor, current_a: {a}}}"], csa=6,
                           curve="C") for i, a in ((1, 20), (2, 10), (3, 10))]
        (tmp_path / "a").mkdir()
        shop, _ = _parts(_site(tmp_path / "a", "shop-office", motors))
        assert shop["motors"] == pytest.approx(34.0)   # shops: 100 % X 20 A + 80 % Y 8 A + 60 % Z 6 A
        (tmp_path / "b").mkdir()
        hotel, _ = _parts(_site(tmp_path / "b", "hotel", motors))
        assert hotel["motors"] == pytest.approx(30.0)              # hotels: 100 % X 20 A + 50 % (Y + Z) 10 A
        (tmp_path / "c").mkdir()
        home, _ = _parts(_site(tmp_path / "c", "domestic", motors))
        assert "motors" not in home                                         # households: not applicable,
        assert home["heating-power"] == pytest.approx(25.0)       # counted as heating and power: 10 + 50 % of 30 A

    def test_premises_of_no_class_count_in_full_and_a_failure_is_not_assessed(self, tmp_path):
        sr = _site(tmp_path, "other", LIGHTS + HEATERS + SOCKETS)
        b = sr.boards["s/DB1"]
        # 10 + 40 + 84 A = 134 A at 100 %: over 100 A, but only an upper figure (no published allowance)
        assert b.demand.demand_a == pytest.approx(134)
        assert b.check.status == "not-assessed" and "site.diversity" in b.check.detail
        assert sr.supply_check.status == "not-assessed"

    def test_premises_of_no_class_within_the_limit_pass(self, tmp_path):
        sr = _site(tmp_path, "other", LIGHTS + HEATERS[:1])
        assert sr.boards["s/DB1"].check.status == "pass"      # 30 A in full ≤ 100 A

    def test_the_sites_own_allowance_replaces_the_tables_for_its_kind(self, tmp_path):
        own = "  diversity:\n    space-heater: {pct: 50, basis: \"designer's assessment\"}\n"
        parts, b = _parts(_site(tmp_path, "shop-office", LIGHTS + HEATERS, extra_site=own))
        assert parts["site: space-heater"] == pytest.approx(20)   # 50 % of 40 A, the site's own figure
        assert parts["lighting"] == pytest.approx(9.0)            # the shops table still for the rest
        assert "the site's own allowances for space-heater" in b.check.detail


class TestCookerAllowance:
    COOKER = "{id: c, kind: cooker, power_kw: 11.5}"          # 50 A

    def test_household_without_a_socket(self, tmp_path):
        sr = _site(tmp_path, "domestic", [_circuit("1", "Cooker", "cooker", 32, [self.COOKER], csa=6)])
        # 10 A + 30 % of (50 − 10) A = 22 A (household column, cooking appliances)
        # 11 500 W / 230 V = 50 A: 10 + 0.3 × 40 = 22 A
        assert sr.circuits["s/DB1/1"].ib_a == pytest.approx(22.0)
        assert sr.boards["s/DB1"].demand.demand_a == pytest.approx(22)

    def test_household_with_a_socket_in_the_control_unit(self, tmp_path):
        load = "{id: c, kind: cooker, power_kw: 11.5, socket_outlet: true}"
        sr = _site(tmp_path, "domestic", [_circuit("1", "Cooker", "cooker", 32, [load], csa=6)])
        # 10 A + 30 % of the rest + 5 A for the socket-outlet (household column)
        assert sr.circuits["s/DB1/1"].ib_a == pytest.approx(27)
        assert "socket-outlet" in sr.circuits["s/DB1/1"].check("design-current").detail
        assert sr.boards["s/DB1"].demand.demand_a == pytest.approx(27)

    def test_small_shop_takes_the_largest_in_full(self, tmp_path):
        load = "{id: c, kind: cooker, power_kw: 11.5, socket_outlet: true}"
        sr = _site(tmp_path, "shop-office", [_circuit("1", "Cooker", "cooker", 63, [load], csa=16)])
        # shops column: 100 % of the largest appliance, no household 10 A rule, no socket allowance
        assert sr.circuits["s/DB1/1"].ib_a == pytest.approx(50)


def test_motor_current_with_power_factor_and_efficiency(tmp_path):
    load = "{id: m, kind: motor, power_kw: 2.2, power_factor: 0.85, efficiency: 0.8}"
    sr = _site(tmp_path, "shop-office", [_circuit("1", "Saw", "motor", 20, [load], curve="C")])
    # input power = output / efficiency; I = P / (U0 × pf) (physics): 2200 W / 0.8 = 2750 W;
    # 230 V × 0.85 = 195.5 V; 2750 / 195.5 = 14.066 A
    assert sr.circuits["s/DB1/1"].ib_a == pytest.approx(14.066, abs=0.0005)
    assert "efficiency 0.8" in sr.circuits["s/DB1/1"].check("design-current").detail


@pytest.mark.parametrize("premises", ["domestic", "shop-office", "hotel"])
def test_charge_points_at_100_percent_in_every_table(tmp_path, premises):
    ev = [_circuit(str(i), f"Charge point {i}", "ev-charger", 32, ["{id: ev, kind: ev-charger, current_a: 32}"], csa=6)
          for i in (1, 2)]
    parts, _ = _parts(_site(tmp_path, premises, ev))
    assert parts["ev-charging"] == pytest.approx(64)     # no diversity for charge points (BS 7671 722.311)
