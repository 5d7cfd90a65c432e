"""Synthetic estates for the benchmark: N sites × M circuits of varied, valid circuits, written
as site files a contractor could have written. Seeded and reproducible.

    python -m tests.benchmark.generate OUT_DIR --sites 500 --circuits 20 [--seed 7]
"""
from __future__ import annotations

import argparse
import random
from pathlib import Path

SYSTEMS = ("TN-C-S", "TN-C-S", "TN-S", "TT")


# (kind, weight, device rating, csa, methods that carry it, length range m, load line)
DESIGNS = [
    ("ring", 3, 32, 2.5, ("C", "102", "100"), (25, 70), "{id: sockets, kind: socket-outlets}"),
    ("lighting", 6, 6, 1.5, ("100", "101", "C"), (8, 35), "{id: lights, kind: lighting, power_kw: %s}"),
    ("radial", 2, 20, 2.5, ("C", "100", "102"), (5, 25), "{id: sockets, kind: socket-outlets}"),
    ("heater", 2, 16, 2.5, ("C", "101", "100"), (4, 20), "{id: heater, kind: space-heater, power_kw: %s}"),
    ("immersion", 1, 16, 2.5, ("C", "100", "101"), (4, 15), "{id: immersion, kind: water-heater, power_kw: 3}"),
    ("cooker", 1, 32, 6.0, ("C", "102", "100"), (4, 15), "{id: cooker, kind: cooker, power_kw: %s}"),
    ("shower", 1, 40, 10.0, ("C", "102", "100"), (5, 18), "{id: shower, kind: shower, power_kw: %s, location: bathroom}"),
    ("ev", 0.3, 40, 10.0, ("C",), (5, 20), "{id: charger, kind: ev-charger, current_a: 32, location: outdoor}"),
    ("alarm", 1, 6, 1.5, ("100", "C"), (5, 30), "{id: alarms, kind: fixed, power_kw: 0.05}"),
]
CHOICES = {"lighting": (0.3, 0.5, 0.6, 0.8), "heater": (1.5, 2, 2.5), "cooker": (6, 7.2), "shower": (7.5, 8.5)}
DEGRADED = 0.06   # share of circuits changed since design: longer, bunched, bigger load


def _circuit(rng: random.Random, board: str, cid: str, system: str) -> str:
    kind, _, rating, csa, methods, (lo, hi), load = rng.choices(DESIGNS, weights=[d[1] for d in DESIGNS])[0]
    if "%s" in load:
        load = load % rng.choice(CHOICES[kind])
    method = rng.choice(methods)
    length = round(rng.uniform(lo, hi), 1)
    env = ""
    if rng.random() < DEGRADED:
        length = round(length * rng.uniform(1.5, 2.5), 1)
        env = f"\n    environment: {{grouped_with: {rng.randint(2, 4)}}}"
    rcd = system == "TT" or kind in ("ring", "radial", "shower", "ev") or rng.random() < 0.6
    dev_kind = "rcbo" if rcd and rng.random() < 0.7 else "mcb"
    rcd_line = "\n    rcd_ma: 30" if rcd else ""
    topology = "ring" if kind == "ring" else "radial"
    return (f"  - id: \"{cid}\"\n    board: {board}\n    name: \"{kind.title()} {cid}\"\n    topology: {topology}\n"
            f"    device: {{kind: {dev_kind}, curve: B, rating_a: {rating}, breaking_ka: 6}}{rcd_line}\n"
            f"    cable: {{kind: twin-earth-70, csa_mm2: {csa:g}, length_m: {length}, method: \"{method}\"}}{env}\n"
            f"    loads:\n      - {load}\n")


def site_text(rng: random.Random, index: int, circuits: int) -> dict[str, str]:
    """The files of one synthetic site: name -> text."""
    system = rng.choice(SYSTEMS)
    ze = round(rng.uniform(20, 90), 1) if system == "TT" else round(rng.uniform(0.1, 0.8), 2)
    tt = f"\n  electrode_ohm: {round(ze * 0.8, 1)}" if system == "TT" else ""
    has_sub = circuits >= 8 and rng.random() < 0.4
    main = circuits - (circuits // 4 if has_sub else 0)
    head = (f"# Synthetic site {index} (benchmark estate)\nsite:\n  id: s{index:06d}\n  name: \"Benchmark site {index}\"\n"
            f"supply:\n  system: {system}\n  ze_ohm: {ze}\n  pfc_ka: {round(rng.uniform(0.8, 4), 2)}\n"
            f"  service_fuse_a: {rng.choice([80, 100, 100])}{tt}\n"
            f"boards:\n  - id: CU1\n    name: \"Consumer unit\"\n    fed_by: supply\n    main_switch_a: 100\n"
            f"    conditional_rating_ka: 16\ncircuits:\n")
    body = "".join(_circuit(rng, "CU1", str(i + 1), system) for i in range(main - (1 if has_sub else 0)))
    files = {}
    if has_sub:
        body += ("  - id: \"99\"\n    board: CU1\n    name: \"Sub-main to outbuilding\"\n    feeds: OB1\n"
                 "    device: {kind: mcb, curve: B, rating_a: 40, breaking_ka: 6}\n"
                 # a three-core SWA with a core as the cpc (a two-core one's cpc is its armour)
                 f"    cable: {{kind: swa-90, csa_mm2: 10, cpc_mm2: 10, length_m: {round(rng.uniform(8, 40), 1)}, "
                 "method: D}\n")
        ob = ("# Outbuilding board\nboards:\n  - id: OB1\n    fed_by: CU1/99\n    main_switch_a: 63\n    rcd_ma: 30\n"
              "circuits:\n" + "".join(_circuit(rng, "OB1", str(i + 1), system) for i in range(circuits - main)))
        files["outbuilding.yaml"] = ob
    files["site.yaml"] = head + body
    return files


def generate(root: Path, sites: int, circuits: int, seed: int = 7) -> int:
    """Write `sites` sites of about `circuits` circuits each under `root`; returns circuits written."""
    rng = random.Random(seed)
    root.mkdir(parents=True, exist_ok=True)
    total = 0
    for i in range(sites):
        folder = root / f"s{i:06d}"
        folder.mkdir(exist_ok=True)
        for name, text in site_text(rng, i, circuits).items():
            (folder / name).write_text(text, encoding="utf-8")
        total += circuits
    return total


def main() -> None:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("out")
    p.add_argument("--sites", type=int, default=50)
    p.add_argument("--circuits", type=int, default=20)
    p.add_argument("--seed", type=int, default=7)
    a = p.parse_args()
    n = generate(Path(a.out), a.sites, a.circuits, a.seed)
    print(f"{a.sites} sites, {n} circuits in {a.out}")


if __name__ == "__main__":
    main()
