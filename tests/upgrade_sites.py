"""Small invented sites for the EV charging, heat pump and generation tests."""
from __future__ import annotations

import textwrap

from tracker.checks.site import evaluate_site
from tracker.loading import load_estate

HOUSE = """\
site:
  id: test-house
  name: "An invented semi-detached house"
supply:
  system: {system}
  ze_ohm: 0.35
  pfc_ka: 1.6
  service_fuse_a: {fuse}
  looped: {looped}
boards:
  - id: CU1
    fed_by: supply
    main_switch_a: 100
circuits:
  - id: "1"
    board: CU1
    name: "Sockets"
    device: {{kind: rcbo, curve: B, rating_a: 32, breaking_ka: 6}}
    rcd_ma: 30
    rcd_type: A
    topology: ring
    cable: {{kind: twin-earth-70, csa_mm2: 2.5, cpc_mm2: 1.5, length_m: 40, method: C}}
    loads:
      - {{id: sockets, kind: socket-outlets}}
  - id: "2"
    board: CU1
    name: "Cooker"
    device: {{kind: mcb, curve: B, rating_a: 32, breaking_ka: 6}}
    cable: {{kind: twin-earth-70, csa_mm2: 6, cpc_mm2: 2.5, length_m: 8, method: C}}
    loads:
      - {{id: cooker, kind: cooker, power_kw: 10}}
"""


def house(extra: str = "", system: str = "TN-C-S", fuse: float = 60, looped: str = "false") -> str:
    """The house's site.yaml, with `extra` circuits (YAML list items, indented by two) appended."""
    return HOUSE.format(system=system, fuse=fuse, looped=looped) + textwrap.indent(textwrap.dedent(extra), "  ")


def evaluate(site_factory, text: str):
    root = site_factory(text, folder="test-house")
    estate = load_estate(root)
    assert not estate.errors, estate.errors
    return evaluate_site(estate.sites["test-house"])


def charger(measure: str | None = "open-pen-device", rcd_type: str = "B", location: str = "outdoor",
            all_poles: str = "true", extra: str = "") -> str:
    lines = ['- id: "3"', "  board: CU1", '  name: "Charge point, drive"',
             "  device: {kind: rcbo, curve: B, rating_a: 32, breaking_ka: 6}",
             "  rcd_ma: 30", f"  rcd_type: {rcd_type}", f"  rcd_all_poles: {all_poles}"]
    if measure:
        lines.append(f"  earthing_measure: {measure}")
    lines += ["  cable: {kind: twin-earth-70, csa_mm2: 6, cpc_mm2: 2.5, length_m: 12, method: C}",
              "  loads:", f"    - {{id: car, kind: ev-charger, current_a: 32, location: {location}}}"]
    return "\n".join(lines) + "\n" + extra
