"""IEC 60063 preferred values (the E series) and the standard value nearest a wanted one.

IEC 60063:2015 lists, per decade, 3 values for the E3 series, 6 for E6, 12 for E12, 24 for
E24, 48 for E48, 96 for E96 and 192 for E192. E3 to E24 are historic two-digit tables that
the rule below does not reproduce (2.7, 3.3, 3.9, 4.7, 8.2 ... are not 10^(i/N) rounded),
so they are written out; E3 and E6 are every fourth and every second E12 value. E48, E96
and E192 follow the rule "10^(i/N) rounded to three significant figures" throughout, but
for the one exception the standard makes, in E192 (9.20 where the rule gives 9.19). The tables here were written from memory and
cross-checked against several independent public copies of the standard's lists; the
standard's own text was not at hand.
"""

from __future__ import annotations

import math
from typing import Callable

import numpy as np

E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)
"""The E12 series (±10 % parts), one decade, as IEC 60063:2015 publishes it."""

E24 = (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
       3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1)
"""The E24 series (±5 % parts), one decade, as IEC 60063:2015 publishes it."""

E96 = (1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30,
       1.33, 1.37, 1.40, 1.43, 1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74,
       1.78, 1.82, 1.87, 1.91, 1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32,
       2.37, 2.43, 2.49, 2.55, 2.61, 2.67, 2.74, 2.80, 2.87, 2.94, 3.01, 3.09,
       3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74, 3.83, 3.92, 4.02, 4.12,
       4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23, 5.36, 5.49,
       5.62, 5.76, 5.90, 6.04, 6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32,
       7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76)
"""The E96 series (±1 % parts), one decade, as IEC 60063:2015 publishes it."""

E48 = E96[::2]
"""The E48 series (±2 % parts): every other E96 value, as IEC 60063:2015 lists it."""

E6 = E12[::2]
"""The E6 series (±20 % parts): every other E12 value, as IEC 60063:2015 lists it."""

E3 = E12[::4]
"""The E3 series (above ±20 %): every fourth E12 value, as IEC 60063:2015 lists it."""


def rule_values(n: int) -> tuple:
    """One decade of the rule-built series E``n``: 10^(i/n) to three significant figures.

    Parameters
    ----------
    n : int
        Values per decade (48, 96, 192).

    Returns
    -------
    tuple of float
        The mantissas in [1, 10), ascending, before any exception the standard makes.
    """
    # Integers in hundredths avoid a float landing a hair below a rounding boundary.
    return tuple(int(math.floor(100 * 10 ** (i / n) + 0.5)) / 100 for i in range(n))


E192 = tuple(9.20 if v == 9.19 else v for v in rule_values(192))
"""The E192 series (±0.5 % parts and better): the rule with the standard's one exception."""

SERIES = {"E3": E3, "E6": E6, "E12": E12, "E24": E24, "E48": E48, "E96": E96, "E192": E192}
"""Series name -> one decade of mantissas in [1, 10), ascending."""

SERIES_TOLERANCE = {"E3": 0.40, "E6": 0.20, "E12": 0.10, "E24": 0.05, "E48": 0.02, "E96": 0.01, "E192": 0.005}
"""The tolerance each series is usually bought with (fraction); IEC 60063:2015 pairs them."""


def _mantissas(series: str) -> np.ndarray:
    try:
        return np.asarray(SERIES[series])
    except KeyError:
        raise ValueError(f"unknown E series {series!r}; choose one of {', '.join(SERIES)}") from None


def _check_value(value: float) -> None:
    if not (value > 0 and math.isfinite(value)):
        raise ValueError(f"a standard value is wanted near {value!r}; only positive finite values have one")


def values_between(series: str, lo: float, hi: float) -> np.ndarray:
    """Every value of ``series`` from ``lo`` to ``hi`` inclusive, in SI units, ascending.

    Parameters
    ----------
    series : str
        ``one of :data:`SERIES`.
    lo, hi : float
        The range, in the part's unit (Ω, F, H ...); both positive.
    """
    _check_value(lo)
    _check_value(hi)
    m = _mantissas(series)
    decades = np.arange(math.floor(math.log10(lo)) - 1, math.floor(math.log10(hi)) + 2)
    # Rounding each product keeps 4.7e3 a clean 4700.0 instead of 4700.000000000001.
    vals = np.array([float(f"{v:.3e}") for v in (m[None, :] * 10.0 ** decades[:, None]).ravel()])
    return vals[(vals >= lo * (1 - 1e-12)) & (vals <= hi * (1 + 1e-12))]


def _ladder(series: str, value: float) -> np.ndarray:
    """Series values spanning a decade either side of ``value``."""
    return values_between(series, value / 10.0, value * 10.0)


def nearest(value: float, series: str) -> float:
    """The value of ``series`` nearest ``value`` on a logarithmic scale (ratio, not difference).

    Parameters
    ----------
    value : float
        Positive value in SI units.
    series : str
        ``one of :data:`SERIES`.

    Returns
    -------
    float
        The preferred value, in the same unit.
    """
    _check_value(value)
    ladder = _ladder(series, value)
    return float(ladder[np.argmin(np.abs(np.log(ladder / value)))])


def nearest_meeting(value: float, series: str, meets: Callable[[float], bool], direction: int,
                    max_steps: int = 6) -> float | None:
    """The series value nearest ``value`` on the side that meets a target, checked.

    Parameters
    ----------
    value : float
        The exact value that just meets the target (SI units).
    series : str
        ``one of :data:`SERIES`.
    meets : callable
        ``meets(x) -> bool``: whether the design with this part at ``x`` meets the target.
    direction : int
        +1 if values above ``value`` meet the target, −1 if values below do.
    max_steps : int
        How many series steps beyond ``value`` to try before giving up.

    Returns
    -------
    float or None
        The first series value, going from ``value`` in ``direction``, for which ``meets``
        holds; None if none of ``max_steps`` does (the target is then met only in a narrow
        window, or not robustly).
    """
    _check_value(value)
    if direction not in (1, -1):
        raise ValueError("direction must be +1 or -1")
    ladder = _ladder(series, value)
    tol = 1e-12 * value
    side = ladder[ladder >= value - tol] if direction > 0 else ladder[ladder <= value + tol][::-1]
    for candidate in side[:max_steps]:
        if meets(float(candidate)):
            return float(candidate)
    return None


LOG_STEPS_PER_DECADE = 24
"""Steps a decade for a value bought from no series (β, V_A, a rail): 10^(i/24) to three
significant figures, about 10 % apart (common practice, no source)."""


def _grid(series: str | None) -> tuple:
    return rule_values(LOG_STEPS_PER_DECADE) if series is None else tuple(_mantissas(series))


def _grid_value(mantissas: tuple, n: int) -> float:
    decade, i = divmod(n, len(mantissas))
    return float(f"{mantissas[i] * 10.0 ** decade:.3e}")


def step_value(value: float, steps: int, series: str | None = None, *, decade: bool = False) -> float:
    """The value ``steps`` places from ``value`` along its series, or a whole decade per step.

    A value between two series values goes first to its neighbour on the side of the step,
    so a step up and a step down come back to a series value.

    Parameters
    ----------
    value : float
        The value now, in its SI unit (Ω, F, H, V ...); non-zero. A negative value steps by
        its size and keeps its sign.
    steps : int
        Places to move: positive up, negative down.
    series : str, optional
        One of :data:`SERIES`; None steps on :data:`LOG_STEPS_PER_DECADE` equal ratios a decade.
    decade : bool
        Step by a factor of ten per step instead (the mantissa as written is kept).

    Returns
    -------
    float
        The new value, same unit and sign.
    """
    size = abs(value)
    _check_value(size)
    sign = math.copysign(1.0, value)
    if decade:
        return sign * float(f"{size * 10.0 ** steps:.12g}")
    mantissas = _grid(series)
    per = len(mantissas)
    first = (math.floor(math.log10(size)) - 1) * per
    # The nearest series places at or below and at or above the value (equal when on it).
    index = range(first, first + 3 * per)
    below = max(n for n in index if _grid_value(mantissas, n) <= size * (1 + 1e-9))
    above = min(n for n in index if _grid_value(mantissas, n) >= size * (1 - 1e-9))
    return sign * _grid_value(mantissas, (below if steps > 0 else above) + steps)
