"""Let-through energy of an energy-limiting circuit-breaker, read from its class table."""
from __future__ import annotations

from typing import NamedTuple, Sequence


class LetThrough(NamedTuple):
    """What a class table says of the let-through energy I²t at one prospective current.

    `upper_a2s` bounds the class's limit at that current from above (None: the current is beyond
    the table); `lower_a2s` from beneath (None: below the first row nothing is published).
    `upper_row_a` / `lower_row_a` name the rows used (prospective current, A); `upper_row_a` is
    None where the upper bound is the straight line below the first row.
    """

    upper_a2s: float | None
    upper_row_a: float | None
    lower_a2s: float | None
    lower_row_a: float | None


def class_let_through(prospective_a: float, rows_a: Sequence[float], energies_a2s: Sequence[float],
                      ia_a: float | None = None, instantaneous_s: float | None = None) -> LetThrough:
    """Bounds of a class's maximum let-through energy at a prospective current.

    Parameters
    ----------
    prospective_a : prospective fault current, A (r.m.s.)
    rows_a : the table's prospective currents, A, ascending (e.g. 3000, 4500, 6000, 10000)
    energies_a2s : the class's maximum I²t at each row, A²s
    ia_a : current at the top of the instantaneous band (5 In type B, 10 In type C), A
    instantaneous_s : the time the product standard allows at `ia_a`, s (0.1)

    Returns
    -------
    LetThrough: between two rows, the row above bounds the limit from above and the row below
    from beneath (the limit grows with the prospective current). Below the first row, the
    straight line from (Ia, Ia² × t) to the first row bounds it from above; nothing bounds it
    from beneath. Above the last row only the last row (from beneath) is known.

    Notes
    -----
    BS EN 60898-1 and BS EN 61009-1 Annex ZA tabulate the maximum I²t of energy-limiting classes 2
    and 3 at the rated short-circuit capacities; BS 7671:2018 434.5.2 and 543.1.3 compare the
    let-through energy with k²S². The row bounds rely only on the limit growing with the
    prospective current. The straight line below the first row relies on the let-through energy
    growing at least in proportion to the prospective current between the instantaneous
    threshold, where the standard allows t ≤ 0.1 s (BS EN 60898-1 Table 7), and the first row:
    a derived bound, reported as such.
    """
    if len(rows_a) != len(energies_a2s) or not rows_a:
        raise ValueError("rows and energies must be non-empty and of equal length")
    first_a, first_e = rows_a[0], energies_a2s[0]
    if prospective_a <= first_a:
        if ia_a is not None and instantaneous_s is not None and ia_a < first_a and prospective_a >= ia_a:
            start_e = ia_a ** 2 * instantaneous_s
            line = start_e + (prospective_a - ia_a) * (first_e - start_e) / (first_a - ia_a)
            if prospective_a == first_a:
                return LetThrough(first_e, first_a, first_e, first_a)
            return LetThrough(line, None, None, None)
        if prospective_a == first_a:
            return LetThrough(first_e, first_a, first_e, first_a)
        return LetThrough(first_e, first_a, None, None)
    for i in range(1, len(rows_a)):
        if prospective_a <= rows_a[i]:
            if prospective_a == rows_a[i]:
                return LetThrough(energies_a2s[i], rows_a[i], energies_a2s[i], rows_a[i])
            return LetThrough(energies_a2s[i], rows_a[i], energies_a2s[i - 1], rows_a[i - 1])
    return LetThrough(None, None, energies_a2s[-1], rows_a[-1])


def withstand_a2s(k: float, csa_mm2: float) -> float:
    """The energy a conductor withstands adiabatically: k² S² (A²s).

    BS 7671:2018 434.5.2 (live conductors) and 543.1.3 (protective conductors): the let-through
    energy I²t of the device must not exceed k² S².
    """
    return (k * csa_mm2) ** 2
