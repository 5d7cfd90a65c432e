"""The bs7671 rule set: which circuits a rule applies to (BS 7671:2018 as amended; IEC 60364
based). Clause numbers are those of BS 7671:2018; numerical limits sit with the formulas in
`tracker.engine`, tables in `tracker/data/`.
"""
from __future__ import annotations

from tracker.model import Circuit

# 433.1.204: a ring final circuit with a 30 or 32 A device and line conductors of at least
# 2.5 mm² (thermoplastic or thermosetting copper; not mineral-insulated) needs Iz >= 20 A.
RING_DEVICE_RATINGS_A = (30.0, 32.0)
RING_MIN_CSA_MM2 = 2.5
RING_MIN_IZ_A = 20.0

# 411.3.3: additional protection by an RCD of IΔn <= 30 mA.
ADDITIONAL_PROTECTION_MA = 30.0
SOCKET_RCD_MAX_RATING_A = 32.0   # 411.3.3(a): socket-outlets rated up to 32 A
OUTDOOR_RCD_MAX_RATING_A = 32.0  # 411.3.3(b): mobile equipment for use outdoors up to 32 A

# 522.6.202/203: cables concealed in a wall or partition at less than 50 mm from its surface need
# 30 mA RCD protection unless they have an earthed metallic covering (the armour of an armoured
# cable), are in earthed conduit or trunking, or are mechanically protected.
EARTHED_COVERING_KINDS = frozenset({"swa-90"})

# Loads that a designer cannot rely on being unable to overload (433.3.1(ii) needs a load that
# is not likely to carry overload current): socket-outlets and motors (which can stall).
OVERLOADABLE_KINDS = frozenset({"socket-outlets", "motor"})

# Voltage drop of a conductor running below its maximum temperature may be corrected by Ct
# (Appendix 4 section 6.1); for conductors up to 16 mm² the drop is all resistive.
VOLTAGE_DROP_AT_CONDUCTOR_TEMPERATURE = True
CT_MAX_CSA_MM2 = 16.0

# RA above this may not be stable (BS 7671:2018 Table 41.5, note 2).
TT_STABLE_RA_OHM = 200.0


def has_kind(circuit: Circuit, kind: str) -> bool:
    for ld in circuit.loads:
        if ld.kind == kind:
            return True
    return False


def ring_ratings_text(joiner: str = "/") -> str:
    """The device ratings of a qualifying ring, as words: '30/32' (or '30 or 32')."""
    return joiner.join(f"{r:g}" for r in RING_DEVICE_RATINGS_A)


def qualifies_as_ring(circuit: Circuit) -> tuple[bool, str]:
    """433.1.204 conditions for a ring final circuit; (qualifies, why not)."""
    if not circuit.is_ring:
        return False, "not a ring"
    if circuit.device.rating_a not in RING_DEVICE_RATINGS_A:
        return False, f"device rated {circuit.device.rating_a:g} A (433.1.204 needs {ring_ratings_text(' or ')} A)"
    if circuit.cable.csa_mm2 < RING_MIN_CSA_MM2:
        return False, (f"{circuit.cable.csa_mm2:g} mm² conductors (433.1.204 needs at least "
                       f"{RING_MIN_CSA_MM2:g} mm²)")
    return True, ""


def exemption_problem(circuit: Circuit) -> str | None:
    """Why `overload_exempt` cannot be relied on for this circuit, or None."""
    kinds = sorted({ld.kind for ld in circuit.loads} & OVERLOADABLE_KINDS)
    if kinds:
        return f"it serves {', '.join(kinds)}, which can be overloaded"
    if circuit.is_submain:
        return "it is a sub-main, whose load can grow"
    if not circuit.loads and circuit.design_current_a is None:
        return "no load is listed"
    return None


def rcd_requirements(circuit: Circuit, domestic: bool = True) -> tuple[list[str], list[str]]:
    """(requirements, recommendations) for 30 mA additional protection, as clause texts."""
    required, advised = [], []
    if circuit.is_submain:
        return required, advised
    rating = circuit.device.rating_a
    kinds = {ld.kind for ld in circuit.loads}
    places = {ld.location for ld in circuit.loads}
    if "socket-outlets" in kinds and rating <= SOCKET_RCD_MAX_RATING_A:
        required.append(f"411.3.3(a) socket-outlets rated up to {SOCKET_RCD_MAX_RATING_A:g} A")
    if "bathroom" in places or "shower" in kinds:
        required.append("701.411.3.3 circuits of a location containing a bath or shower")
    if rating <= OUTDOOR_RCD_MAX_RATING_A and any(ld.location == "outdoor" and (ld.mobile or ld.kind == "socket-outlets")
                                                  for ld in circuit.loads):
        required.append(f"411.3.3(b) mobile equipment for use outdoors up to {OUTDOOR_RCD_MAX_RATING_A:g} A")
    concealed = concealed_cable_rule(circuit)
    if concealed is not None:
        (required if circuit.concealed_in_wall else advised).append(concealed)
    if "ev-charger" in kinds:
        required.append("722.531.3.101 each charging point")
    if domestic and "lighting" in kinds and not required:
        advised.append("411.3.4 luminaires of domestic premises (an improvement for an installation "
                       "designed to an earlier edition)")
    return required, advised


def concealed_cable_rule(circuit: Circuit) -> str | None:
    """The 522.6.202/203 text where it can apply to the circuit (required when
    `concealed_in_wall` is true, to be found out when it is not given), else None."""
    if circuit.concealed_in_wall is False or circuit.cable.kind in EARTHED_COVERING_KINDS:
        return None
    if circuit.concealed_in_wall:
        return ("522.6.202 cables concealed in a wall or partition at less than 50 mm without earthed "
                "covering or mechanical protection")
    return ("522.6.202 if its cables are concealed in a wall or partition at less than 50 mm without earthed "
            "covering or mechanical protection (set concealed_in_wall to say whether they are)")
