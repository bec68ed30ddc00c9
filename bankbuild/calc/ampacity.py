"""Conductor ampacity after correction, and the rules that tie a protective device to its conductor.

Pure arithmetic on floats and small tuples; the tables themselves come from the rule basis.
"""

from __future__ import annotations

from dataclasses import dataclass

EPS = 1e-6


def step_factor(rows: list[tuple[float, float]], value: float) -> float | None:
    """The factor of the first ``(up_to, factor)`` row whose ``up_to`` reaches ``value``; ``None`` beyond.

    Correction tables are printed as ranges ("31–35 °C: 0.94"); a row ``(35, 0.94)`` stands for the range
    that ends at 35 and starts above the previous row's end.

    Parameters
    ----------
    rows : list of (float, float)
        Rows in rising order of ``up_to`` (an ambient in °C or a count).
    value : float
        The ambient [°C] or the count [-].

    Returns
    -------
    float or None
        The factor [-], or ``None`` when ``value`` is beyond the table.

    Examples
    --------
    NEC Table 310.15(B)(1), 75 °C column (from memory): 45 °C → 0.82, 41 °C → 0.82, 40 °C → 0.88.

    >>> rows = [(30, 1.0), (35, 0.94), (40, 0.88), (45, 0.82), (50, 0.75)]
    >>> step_factor(rows, 45.0), step_factor(rows, 41.0), step_factor(rows, 40.0), step_factor(rows, 51.0)
    (0.82, 0.82, 0.88, None)
    """
    for up_to, factor in rows:
        if value <= up_to + EPS:
            return float(factor)
    return None


def corrected_ampacity_a(table_a: float, ambient_factor: float, grouping_factor: float, sets: int = 1) -> float:
    """Ampacity of ``sets`` conductors in parallel after ambient and grouping factors [A].

    Two sets of 4/0 AWG at 90 °C (260 A, NEC Table 310.16) at 45 °C (0.87) with six conductors (0.80):

    >>> corrected_ampacity_a(260.0, 0.87, 0.8, 2)
    361.92
    """
    return round(sets * table_a * ambient_factor * grouping_factor, 6)


def is_standard_rating(value_a: float, ratings_a: list[float]) -> bool:
    """Whether ``value_a`` equals one of the standard ratings (to a millionth of an ampere).

    >>> is_standard_rating(175.0, [150, 175, 200]), is_standard_rating(174.3, [150, 175, 200])
    (True, False)
    """
    return any(abs(value_a - r) <= EPS for r in ratings_a)


def next_rating_above(value_a: float, ratings_a: list[float]) -> float | None:
    """The smallest standard rating strictly above ``value_a``; ``None`` when none is.

    >>> next_rating_above(174.3, [150, 175, 200]), next_rating_above(175.0, [150, 175, 200])
    (175.0, 200.0)
    """
    above = [float(r) for r in ratings_a if r > value_a + EPS]
    return min(above) if above else None


@dataclass(frozen=True)
class NextSizeUp:
    """The verdict of the next-size-up rule for one device and one conductor, and which sub-rule decided."""

    ok: bool
    sub_rule: str  # "device ≤ ampacity" | "(B)" | "(B)(2)" | "(B)(3)" | "(C)" | "next rating"
    reason: str


def next_size_up(device_a: float, ampacity_a: float, ratings_a: list[float], max_a: float) -> NextSizeUp:
    """NEC 240.4(B)/(C): may a device of ``device_a`` protect a conductor of ``ampacity_a``?

    Parameters
    ----------
    device_a : float
        Rating of the protective device [A].
    ampacity_a : float
        Conductor ampacity after every correction and the termination limit [A].
    ratings_a : list of float
        The standard ratings (NEC 240.6(A)) of the device kind [A].
    max_a : float
        The largest device the allowance covers (800 A in NEC 240.4(B)(3)) [A].

    Returns
    -------
    NextSizeUp
        ``ok`` and the sub-rule that decided: ``device ≤ ampacity``; ``(B)`` the allowance holds; ``(B)(2)``
        refused because the ampacity is itself a standard rating; ``(C)`` refused above ``max_a`` (the
        allowance of (B)(3) ends there);
        ``next rating`` refused because the device is above the next standard rating.

    Notes
    -----
    240.4(B)(1) (not a multi-outlet branch circuit for cord-and-plug portable loads) always holds for a
    capacitor circuit.

    Examples
    --------
    NEC 240.4(B)(2): a 175 A conductor takes at most a 175 A device; 240.4(B): 174.3 A takes 175 A.

    >>> ladder = [150, 175, 200, 225, 250, 800, 1000]
    >>> next_size_up(200, 175, ladder, 800).sub_rule, next_size_up(175, 174.3, ladder, 800).sub_rule
    ('(B)(2)', '(B)')
    >>> next_size_up(1000, 900, ladder, 800).sub_rule
    '(C)'
    """
    if device_a <= ampacity_a + EPS:
        return NextSizeUp(True, "device ≤ ampacity", f"device {device_a:g} A ≤ ampacity {ampacity_a:g} A")
    if is_standard_rating(ampacity_a, ratings_a):
        return NextSizeUp(False, "(B)(2)", f"ampacity {ampacity_a:g} A is itself a standard rating, so no larger "
                                           f"device than {ampacity_a:g} A may protect it")
    if device_a > max_a + EPS:
        return NextSizeUp(False, "(C)", f"device {device_a:g} A is above {max_a:g} A, where the ampacity must be "
                                      f"≥ the device rating")
    above = next_rating_above(ampacity_a, ratings_a)
    if above is not None and device_a <= above + EPS:
        return NextSizeUp(True, "(B)", f"device {device_a:g} A is the next standard rating above ampacity "
                                       f"{ampacity_a:g} A, which is not itself a standard rating (≤ {max_a:g} A)")
    return NextSizeUp(False, "next rating", f"device {device_a:g} A is above the next standard rating "
                                            f"({above:g} A) over ampacity {ampacity_a:g} A" if above else
                      f"no standard rating above ampacity {ampacity_a:g} A")


def conventional_current_ok(device_a: float, i2_factor: float, ampacity_a: float, ratio: float = 1.45) -> bool:
    """IEC 60364-4-43 433.1: I_n ≤ I_z and I_2 ≤ 1.45 I_z.

    Parameters
    ----------
    device_a : float
        Rated current I_n of the device [A].
    i2_factor : float
        Conventional operating current over the rated current, I_2 / I_n [-].
    ampacity_a : float
        Current-carrying capacity I_z after correction [A].
    ratio : float
        The 1.45 of 433.1 [-].

    Examples
    --------
    A 125 A gG fuse (I_2 = 1.6 I_n = 200 A) needs I_z ≥ 200 / 1.45 = 137.9 A (IEC 60364-4-43 433.1):

    >>> conventional_current_ok(125, 1.6, 138.0), conventional_current_ok(125, 1.6, 137.8)
    (True, False)
    """
    return device_a <= ampacity_a + EPS and i2_factor * device_a <= ratio * ampacity_a + EPS
