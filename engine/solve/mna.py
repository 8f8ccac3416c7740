"""Modified nodal analysis: every element's stamp, in one place, into G and C.

The equations are (G + sC) x = b u with x the node voltages (ground left out) followed by
the branch currents of voltage-defining elements (voltage sources, controlled voltage
sources, inductors, and capacitors or inductors that an analysis shorts). Rows of node
unknowns are KCL: the sum of currents leaving the node through its elements equals the
current injected into it. A short is a 0-V branch and an open is the element left out, so
both are exact (no huge or tiny stand-in values).

The stamps are kept as triplets; G and C are assembled from them when first asked for,
sparse (:attr:`MnaSystem.G`) or dense (:attr:`MnaSystem.dense_G`), each once per system, so a
small network never pays for a sparse matrix it does not use.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from types import MappingProxyType
from typing import Mapping

import numpy as np
import scipy.sparse as sp

from .response import is_dense
from .sparselu import sparse_lu
from ..network.elements import CCCS, CCVS, VCCS, VCVS, Capacitor, Inductor, ISource, Resistor, VSource

SHORT, OPEN = "short", "open"


def _sparse(triplets, size):
    rows, cols, vals = triplets
    return sp.csc_matrix((vals, (rows, cols)), shape=(size, size))


def _dense(triplets, size):
    rows, cols, vals = triplets
    out = np.bincount(rows * size + cols, weights=vals, minlength=size * size).reshape(size, size)
    out.flags.writeable = False
    return out


@dataclass(frozen=True)
class MnaSystem:
    """Assembled nodal equations of one circuit state.

    Attributes
    ----------
    b : numpy.ndarray
        Excitation of the input source (1 V or 1 A).
    c : numpy.ndarray
        Output selector: H = c·x.
    node_index : Mapping[str, int]
        Node name -> unknown index (ground has none).
    branch_index : Mapping[str, int]
        Element name -> index of its branch-current unknown.
    """

    b: np.ndarray
    c: np.ndarray
    node_index: Mapping[str, int]
    branch_index: Mapping[str, int]
    _g: tuple = field(repr=False, compare=False, default=())
    _c: tuple = field(repr=False, compare=False, default=())

    @property
    def size(self) -> int:
        """Number of unknowns."""
        return self.b.size

    @cached_property
    def G(self) -> sp.csc_matrix:
        """Conductance and incidence part, sparse (S for node rows, dimensionless for branch rows)."""
        return _sparse(self._g, self.size)

    @cached_property
    def C(self) -> sp.csc_matrix:
        """Capacitance (F) and, on inductor branch rows, −L (H), sparse."""
        return _sparse(self._c, self.size)

    @cached_property
    def dense_G(self) -> np.ndarray:
        """:attr:`G` as a read-only dense array (for networks small enough to solve densely)."""
        return _dense(self._g, self.size)

    @cached_property
    def dense_C(self) -> np.ndarray:
        """:attr:`C` as a read-only dense array."""
        return _dense(self._c, self.size)

    @cached_property
    def dc_solution(self) -> np.ndarray | None:
        """x_∞ = G⁻¹b: the unknowns (V, A) once a unit input has settled; None when G is singular.

        The step's final value, its modes and its integration each start from it.
        """
        try:
            x = (np.linalg.solve(self.dense_G, self.b.astype(float)) if is_dense(self)
                 else sparse_lu(self.G).solve(self.b.astype(float)))
        except (np.linalg.LinAlgError, RuntimeError):
            return None
        x.flags.writeable = False
        return x

    def incidence(self, a: str, b: str) -> np.ndarray:
        """Vector with +1 at node ``a`` and −1 at node ``b`` (ground rows omitted)."""
        e = np.zeros(self.size)
        if a in self.node_index:
            e[self.node_index[a]] += 1.0
        if b in self.node_index:
            e[self.node_index[b]] -= 1.0
        return e


class _Stamps:
    """COO triplets for G and C, plus the branch bookkeeping."""

    def __init__(self, node_index):
        self.node_index = node_index
        self.n = len(node_index)
        self.g_rows, self.g_cols, self.g_vals = [], [], []
        self.c_rows, self.c_cols, self.c_vals = [], [], []
        self.branches: dict[str, int] = {}

    def _i(self, node):
        return self.node_index.get(node)

    def g(self, r, c, v):
        if r is not None and c is not None:
            self.g_rows.append(r)
            self.g_cols.append(c)
            self.g_vals.append(v)

    def cap(self, r, c, v):
        if r is not None and c is not None:
            self.c_rows.append(r)
            self.c_cols.append(c)
            self.c_vals.append(v)

    def admittance(self, a, b, y, target):
        ia, ib = self._i(a), self._i(b)
        target(ia, ia, y)
        target(ib, ib, y)
        target(ia, ib, -y)
        target(ib, ia, -y)

    def transconductance(self, p, n, cp, cn, gm):
        ip, i_n, icp, icn = self._i(p), self._i(n), self._i(cp), self._i(cn)
        self.g(ip, icp, gm)
        self.g(ip, icn, -gm)
        self.g(i_n, icp, -gm)
        self.g(i_n, icn, gm)

    def branch(self, name, p, n):
        """A new branch-current unknown whose current leaves ``p`` and enters ``n``."""
        k = self.n + len(self.branches)
        self.branches[name] = k
        ip, i_n = self._i(p), self._i(n)
        self.g(ip, k, 1.0)
        self.g(i_n, k, -1.0)
        self.g(k, ip, 1.0)
        self.g(k, i_n, -1.0)
        return k


def build_system(circuit, states: Mapping[str, str] | None = None) -> MnaSystem:
    """Assemble the nodal equations of ``circuit``.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
        The network, already validated (see :func:`bandsketch.engine.network.validate.validate`).
    states : Mapping[str, str], optional
        Capacitor or inductor name -> ``"short"`` (a 0-V branch) or ``"open"`` (left out).
        Elements not named keep their reactance.

    Returns
    -------
    MnaSystem
        The stamps (G and C assembled on demand), the input excitation ``b`` and the output selector ``c``.

    Notes
    -----
    Only the circuit's input source is excited; every other independent source is zeroed
    (a voltage source becomes a 0-V branch, a current source is left out).
    """
    states = states or {}
    node_index = {node: i for i, node in enumerate(circuit.nodes()[1:])}
    st = _Stamps(node_index)
    excite: list[tuple[int, float]] = []
    deferred = []
    for el in circuit.elements.values():
        state = states.get(el.name)
        if isinstance(el, Resistor):
            st.admittance(el.a, el.b, 1.0 / el.value, st.g)
        elif isinstance(el, Capacitor):
            if state == SHORT:
                st.branch(el.name, el.a, el.b)
            elif state != OPEN:
                st.admittance(el.a, el.b, el.value, st.cap)
        elif isinstance(el, Inductor):
            if state != OPEN:
                k = st.branch(el.name, el.a, el.b)
                if state != SHORT:
                    st.cap(k, k, -el.value)
        elif isinstance(el, VSource):
            k = st.branch(el.name, el.p, el.n)
            if el.name == circuit.input_name:
                excite.append((k, el.ac))
        elif isinstance(el, ISource):
            if el.name == circuit.input_name:
                if el.into in node_index:
                    excite.append((node_index[el.into], el.ac))
                if el.out_of in node_index:
                    excite.append((node_index[el.out_of], -el.ac))
        elif isinstance(el, VCCS):
            st.transconductance(el.p, el.n, el.cp, el.cn, el.gm)
        elif isinstance(el, VCVS):
            k = st.branch(el.name, el.p, el.n)
            st.g(k, st._i(el.cp), -el.gain)
            st.g(k, st._i(el.cn), el.gain)
        elif isinstance(el, (CCCS, CCVS)):
            deferred.append(el)
        else:
            raise TypeError(f"no stamp for {type(el).__name__}")
    for el in deferred:
        # The sensed branch may be added after the sensing source, so these wait.
        ks = st.branches[el.sensed]
        if isinstance(el, CCCS):
            st.g(st._i(el.p), ks, el.gain)
            st.g(st._i(el.n), ks, -el.gain)
        else:
            k = st.branch(el.name, el.p, el.n)
            st.g(k, ks, -el.r)
    size = st.n + len(st.branches)
    triplets = [(np.array(r, dtype=np.intp), np.array(k, dtype=np.intp), np.array(v, dtype=float))
                for r, k, v in ((st.g_rows, st.g_cols, st.g_vals), (st.c_rows, st.c_cols, st.c_vals))]
    b = np.zeros(size)
    for k, v in excite:
        b[k] += v
    c = np.zeros(size)
    p, n = circuit.output_nodes
    if p in node_index:
        c[node_index[p]] += 1.0
    if n in node_index:
        c[node_index[n]] -= 1.0
    return MnaSystem(b, c, MappingProxyType(node_index), MappingProxyType(dict(st.branches)), *triplets)
