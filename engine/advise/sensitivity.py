"""Relative sensitivities of the corners and the gain to every part value, by adjoint solves.

For each part value x (a resistance, a capacitance, a g_m ...) this module gives
d ln f / d ln x — "a 1 % rise in x moves f by this many per cent" — for the estimated and
the exact upper and lower corners, and d ln |A_m| / d ln x for the mid-band gain.

Estimates (method notes §7). With X = G⁻¹E and Y = G⁻ᵀE for the port columns E, a change
of a stamp coefficient p_k with pattern P_k changes the port matrix by dZ = −Yᵀ P_k X, so
b1 = Σ D_j Z_jj gives ∂b1/∂p_k = −Σ_ab P_k[a,b] (X D Yᵀ)[b,a], and ∂b1/∂D_j = Z_jj. One
solve set each for X and Y serves every part. The lower-corner estimate moves with each
low-band port's pole (the diagonal of W⁻¹, W = D Z) and zero (:func:`_low_estimate`).

Exact corners. A corner f solves F = ln|H(j2πf)| − ln|A_m| + ½ ln 2 = 0, so by the implicit
function theorem d ln f / d ln p = −(∂F/∂ln p) / (∂F/∂ln f). With x = A⁻¹b and y = A⁻ᵀc for
A = G + jωC, ∂H/∂p_k = −yᵀ(P_Gk + jω P_Ck)x and ∂H/∂ln ω = −jω yᵀCx; A_m likewise from the
mid-band matrices. Both are analytic; the tests check them against central differences of
the full analysis.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Mapping

import numpy as np

from ..core.band import Band
from ..network.elements import Capacitor, Inductor, Resistor
from ..solve.lowcorner import section_corner
from ..solve.mna import OPEN, build_system
from .biasslopes import bias_slopes
from .partvalues import PartValue, parametric_system, part_values
from ..solve.timeconstants import CUT_OFF, port_columns, port_weights

FIGURES = ("high_exact", "high_estimate", "low_exact", "low_estimate", "gain")
"""The figures a :class:`Sensitivity` row holds, by attribute name."""

FIGURE_TITLES = MappingProxyType({
    "high_exact": "f_H exact", "high_estimate": "f_H estimated",
    "low_exact": "f_L exact", "low_estimate": "f_L estimated", "gain": "|A_m|",
})


@dataclass(frozen=True)
class Sensitivity:
    """How one part value moves each figure; every entry is d ln(figure) / d ln(value).

    Dimensionless: +1 means the figure rises in proportion to the value, −0.5 that a 1 %
    rise in the value lowers the figure by 0.5 %. None where the design has no such figure.

    Attributes
    ----------
    value : PartValue
        The part value (element, part, label, unit, nominal).
    high_exact, high_estimate : float or None
        Of the exact upper corner, and of the open-circuit estimate 1/(2π b1).
    low_exact, low_estimate : float or None
        Of the exact lower corner, and of the short-circuit estimate ω_L/(2π).
    gain : float or None
        Of the resistive mid-band gain magnitude |A_m| (None only where it cannot be
        computed; :attr:`Sensitivities.notes` says why).
    """

    value: PartValue
    high_exact: float | None
    high_estimate: float | None
    low_exact: float | None
    low_estimate: float | None
    gain: float | None


@dataclass(frozen=True)
class Sensitivities:
    """Sensitivities of every part value of a design.

    Attributes
    ----------
    rows : tuple of Sensitivity
        In circuit order.
    notes : Mapping[str, str]
        Figure (one of :data:`FIGURES`) -> why none of its sensitivities could be computed
        (the network it is worked out on is singular); its entries in ``rows`` are None.
    through_bias : bool
        Whether blocks are biased from the circuit. Then a part value in the DC network (a
        bias resistor) counts its effect through the operating point as well, while the rows
        of the derived values (g_m, r_π ...) hold the operating point fixed.
    """

    rows: tuple
    notes: Mapping[str, str] = field(default_factory=lambda: MappingProxyType({}))
    through_bias: bool = False

    def ranked(self, figure: str = "high_exact") -> tuple:
        """Rows with a value for ``figure`` (one of :data:`FIGURES`), largest magnitude first."""
        if figure not in FIGURES:
            raise ValueError(f"unknown figure {figure!r}; choose one of {', '.join(FIGURES)}")
        have = [r for r in self.rows if getattr(r, figure) is not None]
        return tuple(sorted(have, key=lambda r: -abs(getattr(r, figure))))

    def by_part(self) -> Mapping[str, tuple]:
        """Part name -> its rows (a transistor groups its g_m, r_π, C_π ...), in circuit order."""
        out: dict = {}
        for r in self.rows:
            out.setdefault(r.value.part, []).append(r)
        return MappingProxyType({k: tuple(v) for k, v in out.items()})


def _coefficient_sign(circuit, names) -> np.ndarray:
    """d ln p / d ln x: −1 for a resistor (p = 1/R), +1 for every other value."""
    return np.array([-1.0 if isinstance(circuit.elements[n], Resistor) else 1.0 for n in names])


def _pattern_terms(patterns: np.ndarray, M: np.ndarray) -> np.ndarray:
    """Σ_ab P_k[a,b] M[b,a] for every pattern k."""
    return np.einsum("kab,ba->k", patterns, M)


def _port_solves(system, elements):
    """Port columns E, weights D, and the direct and adjoint solves G⁻¹E, G⁻ᵀE."""
    E, D = port_columns(system, elements, dense=True), port_weights(elements)
    G = system.dense_G
    return E, D, np.linalg.solve(G, E), np.linalg.solve(G.T, E)


def _high_estimate(mid_sys, mid_ps, high, coef, sign, names):
    if not high:
        return None
    E, D, X, Y = _port_solves(mid_sys, high)
    z = np.einsum("ij,ij->j", E, X)
    b1 = float(D @ z)
    if not b1 > 0:
        return None
    d_b1 = -_pattern_terms(mid_ps.G_patterns, (X * D) @ Y.T) * coef * sign
    at = {el.name: j for j, el in enumerate(high)}
    for k, n in enumerate(names):
        if n in at:
            d_b1[k] += D[at[n]] * z[at[n]]
    return -d_b1 / b1


def _bordered_gain(G, b, c, U, patterns, scale):
    """The gain of the network ``G`` with the ports ``U`` at infinite value, and d ln|H| / d ln x
    (None where the gain is zero).

    Infinite value is the constraint Uᵀx = 0 (no voltage across a capacitor, no current in an
    inductor), held by one multiplier per port; the part values' patterns stay those of ``G``.
    """
    n, m = G.shape[0], U.shape[1]
    K = np.zeros((n + m, n + m))
    K[:n, :n], K[:n, n:], K[n:, :n] = G, U, U.T
    rhs, sel = np.concatenate((b, np.zeros(m))), np.concatenate((c, np.zeros(m)))
    x, y = np.linalg.solve(K, rhs), np.linalg.solve(K.T, sel)
    gain = float(sel @ x)
    if gain == 0:
        return gain, None
    return gain, -np.einsum("kab,a,b->k", patterns, y[:n], x[:n]) * scale / gain


def _low_estimate(circuit, states, low, names, coef, sign):
    """d ln f_L / d ln x of the section estimate (:mod:`bandsketch.engine.solve.lowcorner`).

    Each port's pole p_j = (W⁻¹)_jj moves by Σ_ab P_k[a,b] (X W⁻ᵀ)[b,j] (Y D W⁻ᵀ)[a,j] and by
    −p_j for its own ln C (or ln L); its zero z_j = |H^j/H^0|·p_j also by the change of the two
    gains, each of a network with the other ports at infinite value. The corner solves
    F = Σ ln(ω² + p_j²) − ln(ω² + z_j²) − ln 2 = 0, so d ln ω = −Σ(a_j d ln p_j − b_j d ln z_j)/Σ(b_j − a_j)
    with a_j = p_j²/(ω² + p_j²), b_j = z_j²/(ω² + z_j²).
    """
    if not low:
        return None
    low_names = {el.name for el in low}
    low_states = {**{k: v for k, v in states.items() if k not in low_names},
                  **{el.name: OPEN for el in low if isinstance(el, Capacitor)}}
    system = build_system(circuit, low_states)
    patterns = parametric_system(circuit, names, low_states).G_patterns
    scale = coef * sign
    U, D, X, Y = _port_solves(system, low)
    W_inv = np.linalg.inv(D[:, None] * (U.T @ X))
    poles = np.diag(W_inv).copy()
    d_ln_p = np.einsum("kab,aj,bj->kj", patterns, (Y * D[None, :]) @ W_inv.T, X @ W_inv) * scale[:, None] / poles
    at = {el.name: j for j, el in enumerate(low)}
    for k, n in enumerate(names):
        if n in at:
            d_ln_p[k, at[n]] -= 1.0
    G, b, c = system.dense_G, system.b.astype(float), system.c.astype(float)
    everyone = list(range(len(low)))
    h0, d_ln_h0 = _bordered_gain(G, b, c, U, patterns, scale)
    ratios = np.zeros(len(low))
    d_ln_z = d_ln_p.copy()
    for j in everyone:
        others = [i for i in everyone if i != j]
        hj, d_ln_hj = _bordered_gain(G, b, c, U[:, others], patterns, scale)
        ratios[j] = hj / h0 if abs(hj / h0) >= CUT_OFF else 0.0
        if ratios[j] != 0:
            d_ln_z[:, j] += d_ln_hj - d_ln_h0
    wp = np.abs(poles)
    wz = np.abs(ratios) * wp
    omega = section_corner(wp, wz)
    if omega is None:
        return None
    w2 = omega * omega
    a, bz = wp * wp / (w2 + wp * wp), wz * wz / (w2 + wz * wz)
    return -(d_ln_p @ a - d_ln_z @ bz) / float(np.sum(bz - a))


def _midband_gain_terms(mid_sys, mid_ps, coef, sign):
    G = mid_sys.dense_G
    x = np.linalg.solve(G, mid_sys.b)
    y = np.linalg.solve(G.T, mid_sys.c)
    am = float(mid_sys.c @ x)
    # d ln|A_m| / d p_k = −yᵀ P_k x / A_m (real network, so no real part needed).
    d = -np.einsum("kab,a,b->k", mid_ps.G_patterns, y, x) / am
    return d * coef * sign


def _corner_exact(full_sys, full_ps, f_hz, d_gain, coef, sign):
    if f_hz is None:
        return None
    w = 2 * math.pi * f_hz
    A = full_sys.dense_G + 1j * w * full_sys.dense_C
    x = np.linalg.solve(A, full_sys.b.astype(complex))
    y = np.linalg.solve(A.T, full_sys.c.astype(complex))
    H = full_sys.c @ x
    dA = full_ps.G_patterns + 1j * w * full_ps.C_patterns
    d_lnH = (-np.einsum("kab,a,b->k", dA, y, x) / H).real * coef * sign
    d_lnH_dlnw = (-1j * w * (y @ full_sys.dense_C @ x) / H).real
    return -(d_lnH - d_gain) / d_lnH_dlnw


def sensitivities(circuit, analysis) -> Sensitivities:
    """d ln(figure) / d ln(value) for every part value of ``circuit``.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    analysis : bandsketch.engine.solve.analysis.Analysis
        Its analysis (bands, exact corners).

    Returns
    -------
    Sensitivities
    """
    pvs = part_values(circuit)
    names = [p.element for p in pvs]
    reactive = [el for el in circuit.elements.values() if isinstance(el, (Capacitor, Inductor))]
    bands = {name: r.band for name, r in analysis.elements.items()}
    states = analysis.midband_states()
    mid_sys, dc_sys = build_system(circuit, states), build_system(circuit)
    mid_ps = parametric_system(circuit, names, states)
    full_ps = parametric_system(circuit, names)
    coef, sign = full_ps.coefficients, _coefficient_sign(circuit, names)
    high = [el for el in reactive if bands[el.name] == Band.HIGH]
    low = [el for el in reactive if bands[el.name] == Band.LOW]
    notes: dict = {}
    hi_est = _guarded(notes, "high_estimate", lambda: _high_estimate(mid_sys, mid_ps, high, coef, sign, names))
    lo_est = _guarded(notes, "low_estimate", lambda: _low_estimate(circuit, states, low, names, coef, sign))
    d_gain = _guarded(notes, "gain", lambda: _midband_gain_terms(mid_sys, mid_ps, coef, sign))
    hi_ex = lo_ex = None
    for figure, f_hz in (("high_exact", analysis.f_high_exact), ("low_exact", analysis.f_low_exact)):
        if d_gain is None and f_hz is not None:
            notes[figure] = f"{FIGURE_TITLES[figure]}: needs the gain's sensitivities, which could not be computed"
            continue
        value = _guarded(notes, figure, lambda f_hz=f_hz: _corner_exact(dc_sys, full_ps, f_hz, d_gain, coef, sign))
        hi_ex, lo_ex = (value, lo_ex) if figure == "high_exact" else (hi_ex, value)

    slopes = bias_slopes(circuit, names)
    if slopes is not None:
        hi_ex, hi_est, lo_ex, lo_est, d_gain = (_through_bias(v, slopes, names)
                                                for v in (hi_ex, hi_est, lo_ex, lo_est, d_gain))

    def at(v, k):
        return None if v is None else float(v[k])

    rows = tuple(Sensitivity(pv, at(hi_ex, k), at(hi_est, k), at(lo_ex, k), at(lo_est, k), at(d_gain, k))
                 for k, pv in enumerate(pvs))
    return Sensitivities(rows, MappingProxyType(notes), slopes is not None)


def _through_bias(direct, slopes, names):
    """Add each part value's effect through the bias: Σ_j S(y_j)·d ln y_j / d ln x_k over the
    derived values y_j (g_m, r_π ...) whose direct sensitivities S(y_j) ``direct`` holds."""
    if direct is None:
        return None
    at = {n: k for k, n in enumerate(names)}
    rows = [j for j, d in enumerate(slopes.derived) if d in at]
    s_derived = np.array([direct[at[slopes.derived[j]]] for j in rows])
    total = np.array(direct, dtype=float)
    if rows:
        extra = s_derived @ slopes.matrix[rows, :]
        for k, name in enumerate(slopes.values):
            total[at[name]] += extra[k]
    return total


_WORKED_ON = {"high_estimate": "the mid-band network seen by the high-band capacitors",
              "low_estimate": "the network seen by the low-band capacitors",
              "gain": "the resistive mid-band network",
              "high_exact": "the full network at the upper corner",
              "low_exact": "the full network at the lower corner"}


def _guarded(notes: dict, figure: str, compute):
    """``compute()``, or None with a note in ``notes`` where its network is singular or the
    result is not a number (a figure that is zero, a flat response)."""
    why = "gives a singular matrix (elements in parallel or in a loop act as one)"
    try:
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            value = compute()
    except (np.linalg.LinAlgError, ZeroDivisionError):
        value = None
    else:
        if value is None or np.all(np.isfinite(value)):
            return value
        why = "gives no finite derivative (the figure does not move with the values)"
    notes[figure] = f"{FIGURE_TITLES[figure]}: {_WORKED_ON[figure]} {why}, so its sensitivities are not shown"
    return None
