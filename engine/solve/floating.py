"""Whether the network's d.c. equations have one solution, judged on the equations themselves.

A node is floating only when the d.c. nodal matrix (capacitors open, inductors shorted, the
independent sources zeroed) is singular: controlled sources count, so a follower's output
held only by its transistor's transconductance and a load capacitor is solvable. When the
matrix is singular its null space says which unknowns are free, and so which nodes float.
"""

from __future__ import annotations

import numpy as np
import scipy.linalg as la

from ..core.errors import CircuitError
from .timeconstants import conductance, try_factor

SINGULAR = 1e-13
"""A singular value below this fraction of the largest is zero: the matrix is singular."""
_SHARE = 1e-6
"""An unknown whose null-vector entry is below this fraction of the largest does not float."""


def _shown(names, limit=6):
    names = sorted(set(names))
    more = len(names) - limit
    return ", ".join(names[:limit]) + (f" and {more} more" if more > 0 else "")


def _null_space(G) -> np.ndarray:
    """Columns spanning the null space of the dense ``G`` (empty when it is regular).

    Rows and columns are first scaled to a largest entry of 1, so a network whose
    conductances span many decades is not taken for a singular one.
    """
    G = np.asarray(G)
    rows = np.abs(G).max(axis=1)
    rows[rows == 0] = 1.0
    M = G / rows[:, None]
    cols = np.abs(M).max(axis=0)
    cols[cols == 0] = 1.0
    u, s, vt = la.svd(M / cols[None, :])
    if s.size == 0 or s[0] == 0:
        return np.eye(G.shape[0])
    # Null vectors of the scaled matrix, taken back to the unknowns (column scaling).
    return (vt[s <= SINGULAR * s[0]] / cols[None, :]).T


def check_dc_solvable(circuit, system) -> None:
    """Raise a :class:`CircuitError` naming the floating nodes when the d.c. equations are singular.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    system : bandsketch.engine.solve.mna.MnaSystem
        Its full network; ``G`` is the d.c. nodal matrix.

    Raises
    ------
    CircuitError
        With ``nodes`` (the floating ones, from the null space) and ``parts`` (what touches them).
    """
    # LU refuses an exactly singular matrix; a regular one, however badly scaled, passes.
    if try_factor(conductance(system)) is not None:
        return
    null = _null_space(system.dense_G)
    if null.shape[1] == 0:
        return
    weight = np.abs(null).max(axis=1)
    free = weight > _SHARE * weight.max()
    names = {i: node for node, i in system.node_index.items()}
    nodes = [names[i] for i in np.flatnonzero(free) if i in names]
    owner = {el.name: (el.owner or el.name) for el in circuit.elements.values()}
    if nodes:
        parts = [owner[el.name] for el in circuit.elements.values() if set(el.nodes) & set(nodes)]
        raise CircuitError(
            f"Node {_shown(nodes)} has no DC path to ground (it touches only {_shown(parts)}): add a "
            "resistor to ground or a bias path, or merge capacitors that sit in series.",
            parts=tuple(dict.fromkeys(parts)), nodes=tuple(nodes))
    branches = {i: name for name, i in system.branch_index.items()}
    parts = list(dict.fromkeys(owner[branches[i]] for i in np.flatnonzero(free) if i in branches))
    raise CircuitError(f"The currents of {_shown(parts)} are not fixed by the network (a loop of ideal "
                       "sources or inductors): put a resistance in the loop or remove one of them.",
                       parts=tuple(parts))
