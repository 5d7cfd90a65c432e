"""The adiabatic equation: conductor size to withstand a fault for the disconnection time."""
from __future__ import annotations

import math
from functools import lru_cache

# Copper constants of IEC 60364-5-54:2011 Annex A (Table A.1): volumetric heat capacity Qc,
# reciprocal of the temperature coefficient of resistivity at 0 °C β, resistivity at 20 °C ρ20,
# and the constant they make, sqrt(Qc (β + 20) / ρ20) = 225.7, which the table gives as 226.
COPPER_QC_J_PER_C_MM3 = 3.45e-3
COPPER_BETA_C = 234.5
COPPER_RHO20_OHM_MM = 17.241e-6
COPPER_K_CONSTANT = 226.0


@lru_cache(maxsize=256)
def k_factor(initial_c: float, final_c: float, constant: float = COPPER_K_CONSTANT,
             beta_c: float = COPPER_BETA_C) -> float:
    """Factor k of the adiabatic equation for a conductor heated from θi to θf.

    k = K · sqrt(ln((β + θf) / (β + θi))),  K = sqrt(Qc (β + 20) / ρ20)

    IEC 60364-5-54:2011 Annex A, equation A.1, with K = 226 for copper as its Table A.1 gives it.
    For copper: 70 → 160 °C gives 115.0 (thermoplastic insulation, cpc in the cable or line
    conductor: BS 7671 Tables 43.1, 54.3); 30 → 160 °C gives 142.9 (separate thermoplastic-
    insulated cpc, Table 54.2: 143); 90 → 250 °C gives 143.1 (thermosetting); 30 → 250 °C 175.8 (176).
    """
    return constant * math.sqrt(math.log((beta_c + final_c) / (beta_c + initial_c)))


def min_csa_mm2(fault_current_a: float, time_s: float, k: float) -> float:
    """Minimum conductor cross-section: S = sqrt(I² t) / k.

    BS 7671:2018 Regulation 543.1.3 (protective conductors) and 434.5.2 (live conductors).
    """
    return math.sqrt(fault_current_a ** 2 * time_s) / k


def min_csa_from_energy_mm2(energy_a2s: float, k: float) -> float:
    """Minimum cross-section for a let-through energy I²t (A²s): S = sqrt(I²t) / k (as above)."""
    return math.sqrt(energy_a2s) / k


def fault_current_a(u0_v: float, loop_ohm: float) -> float:
    """Fault current through a loop of impedance Z at U0: I = U0 / Z (BS 7671 543.1.3)."""
    return u0_v / loop_ohm


# Steel (armour) constants of the same Table A.1: Qc 3.8×10⁻³ J/(°C·mm³), β 202 °C, ρ20
# 138×10⁻⁶ Ω·mm, giving K = sqrt(3.8e-3 × 222 / 138e-6) = 78.
STEEL_BETA_C = 202.0
STEEL_K_CONSTANT = 78.0


def armour_k_factor(initial_c: float, final_c: float) -> float:
    """k for steel armour used as a protective conductor (IEC 60364-5-54:2011 Annex A, A.1 with
    the steel constants): 80 → 200 °C gives 46.4, BS 7671:2018 Table 54.4's 46 for the armour of
    a 90 °C thermosetting cable."""
    return k_factor(initial_c, final_c, STEEL_K_CONSTANT, STEEL_BETA_C)
