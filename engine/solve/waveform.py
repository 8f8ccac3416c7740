"""The exact step response of the nodal equations C·dx/dt + G·x = b·u(t), two ways.

For a unit step at t = 0 from rest the solution is x(t) = x_∞ + z(t), with x_∞ = G⁻¹b the
d.c. solution and C·dz/dt = −G·z from the charge C·z(0⁺) = −C·x_∞ (capacitor voltages and
inductor currents do not jump). :func:`modal_step` writes the output as poles and residues
of H(s)/s; :func:`integrated_step` steps z with an L-stable rational approximation of the
matrix exponential, which needs only sparse factorisations and so serves large networks.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
import scipy.linalg as la

from ..core.errors import CircuitError
from .sparselu import sparse_lu

MODAL_LIMIT = 80
"""Up to this many unknowns the step response comes from the poles and residues."""
ILL_CONDITIONED = 1e7
"""Modal amplitudes summing to more than this multiple of the largest output mean nearly
coincident poles whose residues cancel; the integration is used instead."""
PADE_DEGREE = 5
"""Denominator degree k of the (k−1, k) Padé approximation of exp: order 2k − 1 = 9, and
L-stable (Ehle; Wanner, Hairer and Nørsett 1978), so fast modes die instead of ringing."""
STEP_PER_RATE = 1.0
"""Largest h·|p| for a mode p that has not yet decayed: the Padé error there is below 1e-9 a step."""
DECAYED = 20.0
"""A mode whose e^{Re p·t} is below e^−20 (2e-9) no longer limits the step."""
DENSE_STEP_LIMIT = 120
"""Up to this many unknowns the uniform steps are dense products (three dense solves to form)."""
MAX_HALVINGS = 16
"""The smallest internal step is the output spacing / 2^16."""
_FINITE_RATIO = 1e-9
_UNSTABLE = 1e-9


def dc_gain(system) -> tuple[float, np.ndarray]:
    """H(0) (gain unit) and x_∞ = G⁻¹b, the unknowns once the step has settled.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    """
    x = system.dc_solution
    if x is None:
        raise CircuitError("The network has no d.c. solution (a node held only by capacitors or current "
                           "sources): its step response is not defined. Add a resistance to ground.")
    return float(system.c @ x), x


def modes(system, scale: float) -> tuple[np.ndarray, np.ndarray, float] | None:
    """Poles p_k (rad/s) and amplitudes r_k/p_k (gain unit) of the step, and H(0); one pole
    of each conjugate pair, with twice its amplitude (the real part is taken).

    ``scale`` is the size of the output (gain unit; the mid-band gain), against which the
    modal amplitudes are judged.

    y(t) = H(0) + Σ (r_k/p_k)·e^{p_k t} for t > 0, with r_k the residue of H(s) at p_k:
    r_k = (c·v_k)(w_kᴴ·b)/(w_kᴴ·C·v_k) from the right and left eigenvectors of the pencil
    (−G, C). None when nearly coincident poles make the residues cancel (use the integration).

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    scale : float
        The size of the output, gain unit (see below).

    Raises
    ------
    CircuitError
        A pole in the right half-plane or at the origin: the step response grows without bound.
    """
    h0, _ = dc_gain(system)
    G, C = np.asarray(system.dense_G), np.asarray(system.dense_C)
    nb = np.abs(C).max(initial=0.0)
    if nb == 0:
        return np.zeros(0, complex), np.zeros(0, complex), h0
    w0 = np.abs(G).max() / nb
    (alpha, beta), vl, vr = la.eig(-G, w0 * C, left=True, right=True, homogeneous_eigvals=True)
    finite = np.abs(beta) > _FINITE_RATIO * np.abs(alpha)
    p = w0 * alpha[finite] / beta[finite]
    vl, vr = vl[:, finite], vr[:, finite]
    wC = np.einsum("ij,ik,kj->j", vl.conj(), C, vr)
    residues = (system.c @ vr) * (vl.conj().T @ system.b) / wC
    live = np.abs(residues) > 0
    p, residues = p[live], residues[live]
    _check_stable(p, w0)
    amplitude = residues / p
    # A real network's poles come in conjugate pairs: keep one of each, twice its amplitude.
    upper = p.imag > 0
    keep = upper | (p.imag == 0)
    p, amplitude = p[keep], np.where(upper, 2.0, 1.0)[keep] * amplitude[keep]
    if np.abs(amplitude).sum() > ILL_CONDITIONED * max(abs(scale), abs(h0)):
        return None
    return p, amplitude, h0


def _check_stable(p, w0):
    grow = p[(p.real > _UNSTABLE * np.abs(p)) | (np.abs(p) < 1e-12 * w0)]
    if grow.size:
        f = abs(grow[0]) / (2 * math.pi)
        where = "at the origin" if abs(grow[0]) < 1e-12 * w0 else f"at {f:.4g} Hz in the right half-plane"
        raise CircuitError(f"The network has a pole {where}: it is unstable (or integrates), so its step "
                           "response grows without bound. Check the feedback sign and the gains.")


def modal_step(mode_set, t: np.ndarray) -> np.ndarray:
    """y(t) from :func:`modes`; ``t`` in s. y(0) is the output before the step, 0.

    Parameters
    ----------
    mode_set : tuple
        From :func:`modes`: poles (rad/s), amplitudes (gain unit), H(0).
    t : numpy.ndarray
        s.
    """
    p, amplitude, h0 = mode_set
    t = np.asarray(t, dtype=float)
    y = np.full(t.shape, h0, dtype=float)
    # Real arithmetic, with the exponent floored where the mode has long died: complex
    # exponentials of large negative arguments are many times slower than real ones.
    decay = np.exp(np.maximum(np.outer(t, p.real), -700.0))
    osc = p.imag != 0
    y += decay[:, ~osc] @ amplitude[~osc].real
    if osc.any():
        phase = np.outer(t, p.imag[osc])
        a = amplitude[osc]
        y += (decay[:, osc] * (np.cos(phase) * a.real - np.sin(phase) * a.imag)).sum(axis=1)
    y[t <= 0] = 0.0
    return y


@lru_cache(maxsize=None)
def _pade_fractions(k: int) -> tuple[tuple[complex, complex], ...]:
    """(a_i, c_i) with R(z) = Σ c_i/(z − a_i) for the (k−1, k) Padé approximant of e^z,
    one of each conjugate pair (Im a_i > 0) and the real root."""
    m, n = k - 1, k
    num = [math.factorial(m + n - j) * math.factorial(m) / (math.factorial(m + n) * math.factorial(j)
           * math.factorial(m - j)) for j in range(m + 1)]
    den = [(-1) ** j * math.factorial(m + n - j) * math.factorial(n) / (math.factorial(m + n) * math.factorial(j)
           * math.factorial(n - j)) for j in range(n + 1)]
    P, Q = np.poly1d(num[::-1]), np.poly1d(den[::-1])
    roots = np.roots(Q.coeffs)
    out = []
    for a in roots:
        if a.imag < -1e-12:
            continue
        a = complex(a.real, 0.0) if abs(a.imag) <= 1e-12 else complex(a)
        out.append((a, complex(P(a) / Q.deriv()(a))))
    return tuple(out)


class _Stepper:
    """z ← R(h·M)·z for M = −C⁻¹G, R the L-stable Padé approximant, from sparse LUs of
    (−h·G − a_i·C) per root a_i; ``C`` is never inverted, so singular C (a d.a.e.) is fine."""

    def __init__(self, G, C, h, *, factor=True):
        self.G, self.C, self.h = G, C, h
        self.roots = [(a.real, coeff.real, True) if a.imag == 0 else (a, 2 * coeff, False)
                      for a, coeff in _pade_fractions(PADE_DEGREE)]
        self.terms = []
        for a, coeff, real in self.roots if factor else ():
            A = (-h * G - a * C).tocsc()
            try:
                lu = sparse_lu(A)
            except RuntimeError:
                raise CircuitError("The network equations are singular for the time step: check for "
                                   "ideal elements that fix the same voltage or current twice.") from None
            self.terms.append((lu, coeff, real))

    def __call__(self, z):
        q = self.C @ z
        out = np.zeros(q.shape)
        for lu, coeff, real in self.terms:
            u = lu.solve(q if real else q.astype(complex))
            out += (coeff * u).real
        return out

    def matrix(self) -> np.ndarray:
        """R(h·M) as a dense matrix, from dense solves: one product a step instead of the solves."""
        G, C = self.G.toarray(), self.C.toarray()
        out = np.zeros(C.shape)
        for a, coeff, real in self.roots:
            out += (coeff * la.solve(-self.h * G - a * C, C)).real
        return out


def integrated_step(system, t: np.ndarray, poles_hint) -> np.ndarray:
    """y on the uniform grid ``t`` (s, t[0] = 0) by L-stable integration.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    t : numpy.ndarray
        Uniform output times from 0 (s).
    poles_hint : array_like
        Poles (rad/s, complex) the step is chosen from: the exact high-band poles where known,
        otherwise −1/τ of the time constants; any not in the left half-plane is ignored.
        The internal step h keeps h·|p| ≤ 1 for every mode that has not decayed below
        e^−20; each step is a power-of-two fraction of the output spacing, so the outputs fall
        on the internal grid. Once the step has grown to the output spacing it stays there,
        and up to :data:`DENSE_STEP_LIMIT` unknowns each step is one dense product.

    Returns
    -------
    numpy.ndarray
        y (gain unit); y[0] = 0, the output before the step.
    """
    h0, x_inf = dc_gain(system)
    G, C = system.G.tocsc(), system.C.tocsc()
    y = np.zeros(t.shape)
    if t.size < 2:
        return y
    dt = float(t[1] - t[0])
    p = np.asarray(poles_hint, dtype=complex).ravel()
    p = p[np.isfinite(p) & (p.real < 0)]
    rate, decay = np.abs(p), -p.real
    steppers: dict[int, _Stepper] = {}
    z = -x_inf.astype(float)
    fine = 2 ** MAX_HALVINGS
    pos, end, out = 0, (t.size - 1) * fine, 1
    while pos < end:
        alive = rate[decay * (pos / fine * dt) < DECAYED]
        h_wanted = STEP_PER_RATE / alive.max() if alive.size else dt
        level = 0
        while level < MAX_HALVINGS and (dt / 2 ** level > h_wanted or pos % (fine >> level)):
            level += 1
        if level == 0:
            break
        if level not in steppers:
            steppers[level] = _Stepper(G, C, dt / 2 ** level)
        z = steppers[level](z)
        pos += fine >> level
        if pos % fine == 0:
            y[out] = h0 + system.c @ z
            out += 1
    if out < t.size:
        # The modes left are slow enough for the output spacing from here on.
        dense = system.size <= DENSE_STEP_LIMIT
        step = _Stepper(G, C, dt, factor=not dense)
        if dense:
            phi, c = step.matrix(), system.c
            for k in range(out, t.size):
                z = phi @ z
                y[k] = c @ z
        else:
            for k in range(out, t.size):
                z = step(z)
                y[k] = system.c @ z
        y[out:] += h0
    return y
