"""Port matrices of a resistive network and the time constants they give.

A capacitor is a port driven by a test current between its two nodes; its response is the
voltage across it, so its port entry is a resistance. An inductor that the network holds
as a 0-V branch is a port driven by a test voltage in that branch; its response is the
branch current, so its entry is minus the conductance it sees. With the weights
D = diag(C, −L), det(G + s·U·D·Uᵀ) / det(G) = det(I + s·D·Z) with Z = Uᵀ G⁻¹ U, which is
what makes one factorisation of G serve every element at once (Cochrun and Grabel, IEEE
Trans. Circuit Theory CT-20(1), 1973; zero-value time constants for the inductors).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.linalg as la
from scipy.linalg import lapack
import scipy.sparse as sp

from ..network.elements import Capacitor
from ..core.errors import CircuitError
from .response import is_dense
from .selectedinverse import inverse_entries
from .sparselu import sparse_lu

FULL_MATRIX_LIMIT = 1000
"""Up to this many ports the whole port matrix is formed (b2, exact time constants);
beyond it only its diagonal (b1), since the matrix costs N² memory and its eigenvalues N³."""
_CHUNK_BYTES = 32 * 1024 * 1024
SELECTED_INVERSE_PORTS = 256
"""From this many ports a sparse network's port diagonal comes from the selected inverse
(about one factorisation's work) rather than two triangular solves per port."""
CUT_OFF = 1e-9
"""An open/short gain ratio below this is rounding of an exact zero (a coupling element)."""
_SINGULAR = 1e-12
"""A port matrix whose smallest singular value is below this fraction of its largest is singular."""


def port_columns(system, elements, dense: bool | None = None):
    """Port vectors of ``elements`` in the unknowns of ``system``, one column each.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
        Equations in which each element named is either a branch (an inductor, or a
        shorted capacitor) or left out (a capacitor, or an opened inductor).
    elements : sequence of Capacitor or Inductor
    dense : bool, optional
        A dense array (True) or a sparse matrix (False); by default dense for a network
        solved densely (:func:`bandsketch.engine.solve.response.is_dense`).

    Returns
    -------
    numpy.ndarray or scipy.sparse.csc_matrix
        An element with a branch: 1 at its branch unknown (its entry is then minus the
        conductance it sees); one left out: +1 at node a, −1 at node b (a resistance).
    """
    rows, cols, vals = [], [], []
    for j, el in enumerate(elements):
        if el.name in system.branch_index:
            rows.append(system.branch_index[el.name])
            cols.append(j)
            vals.append(1.0)
            continue
        for node, sign in ((el.a, 1.0), (el.b, -1.0)):
            if node in system.node_index:
                rows.append(system.node_index[node])
                cols.append(j)
                vals.append(sign)
    if is_dense(system) if dense is None else dense:
        U = np.zeros((system.size, len(elements)))
        np.add.at(U, (np.array(rows, dtype=np.intp), np.array(cols, dtype=np.intp)), vals)
        return U
    return sp.csc_matrix((vals, (rows, cols)), shape=(system.size, len(elements)))


def port_weights(elements) -> np.ndarray:
    """D of det(I + s·D·Z): C (F) for a capacitor, −L (H) for an inductor.

    Parameters
    ----------
    elements : sequence of Capacitor or Inductor
        Values in F or H.
    """
    return np.array([el.value if isinstance(el, Capacitor) else -el.value for el in elements], dtype=float)


class _DenseLU:
    """LAPACK's LU (getrf) of a small dense matrix, with SuperLU's ``solve`` interface.

    A single right-hand side is solved on the factors (getrs). Several at once go to
    numpy's solver instead: scipy's bundled OpenBLAS threads the many-column triangular
    solve even at 10 × 10 and stalls for milliseconds when the cores are busy, while
    refactoring a matrix this small costs microseconds.
    """

    def __init__(self, A):
        A = np.asarray(A)
        self.dtype = np.result_type(A.dtype, float)
        self._a = A.astype(self.dtype, copy=False)
        getrf, self._getrs = lapack.get_lapack_funcs(("getrf", "getrs"), (self._a,))
        self._lu, self._piv, info = getrf(self._a)
        if info != 0 or not np.all(np.isfinite(self._lu)):
            raise RuntimeError("Factor is exactly singular")

    def solve(self, rhs, trans="N"):
        rhs = np.asarray(rhs, dtype=self.dtype)
        if rhs.ndim == 1:
            return self._getrs(self._lu, self._piv, rhs, trans=0 if trans == "N" else 1)[0]
        return np.linalg.solve(self._a if trans == "N" else self._a.T, rhs)


class _SparseLU:
    """SuperLU's factors (:func:`bandsketch.engine.solve.sparselu.sparse_lu`), with the element
    type they solve in."""

    def __init__(self, A):
        self._lu = sparse_lu(A)
        self.dtype = np.result_type(A.dtype, float)

    def solve(self, rhs, trans="N"):
        return self._lu.solve(np.asarray(rhs, dtype=self.dtype), trans=trans)


def try_factor(A):
    """The LU factors of ``A``, or None when ``A`` is exactly singular.

    Parameters
    ----------
    A : numpy.ndarray or scipy.sparse matrix
        Square; conductances (S) or an admittance matrix. A dense array is factorised by
        LAPACK, a sparse one by SuperLU; either gives ``solve(rhs, trans="N" | "T")``.
    """
    try:
        return _DenseLU(A) if isinstance(A, np.ndarray) else _SparseLU(A)
    except RuntimeError:
        return None


def factorize(G, what: str, parts=()):
    """LU of ``G``; a singular ``G`` is a :class:`CircuitError` saying ``what`` it was.

    Parameters
    ----------
    G : numpy.ndarray or scipy.sparse matrix
        A conductance matrix, S (square); dense up to the dense/sparse crossover.
    what : str
        What network it is, for the message.
    parts : sequence of str
        Parts the message points at.
    """
    lu = try_factor(G)
    if lu is None:
        raise CircuitError(f"The network {what} has no unique solution: a loop of shorts or ideal "
                           "sources fixes no current, or a node is held only by capacitors and "
                           "current sources. Pin one of the parts to another band or add a resistance.",
                           parts=parts)
    return lu


def conductance(system):
    """The conductance matrix of ``system`` in the form it is solved in: dense or sparse.

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
    """
    return system.dense_G if is_dense(system) else system.G


def _column_chunks(n_rows: int, n_cols: int, itemsize: int):
    step = max(1, min(n_cols, _CHUNK_BYTES // max(1, itemsize * n_rows)))
    for start in range(0, n_cols, step):
        yield slice(start, min(n_cols, start + step))


def port_matrix(lu, U) -> np.ndarray:
    """Z = Uᵀ A⁻¹ U for a factorised A, solved in column blocks (N × N).

    Parameters
    ----------
    lu : factors from :func:`factorize`
        The factorised A (conductances, S).
    U : numpy.ndarray or scipy.sparse.csc_matrix
        One port column per element (dimensionless incidence, :func:`port_columns`).
    """
    if isinstance(U, np.ndarray):
        return U.T @ lu.solve(U)
    Z = np.empty((U.shape[1], U.shape[1]), dtype=lu.dtype)
    Ut = U.T.tocsr()
    for cols in _column_chunks(U.shape[0], U.shape[1], Z.itemsize):
        Z[:, cols] = Ut @ lu.solve(U[:, cols].toarray())
    return Z


def port_diagonal(lu, U) -> np.ndarray:
    """diag(Uᵀ A⁻¹ U) without forming the whole matrix.

    Parameters
    ----------
    lu, U
        As for :func:`port_matrix`.

    Notes
    -----
    With SuperLU's factors and at least :data:`SELECTED_INVERSE_PORTS` ports, the entries
    of A⁻¹ the ports touch come from the selected inverse
    (:func:`bandsketch.engine.solve.selectedinverse.inverse_entries`, Takahashi's
    equations): u_jᵀ A⁻¹ u_j is Σ u_aj u_bj (A⁻¹)_ab over the one or two unknowns of port
    j, so a floating port reads (A⁻¹)_ab and (A⁻¹)_ba beside the two diagonal entries.
    Otherwise, and in the one case the selected inverse declines (its symbolic step
    pivoted), A⁻¹U is solved in column blocks, two triangular solves per port.
    """
    if isinstance(U, np.ndarray):
        return np.einsum("ij,ij->j", U, lu.solve(U))
    if isinstance(lu, _SparseLU) and U.shape[1] >= SELECTED_INVERSE_PORTS:
        z = _selected_diagonal(lu, sp.csc_matrix(U))
        if z is not None:
            return z
    out = np.empty(U.shape[1], dtype=lu.dtype)
    for cols in _column_chunks(U.shape[0], U.shape[1], np.dtype(lu.dtype).itemsize):
        block = U[:, cols]
        X = lu.solve(block.toarray())
        out[cols] = np.asarray(block.multiply(X).sum(axis=0)).ravel()
    return out


def _selected_diagonal(lu: _SparseLU, U: sp.csc_matrix) -> np.ndarray | None:
    """diag(Uᵀ A⁻¹ U) from the selected inverse, or None where it declines."""
    U.sum_duplicates()
    count = np.diff(U.indptr)
    # Every ordered pair of entries (a, b) within a column, for the term u_a·u_b·(A⁻¹)_ab.
    col = np.repeat(np.arange(U.shape[1]), count)
    per_entry = count[col]
    first = np.repeat(np.arange(len(col)), per_entry)
    ends = np.cumsum(per_entry)
    second = U.indptr[col[first]] + np.arange(ends[-1] if len(ends) else 0) - np.repeat(ends - per_entry, per_entry)
    rows, cols = U.indices[first], U.indices[second]
    keys, where = np.unique(rows.astype(np.int64) * U.shape[0] + cols, return_inverse=True)
    entries = inverse_entries(lu._lu, keys // U.shape[0], keys % U.shape[0])
    if entries is None:
        return None
    terms = U.data[first] * U.data[second] * entries[where]
    out = np.zeros(U.shape[1], dtype=lu.dtype)
    np.add.at(out, col[first], terms)
    return out


@dataclass(frozen=True)
class OpenCircuit:
    """Open-circuit (zero-value) time constants of one set of ports.

    Attributes
    ----------
    port_values : numpy.ndarray
        Z_jj: the resistance (Ω) a capacitor sees, or minus the conductance (S) an
        inductor sees, with the other ports at zero value.
    time_constants : numpy.ndarray
        D_j·Z_jj (s): C·R for a capacitor, L/R for an inductor.
    b1 : float
        Σ τ_j (s), the s-coefficient of the normalised denominator.
    b2 : float or None
        Σ_{i<j} D_i D_j (Z_ii Z_jj − Z_ij Z_ji) (s²); None above :data:`FULL_MATRIX_LIMIT`.
    exact : numpy.ndarray or None
        Eigenvalues λ of D·Z (s), largest magnitude first: the true time constants, whose
        poles are −1/λ; None above :data:`FULL_MATRIX_LIMIT`.
    """

    port_values: np.ndarray
    time_constants: np.ndarray
    b1: float
    b2: float | None
    exact: np.ndarray | None


def _pair_sum(d: np.ndarray) -> float:
    """Σ_{i<j} d_i d_j from running sums, which avoids the cancellation in ((Σd)² − Σd²)/2."""
    before = np.concatenate(([0.0], np.cumsum(d)[:-1]))
    return float(np.dot(d, before))


def _eigenvalues(D: np.ndarray, Z: np.ndarray) -> np.ndarray:
    M = D[:, None] * Z
    if np.all(D > 0) and np.allclose(Z, Z.T, rtol=1e-12, atol=0.0):
        # A reciprocal network: D·Z is similar to the symmetric √D·Z·√D, whose solver is faster and exact.
        r = np.sqrt(D)
        S = r[:, None] * Z * r[None, :]
        lam = la.eigvalsh((S + S.T) / 2).astype(complex)
    else:
        lam = la.eigvals(M)
    return lam[np.argsort(-np.abs(lam), kind="stable")]


def open_circuit(lu, U: sp.csc_matrix, D: np.ndarray, *, full: bool | None = None,
                 diagonal: np.ndarray | None = None) -> OpenCircuit:
    """Open-circuit time constants of the ports ``U`` with weights ``D``, from one LU.

    Parameters
    ----------
    lu : factors from :func:`factorize`
        Factorisation of the conductance matrix with the ports at zero
        value (capacitors out, inductors 0-V branches).
    U : scipy.sparse.csc_matrix
        Port columns (:func:`port_columns`).
    D : numpy.ndarray
        Port weights (:func:`port_weights`), F or −H.
    full : bool, optional
        Form the whole port matrix for b2 and the exact time constants; by default only up
        to :data:`FULL_MATRIX_LIMIT` ports.
    diagonal : numpy.ndarray, optional
        diag(Uᵀ A⁻¹ U) when it is already known (Ω for a capacitor, −S for an inductor): used
        instead of solving for it where the whole matrix is not formed.
    """
    n = U.shape[1]
    if n == 0:
        empty = np.zeros(0)
        return OpenCircuit(empty, empty, 0.0, 0.0, empty.astype(complex))
    if full is None:
        full = n <= FULL_MATRIX_LIMIT
    if not full:
        z = port_diagonal(lu, U) if diagonal is None else np.asarray(diagonal, dtype=float)
        return OpenCircuit(z, D * z, float(np.dot(D, z)), None, None)
    Z = port_matrix(lu, U)
    z = np.diag(Z).copy()
    M = D[:, None] * Z
    b2 = _pair_sum(D * z) - float(np.triu(M * M.T, 1).sum())
    return OpenCircuit(z, D * z, float(np.dot(D, z)), b2, _eigenvalues(D, Z))


@dataclass(frozen=True)
class ShortCircuit:
    """Short-circuit time constants of one set of ports.

    Attributes
    ----------
    inverse_diagonal : numpy.ndarray
        (Z⁻¹)_jj: the conductance (S) a capacitor sees, or minus the resistance (Ω) an
        inductor sees, with the other ports at infinite value (capacitors shorted,
        inductors open).
    time_constants : numpy.ndarray
        D_j / (Z⁻¹)_jj (s): C·R for a capacitor, L/R for an inductor.
    omega : float
        Σ 1/τ_j = tr((D·Z)⁻¹) (rad/s), the exact sum of the pole magnitudes when the poles are real.
    exact : numpy.ndarray
        Eigenvalues λ of D·Z (s), largest magnitude first: the low band's true time
        constants, whose poles are −1/λ.
    open_short_ratios : numpy.ndarray or None
        H^j/H^0 of each port (V/V over V/V, or V/A over V/A, signed): the gain with port j at
        zero value and every other port at infinite value, over the gain with them all at
        infinite value (Hajimiri's transfer constants in their infinite-value form); None
        when no input and output were given.
    """

    inverse_diagonal: np.ndarray
    time_constants: np.ndarray
    omega: float
    exact: np.ndarray
    open_short_ratios: np.ndarray | None = None


def short_circuit(lu, U: sp.csc_matrix, D: np.ndarray, names, io=None) -> ShortCircuit:
    """Short-circuit time constants of the ports ``U``: R_jˢ = 1/(Z⁻¹)_jj, from one LU.

    Parameters
    ----------
    lu, U, D
        As for :func:`open_circuit`: the network with every port at zero value.
    names : sequence of str
        Port names, for the message when ports form a loop (parallel capacitors) and no
        port can be shorted alone.
    io : (numpy.ndarray, numpy.ndarray), optional
        The input vector b (the input's unit: V or A) and the output selector c
        (dimensionless) of the network, for the open/short gain ratios.

    Notes
    -----
    With x = G⁻¹b, y = G⁻ᵀc, p = Uᵀx, q = Uᵀy and Y = Z⁻¹, the gain with every port at
    infinite value is H^0 = cᵀx − qᵀYp, and with port j alone at zero value it is
    H^0 + (qᵀY)_j (Yp)_j / Y_jj (the Schur complement of Y without row and column j): two
    more solves for every port at once.
    """
    n = U.shape[1]
    if n == 0:
        empty = np.zeros(0)
        return ShortCircuit(empty, empty, 0.0, empty.astype(complex), None if io is None else empty)
    Z = port_matrix(lu, U)
    u, s, vt = la.svd(Z)
    if s[-1] <= _SINGULAR * s[0]:
        null = np.abs(vt[-1])
        loop = [names[j] for j in np.flatnonzero(null > 1e-6 * null.max())]
        raise CircuitError(
            f"{', '.join(loop)} form a loop (for instance capacitors in parallel): shorting one shorts "
            "the others, so none has a short-circuit time constant of its own. Combine them into one "
            "part, or pin all but one of them to the neutral band.", parts=loop)
    Y = (vt.T / s[None, :]) @ u.T
    inv_diag = np.diag(Y).copy()
    tau = D / inv_diag
    return ShortCircuit(inv_diag, tau, float(np.sum(1.0 / tau)), _eigenvalues(D, Z),
                        None if io is None else _open_short_ratios(lu, U, Y, *io))


def _open_short_ratios(lu, U, Y, b, c) -> np.ndarray:
    """H^j/H^0 of every port (see :func:`short_circuit`); exact zeros stay zeros."""
    x = lu.solve(np.asarray(b, dtype=float))
    y = lu.solve(np.asarray(c, dtype=float), trans="T")
    p, q = U.T @ x, U.T @ y
    u, v = q @ Y, Y @ p
    h0 = float(c @ x) - float(q @ v)
    if h0 == 0:
        return np.zeros(len(p))
    ratios = 1 + u * v / (np.diag(Y) * h0)
    # A coupling element cuts the signal off exactly; the difference keeps only rounding.
    ratios[np.abs(ratios) < CUT_OFF] = 0.0
    return ratios
