"""Chosen entries of a sparse matrix's inverse from its LU factors (selected inversion).

With B = L·U (L unit lower, U upper triangular) split at a supernode J (a run of columns
sharing one structure) and the later unknowns T, the inverse Z = B⁻¹ satisfies Takahashi's
equations in block form:

    Z_TJ = −Z_TT·L_TJ·L_JJ⁻¹,   Z_JT = −U_JJ⁻¹·U_JT·Z_TT,   Z_JJ = U_JJ⁻¹·L_JJ⁻¹ − U_JJ⁻¹·U_JT·Z_TJ

(K. Takahashi, J. Fagan, M.-S. Chin, "Formation of a sparse bus impedance matrix and its
application to short circuit study", PICA 1973; A. M. Erisman, W. F. Tinney, "On computing
certain elements of the inverse of a sparse matrix", CACM 18(3), 1975). Only the rows R of
T where L_TJ or U_JT can be nonzero enter. On a chordal symmetric pattern (the filled graph
of the factors) R is a subset of the parent supernode's front, so Z_RR is a block of the
parent's dense Z[front, front], and the fronts are formed from the root of the elimination
tree down to its leaves, each from its parent's: about the work of one factorisation, in
one dense step per supernode.
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from scipy.linalg import lapack

_WIDTH = 64
"""Columns a supernode may hold: the quickest of 32, 64 and 128 on the 10,000-capacitor sensor
mesh and cable ladder. The steps' products are plain BLAS calls, as
:func:`bandsketch.engine.solve.analysis.analyze` holds OpenBLAS
to one thread (threaded, a call this size stalled for milliseconds on a busy machine)."""
_PADDING = 4
"""Explicit zeros a column may bring into its parent's supernode (or an eighth of the
front, if more): larger fronts, fewer steps."""


def inverse_entries(factors, rows, cols) -> np.ndarray | None:
    """A⁻¹[rows[k], cols[k]] for every k, from SuperLU's factors of A.

    Parameters
    ----------
    factors : scipy.sparse.linalg.SuperLU
        Pr·A·Pc = L·U as :func:`scipy.sparse.linalg.splu` returns it, row pivoting and all:
        A⁻¹[i, j] = (L·U)⁻¹[perm_c[i], perm_r[j]], so pivoting only makes the pattern the
        inverse is formed on less symmetric, and larger.
    rows, cols : array_like of int
        Positions of the wanted entries (unknown indices of A), any number of each.

    Returns
    -------
    numpy.ndarray or None
        The entries, in the factors' element type and the inverse's unit (Ω for a
        conductance matrix in S); None in the one case the method does not reach: SuperLU
        pivoting the symbolic step's matrix (see Notes), which it should never do.

    Notes
    -----
    Exact in exact arithmetic: no value is perturbed. The inverse is formed on the
    symmetrised pattern of L + U and of the wanted positions, closed under elimination. That
    closure is the pattern of the LU factor of a strictly diagonally dominant M-matrix with
    the same pattern, factored by SuperLU in its given order with diagonal pivots: each fill
    entry of such an elimination is a sum of terms of one sign, so none cancels.
    """
    rows = np.asarray(rows, dtype=np.int64)
    cols = np.asarray(cols, dtype=np.int64)
    L, U = factors.L.tocsc(), factors.U.tocsc()
    p = factors.perm_c[rows].astype(np.int64)
    q = factors.perm_r[cols].astype(np.int64)
    pattern = _filled_pattern(L, U, p, q)
    if pattern is None:
        return None
    return _Fronts(pattern, L, U).entries(p, q)


def _filled_pattern(L, U, p, q) -> sp.csc_matrix | None:
    """Lower triangle (CSC, sorted rows) of the closure of sym(L + U) and the pairs (p, q)."""
    n = L.shape[0]
    Lc, Uc = L.tocoo(), U.tocoo()
    i = np.concatenate((Lc.row, Uc.row, p))
    j = np.concatenate((Lc.col, Uc.col, q))
    off = i != j
    i, j = i[off], j[off]
    S = sp.csc_matrix((np.ones(2 * len(i)), (np.concatenate((i, j)), np.concatenate((j, i)))), shape=(n, n))
    S.data[:] = -1.0
    M = (S + sp.diags(np.diff(S.indptr) + 1.0)).tocsc()
    lu = spla.splu(M, permc_spec="NATURAL", diag_pivot_thresh=0.0, options={"SymmetricMode": True})
    natural = np.arange(n)
    if not (np.array_equal(lu.perm_c, natural) and np.array_equal(lu.perm_r, natural)):
        return None
    F = lu.L.tocsc()
    F.sort_indices()
    return F


def _etree(ptr, idx) -> np.ndarray:
    """Parent of every column of a filled lower-triangular pattern (−1 for a root)."""
    count = np.diff(ptr)
    below = np.minimum(ptr[:-1] + 1, max(len(idx) - 1, 0))
    return np.where(count > 1, idx[below], -1)


def _postorder(parent, count) -> np.ndarray:
    """Columns in a postorder of the elimination tree, each parent's largest child just before it.

    Any topological order of the tree is an equivalent elimination order (the factors stay
    triangular), and this one puts a column next to the child whose structure is most like
    its own, which is what lets supernodes grow.
    """
    n = len(parent)
    by_size = np.lexsort((count, parent))
    children: list[list[int]] = [[] for _ in range(n + 1)]
    for j in by_size.tolist():
        children[parent[j]].append(j)
    order: list[int] = []
    stack = [(r, False) for r in children[-1][::-1]]
    while stack:
        j, done = stack.pop()
        if done:
            order.append(j)
            continue
        stack.append((j, True))
        stack.extend((c, False) for c in children[j][::-1])
    return np.array(order, dtype=np.int64)


def _supernodes(parent, count) -> np.ndarray:
    """First columns of the supernodes: runs j, j + 1, … in which each column's parent is the next.

    Column j joins the run starting at j + 1 when that brings at most :data:`_PADDING` (or
    an eighth of the front) explicit zeros into its column: the run's front holds j's
    structure, since a column's structure without itself and its parent lies inside its
    parent's, so the pattern stays closed.
    """
    n = len(count)
    first = [n - 1]
    size = int(count[n - 1])
    first_width = 1
    for j in range(n - 2, -1, -1):
        grown = size + 1
        if (parent[j] == j + 1 == first[-1] and first_width < _WIDTH
                and grown - count[j] <= max(_PADDING, grown // 8)):
            size = grown
            first[-1] = j
            first_width += 1
        else:
            first.append(j)
            size = int(count[j])
            first_width = 1
    return np.array(first[::-1], dtype=np.int64)


def _ranges(counts) -> np.ndarray:
    """0, 1, …, c − 1 for every c in ``counts``, end to end."""
    counts = np.asarray(counts, dtype=np.int64)
    ends = np.cumsum(counts)
    return np.arange(ends[-1] if len(ends) else 0) - np.repeat(ends - counts, counts)


class _Fronts:
    """The supernodes of a filled pattern, with L and U scattered into their dense blocks.

    Unknowns are renumbered in a postorder of the elimination tree (``self.new``). A
    supernode s holds columns first[s] … first[s] + width[s] − 1 and a front of size[s]
    unknowns (its columns, then the rows R below them); its blocks are L[front, columns]
    and U[columns, front], row-major.
    """

    def __init__(self, pattern, L, U):
        n = pattern.shape[0]
        ptr, idx = pattern.indptr.astype(np.int64), pattern.indices.astype(np.int64)
        order = _postorder(_etree(ptr, idx), np.diff(ptr))
        self.new = np.empty(n, dtype=np.int64)
        self.new[order] = np.arange(n)
        F = pattern.tocoo()
        F = sp.csc_matrix((F.data, (self.new[F.row], self.new[F.col])), shape=(n, n))
        F.sort_indices()
        ptr, idx = F.indptr.astype(np.int64), F.indices.astype(np.int64)
        count = np.diff(ptr)
        first = _supernodes(_etree(ptr, idx), count)
        width = np.diff(np.append(first, n))
        last = first + width - 1
        size = width + count[last] - 1
        self.n, self.first, self.width, self.size = n, first, width, size
        self.sup = np.repeat(np.arange(len(first)), width)
        self.front_ptr = np.append(0, np.cumsum(size))
        local = _ranges(size)
        in_cols = local < np.repeat(width, size)
        self.front = np.where(in_cols, np.repeat(first, size) + local,
                              idx[np.minimum(np.repeat(ptr[last] + 1 - width, size) + local, len(idx) - 1)])
        self._keys = np.repeat(np.arange(len(first), dtype=np.int64), size) * n + self.front
        has_r = size > width
        self.parent = np.full(len(first), -1)
        self.parent[has_r] = self.sup[idx[ptr[last[has_r]] + 1]]
        self.children = np.bincount(self.parent[has_r], minlength=len(first))
        # Where each supernode's rows R sit in its parent's front.
        tail = size - width
        r_sup = np.repeat(np.arange(len(first)), tail)
        r_pos = self._locate(self.parent[r_sup], self.front[np.repeat(self.front_ptr[:-1] + width, tail)
                                                            + _ranges(tail)])
        r_ptr = np.append(0, np.cumsum(tail)).tolist()
        self.rel = [r_pos[a:b] for a, b in zip(r_ptr[:-1], r_ptr[1:])]
        self.block_ptr = np.append(0, np.cumsum(size * width))
        self.dtype = np.result_type(L.dtype, U.dtype, float)
        self.Lbuf = np.zeros(self.block_ptr[-1], dtype=self.dtype)
        self.Ubuf = np.zeros(self.block_ptr[-1], dtype=self.dtype)
        Lc = L.tocoo()
        r, c = self.new[Lc.row], self.new[Lc.col]
        s = self.sup[c]
        self.Lbuf[self.block_ptr[s] + self._locate(s, r) * width[s] + c - first[s]] = Lc.data
        Uc = U.tocoo()
        r, c = self.new[Uc.row], self.new[Uc.col]
        s = self.sup[r]
        self.Ubuf[self.block_ptr[s] + (r - first[s]) * size[s] + self._locate(s, c)] = Uc.data

    def _locate(self, s, i):
        """Position of unknown ``i`` (new numbering) in supernode ``s``'s front, elementwise."""
        return np.searchsorted(self._keys, s * self.n + i) - self.front_ptr[s]

    def entries(self, p, q) -> np.ndarray:
        """Z[p[k], q[k]] of Z = (L·U)⁻¹ (original numbering), each (p, q) in the pattern."""
        p, q = self.new[p], self.new[q]
        s = self.sup[np.minimum(p, q)]
        order = np.argsort(s, kind="stable")
        s = s[order]
        lp, lq = self._locate(s, p[order]), self._locate(s, q[order])
        want = np.searchsorted(s, np.arange(len(self.first) + 1)).tolist()
        out = np.empty(len(p), dtype=self.dtype)
        trtri = lapack.get_lapack_funcs("trtri", dtype=self.dtype)
        fronts = {}
        remaining = self.children.tolist()
        parents = self.parent.tolist()
        widths, sizes, blocks = self.width.tolist(), self.size.tolist(), self.block_ptr.tolist()
        for s in range(len(widths) - 1, -1, -1):
            k, f, P = widths[s], sizes[s], parents[s]
            a, b = want[s], want[s + 1]
            # A leaf no entry is wanted from is passed over: no other front needs its own.
            if a < b or remaining[s]:
                Lb = self.Lbuf[blocks[s]:blocks[s + 1]].reshape(f, k)
                Ub = self.Ubuf[blocks[s]:blocks[s + 1]].reshape(k, f)
                Z = np.empty((f, f), dtype=self.dtype)
                if k == 1:
                    Linv, Uinv = np.ones((1, 1), dtype=self.dtype), 1.0 / Ub[:, :1]
                else:
                    Linv, Uinv = trtri(Lb[:k], lower=1, unitdiag=1)[0], trtri(Ub[:, :k], lower=0)[0]
                Z[:k, :k] = Uinv @ Linv
                if P >= 0:
                    Zrr = fronts[P][self.rel[s][:, None], self.rel[s]]
                    Uhat = Uinv @ Ub[:, k:]
                    Zrj = -(Zrr @ (Lb[k:] @ Linv))
                    Z[k:, :k] = Zrj
                    Z[:k, k:] = -(Uhat @ Zrr)
                    Z[k:, k:] = Zrr
                    Z[:k, :k] -= Uhat @ Zrj
                if a < b:
                    out[order[a:b]] = Z[lp[a:b], lq[a:b]]
                if remaining[s]:
                    fronts[s] = Z
            if P >= 0:
                remaining[P] -= 1
                if remaining[P] == 0:
                    del fronts[P]
        return out
