"""The exact reference: H(jω) of the full network, and its poles and zeros."""

from __future__ import annotations

import numpy as np
import scipy.linalg as la
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from ..core.errors import CircuitError

DENSE_LIMIT = 60
"""Up to this many unknowns a batched dense solve beats a sparse LU per frequency."""
_CHUNK_BYTES = 64 * 1024 * 1024
_FINITE_RATIO = 1e-9
"""An eigenvalue whose |β| is below this fraction of |α| (after frequency scaling) is infinite."""


def is_dense(system) -> bool:
    """Whether ``system`` is small enough to be solved densely (LAPACK) rather than sparsely (SuperLU).

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
        Its size is compared with :data:`DENSE_LIMIT`, read when called.
    """
    return system.size <= DENSE_LIMIT


def frequency_response(system, freqs_hz) -> np.ndarray:
    """Exact transfer function at the given frequencies.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
        Assembled equations.
    freqs_hz : array_like
        Frequencies in Hz.

    Returns
    -------
    numpy.ndarray
        Complex H(j2πf): V/V for a voltage input, V/A (Ω) for a current input.
    """
    f = np.atleast_1d(np.asarray(freqs_hz, dtype=float))
    w = 2 * np.pi * f
    n = system.size
    out = np.empty(f.shape, dtype=complex)
    if is_dense(system):
        G, C = system.dense_G, system.dense_C
        step = max(1, _CHUNK_BYTES // (16 * n * n))
        rhs = system.b.astype(complex)
        for i in range(0, w.size, step):
            ws = w[i:i + step]
            A = np.empty((ws.size, n, n), dtype=complex)
            A.real[...] = G
            np.multiply(ws[:, None, None], C, out=A.imag)
            try:
                x = np.linalg.solve(A, np.broadcast_to(rhs, (ws.size, n))[..., None])[..., 0]
            except np.linalg.LinAlgError:
                raise CircuitError("The network equations are singular at some frequency: check for "
                                   "ideal elements that fix the same voltage or current twice.") from None
            out[i:i + step] = x @ system.c
    else:
        G, C = system.G.tocsc().astype(complex), system.C.tocsc().astype(complex)
        rhs = system.b.astype(complex)
        for i, wi in enumerate(w):
            A = sp.csc_matrix(G + 1j * wi * C)
            try:
                lu = spla.splu(A)
            except RuntimeError:
                raise CircuitError(f"The network equations are singular at {f[i]:g} Hz.") from None
            x = lu.solve(rhs)
            # One step of iterative refinement: SuperLU's threshold pivoting can lose a few
            # digits more than the dense solve on ill-conditioned networks; this wins them back.
            x += lu.solve(rhs - A @ x)
            out[i] = system.c @ x
    return out


def _finite_eigenvalues(A, B) -> np.ndarray:
    """Finite generalised eigenvalues s of A v = s B v, with the pencil scaled for conditioning."""
    if A.shape[0] == 0:
        return np.zeros(0, complex)
    nb = np.abs(B).max()
    if nb == 0:
        return np.zeros(0, complex)
    w0 = np.abs(A).max() / nb
    alpha, beta = la.eig(A, w0 * B, right=False, homogeneous_eigvals=True)
    keep = np.abs(beta) > _FINITE_RATIO * np.abs(alpha)
    s = w0 * alpha[keep] / beta[keep]
    s[np.abs(s) < 1e-12 * w0] = 0.0
    return np.sort_complex(s)


def poles(system) -> np.ndarray:
    """Finite natural frequencies of the network (rad/s): s with det(G + sC) = 0.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    """
    return _finite_eigenvalues(-system.dense_G, system.dense_C)


def zeros(system) -> np.ndarray:
    """Finite transmission zeros (rad/s) from the input to the output.

    The zeros are the finite generalised eigenvalues of the system pencil
    [[G + sC, −b], [c, 0]], which is singular exactly where H(s) = 0.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    """
    n = system.size
    A = np.zeros((n + 1, n + 1))
    B = np.zeros((n + 1, n + 1))
    A[:n, :n] = -system.dense_G
    A[:n, n] = system.b
    A[n, :n] = -system.c
    B[:n, :n] = system.dense_C
    return _finite_eigenvalues(A, B)
