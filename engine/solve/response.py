"""The exact reference: H(jω) of the full network, and its poles and zeros."""

from __future__ import annotations

import os
from concurrent.futures import ThreadPoolExecutor

import numpy as np
import scipy.linalg as la
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from ..core.errors import CircuitError
from .sparselu import sparse_lu

DENSE_LIMIT = 60
"""Up to this many unknowns a batched dense solve beats a sparse LU per frequency."""
THREADED_SIZE = 2000
"""From this many unknowns a sparse sweep factorises its frequencies on every core at once."""
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


def _cores() -> int:
    """Cores this process may run on."""
    return len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count() or 1


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

        def at(i):
            A = sp.csc_matrix(G + 1j * w[i] * C)
            try:
                lu = sparse_lu(A)
            except RuntimeError:
                raise CircuitError(f"The network equations are singular at {f[i]:g} Hz.") from None
            x = lu.solve(rhs)
            # One step of iterative refinement: SuperLU's threshold pivoting can lose a few
            # digits more than the dense solve on ill-conditioned networks; this wins them back.
            x += lu.solve(rhs - A @ x)
            return system.c @ x

        workers = min(w.size, _cores()) if n >= THREADED_SIZE else 1
        if workers > 1:
            # SuperLU lets go of the interpreter while it factorises, so the frequencies
            # share the cores.
            with ThreadPoolExecutor(workers) as pool:
                out[:] = list(pool.map(at, range(w.size)))
        else:
            out[:] = [at(i) for i in range(w.size)]
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


ROOT_LIMIT = 600
"""Up to this many unknowns every pole and zero is found (dense QZ: N² memory, N³ time);
beyond it, only the :data:`NEAREST_ROOTS` nearest each band edge (:func:`nearest_eigenvalues`)."""
NEAREST_ROOTS = 6
"""Poles (and zeros) found near each band edge of a network above :data:`ROOT_LIMIT` unknowns."""
_FINITE_THETA = 1e-9
"""A root more than 1/this times its shift away (|θ·σ| below it) is an infinite one."""
_NEAR_ROOT = 1e-3
_ROOT_GROWTH = 30.0
"""Solved at a root, K + s·E gives at least this many times the response a relative
:data:`_NEAR_ROOT` away gives (a simple root found to 1e-8 gives about 1e5 times)."""
_SAME_ROOT = 1e-8
"""Two roots found from different shifts within this relative distance are one root."""


def nearest_eigenvalues(K, E, shifts, k: int = NEAREST_ROOTS) -> np.ndarray:
    """The finite s with (K + s·E)·v = 0 nearest each shift, by shift-invert Arnoldi.

    For a shift σ, (K + σE)⁻¹·E has the eigenvalue θ = −1/(s − σ) for every finite root s,
    so the roots nearest σ are its largest θ (ARPACK through :func:`scipy.sparse.linalg.eigs`,
    one sparse LU of K + σE); the infinite roots of a singular E map to θ = 0 and stay out.

    Parameters
    ----------
    K, E : scipy.sparse matrix
        Square and of one size; S and F (or dimensionless and H on branch rows).
    shifts : sequence of float
        rad/s, where to look: a real σ on the negative axis (−2π·f at a band edge).
    k : int
        Roots wanted nearest each shift (fewer where the network has fewer finite ones).

    Returns
    -------
    numpy.ndarray
        rad/s, complex, sorted; roots found from two shifts are given once.
    """
    n = K.shape[0]
    K, E = sp.csc_matrix(K, dtype=float), sp.csc_matrix(E, dtype=float)
    found = []
    for sigma in shifts:
        try:
            lu = sparse_lu(K + sigma * E)
        except RuntimeError:  # σ is a root itself: look a hair beside it
            lu = sparse_lu(K + sigma * (1 + 1e-6) * E)
        T = spla.LinearOperator((n, n), matvec=lambda x, lu=lu: lu.solve(E @ x), dtype=float)
        want = min(k, n - 2)
        try:
            theta = spla.eigs(T, k=want, which="LM", ncv=min(n - 1, max(2 * want + 1, 24)), tol=1e-12,
                              return_eigenvectors=False)
        except spla.ArpackNoConvergence as partial:
            theta = partial.eigenvalues
        # θ = 0 is an infinite root; rounding leaves it at about 1e-16 of 1/|σ|.
        theta = theta[np.abs(theta) * abs(sigma) > _FINITE_THETA]
        found.extend(sigma - 1 / theta)
    roots = []
    for s in found:
        # A real root comes back with rounding in its imaginary part, which would make it a pair.
        s = complex(s.real, 0.0) if abs(s.imag) <= 1e-9 * abs(s) else complex(s)
        if not any(abs(s - r) <= _SAME_ROOT * max(abs(s), abs(r)) for r in roots) and _is_root(K, E, s):
            roots.append(s)
    return np.sort_complex(np.asarray(roots, dtype=complex))


def _is_root(K, E, s: complex) -> bool:
    """Whether K + s·E is singular at ``s``: solved there its response to a fixed excitation
    is far larger than a relative 1e-3 away from it.

    A pencil with a defective infinite root (the bordered pencil of an all-pole network)
    hands Arnoldi a nilpotent block, whose rounding shows as finite "roots" that are none;
    this is what tells them apart.
    """
    r = np.random.default_rng(0).standard_normal(K.shape[0])
    sizes = []
    for at in (s, s * (1 + _NEAR_ROOT)):
        try:
            sizes.append(np.linalg.norm(sparse_lu(K + at * E).solve(r.astype(complex))))
        except RuntimeError:  # exactly singular: a root
            return at == s
    return bool(np.isfinite(sizes[0]) and sizes[0] > _ROOT_GROWTH * sizes[1])


def _bordered(system):
    """The pencil [[G, −b], [c, 0]] + s·[[C, 0], [0, 0]], singular exactly where H(s) = 0."""
    n = system.size
    K = sp.bmat([[system.G, sp.csc_matrix(-system.b.reshape(n, 1))],
                 [sp.csr_matrix(system.c.reshape(1, n)), None]], format="csc")
    E = sp.bmat([[system.C, None], [None, sp.csc_matrix((1, 1))]], format="csc")
    return K, E


def poles(system, near=()) -> np.ndarray:
    """Finite natural frequencies of the network (rad/s): s with det(G + sC) = 0.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    near : sequence of float, optional
        rad/s, negative real shifts (band edges). Above :data:`ROOT_LIMIT` unknowns only the
        poles nearest these are found; without them, or up to the limit, all of them.
    """
    if system.size > ROOT_LIMIT and len(near):
        return nearest_eigenvalues(system.G, system.C, near)
    return _finite_eigenvalues(-system.dense_G, system.dense_C)


def zeros(system, near=()) -> np.ndarray:
    """Finite transmission zeros (rad/s) from the input to the output.

    The zeros are the finite generalised eigenvalues of the system pencil
    [[G + sC, −b], [c, 0]], which is singular exactly where H(s) = 0.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    near : sequence of float, optional
        rad/s, as for :func:`poles`.
    """
    if system.size > ROOT_LIMIT and len(near):
        return nearest_eigenvalues(*_bordered(system), near)
    n = system.size
    A = np.zeros((n + 1, n + 1))
    B = np.zeros((n + 1, n + 1))
    A[:n, :n] = -system.dense_G
    A[:n, n] = system.b
    A[n, :n] = -system.c
    B[:n, :n] = system.dense_C
    return _finite_eigenvalues(A, B)
