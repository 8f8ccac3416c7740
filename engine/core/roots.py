"""A bracketing root finder for the corners: Brent's method.

R. P. Brent, Algorithms for Minimization without Derivatives, Prentice-Hall, 1973, ch. 4:
inverse quadratic interpolation or a secant step where it stays inside the bracket and
shrinks it fast enough, bisection otherwise. Written here (in the form scipy's ``brentq``
takes, so its tolerances mean the same) because importing scipy.optimize costs more than
every corner of an analysis together.
"""

from __future__ import annotations

import math

MAX_ITERATIONS = 100
"""Steps before the search gives up and returns its best point."""


def brent_root(f, a: float, b: float, xtol: float, rtol: float) -> float:
    """A root of ``f`` between ``a`` and ``b``, where ``f`` changes sign.

    Parameters
    ----------
    f : callable
        f(x) -> float, continuous on [a, b]; x in the caller's unit (log10 of Hz, say).
    a, b : float
        The bracket, in x's own unit (dimensionless for log10 of Hz); f(a) and f(b) must
        differ in sign (or one be 0).
    xtol, rtol : float
        The root is returned once the bracket is within xtol + rtol·|x| (xtol in x's own
        unit, rtol a fraction).

    Returns
    -------
    float
        The root, in the unit of x.

    Raises
    ------
    ValueError
        When f(a) and f(b) have the same sign.
    """
    xpre, xcur = float(a), float(b)
    fpre, fcur = f(xpre), f(xcur)
    if fpre == 0:
        return xpre
    if fcur == 0:
        return xcur
    if math.copysign(1.0, fpre) == math.copysign(1.0, fcur):
        raise ValueError("f(a) and f(b) must have different signs")
    xblk = fblk = spre = scur = 0.0
    for _ in range(MAX_ITERATIONS):
        if fpre != 0 and fcur != 0 and math.copysign(1.0, fpre) != math.copysign(1.0, fcur):
            xblk, fblk = xpre, fpre
            spre = scur = xcur - xpre
        if abs(fblk) < abs(fcur):
            xpre, xcur, xblk = xcur, xblk, xcur
            fpre, fcur, fblk = fcur, fblk, fcur
        delta = (xtol + rtol * abs(xcur)) / 2
        sbis = (xblk - xcur) / 2
        if fcur == 0 or abs(sbis) < delta:
            return xcur
        if abs(spre) > delta and abs(fcur) < abs(fpre):
            if xpre == xblk:
                stry = -fcur * (xcur - xpre) / (fcur - fpre)
            else:
                dpre = (fpre - fcur) / (xpre - xcur)
                dblk = (fblk - fcur) / (xblk - xcur)
                stry = -fcur * (fblk * dblk - fpre * dpre) / (dblk * dpre * (fblk - fpre))
            if 2 * abs(stry) < min(abs(spre), 3 * abs(sbis) - delta):
                spre, scur = scur, stry
            else:
                spre = scur = sbis
        else:
            spre = scur = sbis
        xpre, fpre = xcur, fcur
        xcur += scur if abs(scur) > delta else (delta if sbis > 0 else -delta)
        fcur = f(xcur)
    return xcur
