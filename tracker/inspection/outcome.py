"""An inspection's outcome: unsatisfactory while any C1, C2 or FI observation is open."""
from __future__ import annotations

import datetime

from tracker.model import Inspection, Observation

SATISFACTORY, UNSATISFACTORY = "satisfactory", "unsatisfactory"
# C1 danger present, C2 potentially dangerous, FI further investigation without delay: each makes
# the installation's condition unsatisfactory until dealt with; C3 (improvement recommended) does
# not (BS 7671 classification codes, as used in condition reporting; common practice).
OPEN_MAKES_UNSATISFACTORY = ("C1", "C2", "FI")


def is_open(o: Observation, on: datetime.date) -> bool:
    """Not yet done on the day `on` (work completed later than `on` was still open then)."""
    return o.done_on is None or o.done_on > on


def outcome(inspection: Inspection, on: datetime.date) -> str:
    for o in inspection.observations:
        if o.code in OPEN_MAKES_UNSATISFACTORY and is_open(o, on):
            return UNSATISFACTORY
    return SATISFACTORY
