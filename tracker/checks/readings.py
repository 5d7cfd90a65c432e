"""What a circuit's measured checks read: its latest readings at an inspection, with what that
inspection recorded at the origin, and how many circuits of the site carry the very same readings
(a record copied from circuit to circuit is not a measurement)."""
from __future__ import annotations

import datetime
from dataclasses import dataclass

from tracker.checks.result import NOT_ASSESSED
from tracker.model import Measurement, Site, rebuilt_by_constructor

# The checks on readings (SPEC §7). Each is listed on every circuit; where nothing was measured it
# says not-assessed with no figure, and that result does not count toward the circuit's status,
# its open problems or the remedy search: an unmeasured circuit is not a fault of its design, and
# a remedy that changes the cable or the device makes the old readings moot.
READING_CHECKS = frozenset({"measured-zs", "insulation-resistance", "rcd-operation", "continuity"})


def unmeasured(check) -> bool:
    """A reading check with nothing measured (a CheckResult, or its JSON dict)."""
    if isinstance(check, dict):
        return check["id"] in READING_CHECKS and check["status"] == NOT_ASSESSED and check["value"] is None
    return check.id in READING_CHECKS and check.status == NOT_ASSESSED and check.value is None


def counted(checks):
    """The checks that count toward a circuit's status (all but the unmeasured reading checks)."""
    return [c for c in checks if not unmeasured(c)]

# Identical non-zero R1+R2 and Zs on this many circuits of different modelled lengths or sizes is
# flagged as a copied record (common practice: two readings can agree; three that agree to the
# milliohm on different cables are not measurements).
COPIED_AT = 3


@rebuilt_by_constructor
@dataclass(frozen=True, slots=True)
class Readings:
    measurement: Measurement
    date: datetime.date          # the inspection's
    key: str                     # the inspection's key (its date, made unique)
    by: str
    ze_ohm: float | None         # Ze measured at that inspection
    test_temp_c: float
    copies: tuple[str, ...] = ()  # BOARD/CIRCUIT of the other circuits with the same readings (when flagged)


def latest_readings(site: Site) -> dict[str, Readings]:
    """BOARD/CIRCUIT → the readings of the latest inspection that measured the circuit."""
    out: dict[str, Readings] = {}
    for x in site.inspections:                     # oldest first: a later one replaces
        for m in x.results:
            out[m.ref] = Readings(m, x.date, x.key, x.by, x.ze_ohm, x.test_temp_c)
    return _flag_copies(site, out)


def _shape(site: Site) -> dict[str, tuple]:
    return {f"{c.board}/{c.id}": (c.cable.kind, c.cable.csa_mm2, c.cable.length_m, c.topology) for c in site.circuits}


def _flag_copies(site: Site, found: dict[str, Readings]) -> dict[str, Readings]:
    groups: dict[tuple, list[str]] = {}
    for ref, r in found.items():
        m = r.measurement
        if m.r1_r2_ohm and m.zs_ohm:
            groups.setdefault((r.key, m.r1_r2_ohm, m.zs_ohm), []).append(ref)
    shape = _shape(site)
    for refs in groups.values():
        if len(refs) >= COPIED_AT and len({shape.get(r) for r in refs}) > 1:
            for ref in refs:
                r = found[ref]
                found[ref] = Readings(r.measurement, r.date, r.key, r.by, r.ze_ohm, r.test_temp_c,
                                      tuple(x for x in refs if x != ref))
    return found
