"""The calculation engine: pure functions of plain numbers, one per published method.

No I/O, no model objects: units are in the argument names. The checks in `tracker.checks`
call these and turn their results into verdicts with working shown.
"""
