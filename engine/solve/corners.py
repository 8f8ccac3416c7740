"""The exact corners: a wide sweep of the full network and root finding on log f."""

from __future__ import annotations

import math

import numpy as np

from ..core.roots import brent_root
from ..network.elements import Capacitor, Inductor, Resistor
from .response import frequency_response, is_dense

SETTLED = 1e-3
"""A sweep end is settled when |H| changes by less than this fraction of its peak over a decade."""
MAX_EXTRA_DECADES = 8
"""How far a sweep may grow past its first span at each end, in decades."""
FIRST_STEP = 1e-7
"""Decades: the first step outward from the mid band when looking for a corner. The steps
double until they reach the sweep's spacing, so a band as narrow as a tank of Q = 10⁶ is
not stepped over."""


def points_per_decade(system) -> int:
    """Sweep density: fine where a batched dense solve is cheap, coarser where each point is an LU.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    """
    return 20 if is_dense(system) else 8


def first_span(circuit) -> tuple[float, float]:
    """A frequency span (Hz) that the element values suggest, at least four decades wide.

    Every R·C and L/R that the parts could form lies within it; the sweep then grows at
    each end until the response settles, which covers time constants that gain multiplies.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    """
    els = circuit.elements.values()
    rs = [el.value for el in els if isinstance(el, Resistor)] or [1.0]
    r_lo, r_hi = min(rs), max(rs)
    cs = [el.value for el in els if isinstance(el, Capacitor)]
    ls = [el.value for el in els if isinstance(el, Inductor)]
    taus = ([min(cs) * r_lo, max(cs) * r_hi] if cs else []) + ([min(ls) / r_hi, max(ls) / r_lo] if ls else [])
    if not taus:
        return 1.0, 1e4
    lo, hi = 1 / (2 * math.pi * max(taus)), 1 / (2 * math.pi * min(taus))
    centre = math.sqrt(lo * hi)
    half = max(2.0, math.log10(hi / lo) / 2 + 1.0)
    return centre * 10 ** -half, centre * 10 ** half


def wide_sweep(system, span, per_decade: int):
    """Exact response on a log sweep that starts on ``span`` and grows until both ends settle.

    The low end has settled when |H| is within :data:`SETTLED` of the peak from the exact
    d.c. gain; the high end when |H| no longer moves by that much over the last decade.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    span : (float, float)
        The first span, Hz (see :func:`first_span`).
    per_decade : int
        Sweep points per decade.

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        Frequencies (Hz, rising) and the complex response there.
    """
    lo, hi = span
    n = max(2, int(round(per_decade * math.log10(hi / lo))) + 1)
    f = np.geomspace(lo, hi, n)
    H = frequency_response(system, f)
    dc = abs(frequency_response(system, [0.0])[0])
    decade = np.geomspace(1.0, 10.0, per_decade + 1)[1:]
    for _ in range(MAX_EXTRA_DECADES):
        peak = max(np.abs(H).max(), dc)
        low_done = abs(abs(H[0]) - dc) <= SETTLED * peak
        high_done = abs(abs(H[-1]) - abs(H[-1 - per_decade])) <= SETTLED * peak if len(H) > per_decade else False
        if low_done and high_done:
            break
        if not low_done:
            fl = f[0] / decade[::-1]
            f, H = np.concatenate((fl, f)), np.concatenate((frequency_response(system, fl), H))
        if not high_done:
            fh = f[-1] * decade
            f, H = np.concatenate((f, fh)), np.concatenate((H, frequency_response(system, fh)))
    return f, H


def _magnitude(system, f: float) -> float:
    return float(abs(frequency_response(system, [f])[0]))


def refine_peak(system, f: np.ndarray, H: np.ndarray, near: float) -> float:
    """Hz of the exact maximum of |H| around the sweep sample nearest ``near``'s local peak.

    Between the sample's neighbours |H| is searched on log f (bounded Brent), so a narrow
    peak that falls between two samples is found where it is, not where a sample happens to be.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
        The full network.
    f : numpy.ndarray
        Sweep frequencies, Hz, rising.
    H : numpy.ndarray
        The exact response there (gain unit).
    near : float
        Hz; the local peak uphill from the sample nearest it is refined.

    Returns
    -------
    float
        Hz of the peak.
    """
    mag = np.abs(H)
    i = int(np.argmin(np.abs(np.log(f / near))))
    while 0 < i and mag[i - 1] > mag[i]:
        i -= 1
    while i < len(f) - 1 and mag[i + 1] > mag[i]:
        i += 1
    lo, hi = math.log10(f[max(i - 1, 0)]), math.log10(f[min(i + 1, len(f) - 1)])
    if hi <= lo:
        return float(f[i])
    # Only a band narrower than the sweep's spacing comes here; scipy.optimize is imported then.
    from scipy.optimize import minimize_scalar

    best = minimize_scalar(lambda x: -_magnitude(system, 10.0 ** x), bounds=(lo, hi), method="bounded",
                           options={"xatol": 1e-12})
    return float(10.0 ** best.x) if -best.fun > mag[i] else float(f[i])


def midband_guess(system, f: np.ndarray, H: np.ndarray) -> float:
    """Hz: the mid band :func:`midband_between` gives for corners 3 dB below the sweep's peak.

    It is the rule each band-test round applies with |A_m| in place of the peak, so where
    the two levels fall between the same sweep samples the first round is already settled.
    When no other sweep sample lies within 3 dB of the peak (a band narrower than the
    sweep's spacing), the exact peak (:func:`refine_peak`) is the mid band.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    f : numpy.ndarray
        Sweep frequencies, Hz, rising.
    H : numpy.ndarray
        The complex response there (gain unit).
    """
    mag = np.abs(H)
    top = int(np.argmax(mag))
    level = mag[top] / math.sqrt(2)
    near = (top > 0 and mag[top - 1] >= level) or (top < len(mag) - 1 and mag[top + 1] >= level)
    if not near:
        return refine_peak(system, f, H, float(f[top]))
    return midband_between(*brackets(f, H, float(f[top]), level), float(f[top]), f)


def midband_between(low_bracket, high_bracket, current: float, f: np.ndarray) -> float:
    """Hz: √(f_L·f_H), each corner taken as the geometric middle of its sweep bracket.

    Parameters
    ----------
    low_bracket, high_bracket : (float, float) or None
        Hz, from :func:`brackets`.
    current : float
        Hz, the mid band so far: kept when neither side has a corner.
    f : numpy.ndarray
        Sweep frequencies, Hz, rising: the result stays within them.

    Returns
    -------
    float
        Hz. Without a lower corner the mid band reaches down to d.c. and is taken two
        decades below f_H; without an upper one, two decades above f_L.
    """
    f_low = math.sqrt(low_bracket[0] * low_bracket[1]) if low_bracket else None
    f_high = math.sqrt(high_bracket[0] * high_bracket[1]) if high_bracket else None
    if f_low and f_high:
        nxt = math.sqrt(f_low * f_high)
    elif f_high:
        nxt = f_high / 100
    elif f_low:
        nxt = f_low * 100
    else:
        nxt = current
    return min(max(nxt, f[0]), f[-1])


def brackets(f: np.ndarray, H: np.ndarray, f_mid: float, level: float):
    """Sweep intervals holding the corners nearest ``f_mid`` below and above it.

    Starts at the sweep point nearest ``f_mid`` at which |H| ≥ ``level`` and walks outward
    to the first point where |H| < ``level``.

    Parameters
    ----------
    f : numpy.ndarray
        Sweep frequencies, Hz, rising.
    H : numpy.ndarray
        The complex response there (gain unit).
    f_mid : float
        A mid-band frequency, Hz.
    level : float
        |A_m|/√2, gain unit.

    Returns
    -------
    (tuple or None, tuple or None)
        (f_a, f_b) in Hz, rising, for the lower and the upper corner; None where the sweep
        never falls to ``level`` on that side.
    """
    mag = np.abs(H)
    above = np.flatnonzero(mag >= level)
    if above.size == 0:
        return None, None
    start = int(above[np.argmin(np.abs(np.log(f[above] / f_mid)))])

    def walk(step):
        i = start
        while 0 <= i + step < len(f):
            if mag[i + step] < level:
                return tuple(sorted((float(f[i]), float(f[i + step]))))
            i += step
        return None

    return walk(-1), walk(+1)


def corner(system, bracket, level: float) -> float | None:
    """Frequency (Hz) in ``bracket`` where the exact |H| equals ``level``: Brent's method on log f.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    bracket : (float, float) or None
        Hz, from :func:`brackets`.
    level : float
        |A_m|/√2, gain unit.
    """
    if bracket is None:
        return None

    def g(logf):
        return abs(frequency_response(system, [10.0 ** logf])[0]) - level

    return 10.0 ** brent_root(g, math.log10(bracket[0]), math.log10(bracket[1]), xtol=1e-13, rtol=1e-13)


def _outward(system, f: np.ndarray, mag: np.ndarray, start: float, level: float, step: int):
    """The bracket of the first fall below ``level`` going from ``start`` in direction ``step`` (±1)."""
    spacing = math.log10(f[1] / f[0]) if len(f) > 1 else 1.0
    ramp = FIRST_STEP * 2.0 ** np.arange(max(1, int(math.ceil(math.log2(spacing / FIRST_STEP))) + 1))
    near = start * 10.0 ** (step * ramp[ramp <= spacing])
    beyond = f > near[-1] if step > 0 else f < near[-1]
    points = np.concatenate((near, f[beyond][::step]))
    values = np.concatenate((np.abs(frequency_response(system, near)), mag[beyond][::step]))
    below = np.flatnonzero(values < level)
    if below.size == 0:
        return None
    k = int(below[0])
    inner = start if k == 0 else float(points[k - 1])
    return tuple(sorted((inner, float(points[k]))))


def corners_around(system, f: np.ndarray, H: np.ndarray, f_mid: float, level: float):
    """The exact corners (Hz) nearest ``f_mid`` below and above it, found outward from it.

    From ``f_mid`` (or, where |H| is already below ``level`` there, from the exact peak near
    it; failing that, from the nearest sweep point above the level) the search steps outward, first by :data:`FIRST_STEP` decades and doubling, then on
    the sweep's own samples, to the first point below ``level``; Brent's method refines the corner
    between that point and the one before. None on a side where the gain never falls that far.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    f, H, f_mid, level
        As for :func:`brackets`: the sweep (Hz) and its response, a mid-band frequency (Hz)
        and |A_m|/√2 (gain unit).

    Returns
    -------
    (float or None, float or None)
        The lower and the upper corner, Hz.
    """
    start = f_mid
    if _magnitude(system, start) < level:
        start = refine_peak(system, f, H, f_mid)
    if _magnitude(system, start) < level:
        # The exact gain stays below the resistive mid-band gain's −3 dB level around f_mid
        # (the bands overlap): the nearest sweep points above the level are the places to start.
        return tuple(corner(system, b, level) for b in brackets(f, H, f_mid, level))
    mag = np.abs(H)
    return tuple(corner(system, _outward(system, f, mag, start, level, step), level) for step in (-1, +1))


def second_order_corner(b1: float, b2: float) -> float | None:
    """Upper corner (Hz) of 1/(1 + b1·s + b2·s²): the root of (1 − b2ω²)² + (b1ω)² = 2.

    With u = ω², b2²u² + (b1² − 2b2)u − 1 = 0 has one positive root, written here in the
    form without cancellation.

    Parameters
    ----------
    b1 : float
        s.
    b2 : float
        s².
    """
    if b1 <= 0 and b2 <= 0:
        return None
    a = b1 * b1 - 2 * b2
    u = 2.0 / (a + math.sqrt(a * a + 4 * b2 * b2))
    return math.sqrt(u) / (2 * math.pi)
