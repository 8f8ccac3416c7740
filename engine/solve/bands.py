"""Which band each capacitor and inductor belongs to: the short/open gain test at mid band.

At the mid-band frequency every element is shorted and opened in turn, the others left as
they are. Both states are rank-one changes of A = G + jωC along the element's port vector
u, so one factorisation gives them all (Sherman–Morrison): with x = A⁻¹b, y = A⁻ᵀc and
z = uᵀA⁻¹u, removing the element's own term t (a capacitor opened, an inductor shorted)
gives H + t·(yᵀu)(uᵀx)/(1 − t·z), and letting the term grow without bound (a capacitor
shorted, an inductor opened) gives the exact limit H − (yᵀu)(uᵀx)/z.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..core.band import Band
from ..core.graphs import Pieces, bridges
from ..network.elements import CCCS, CCVS, VCCS, VCVS, Capacitor, Inductor, ISource, VSource
from ..core.errors import CircuitError
from .mna import OPEN, SHORT, build_system
from .response import frequency_response, is_dense
from .timeconstants import factorize, port_columns, port_diagonal

NEUTRAL_DB = 0.01
"""An element whose two states differ by less than this (dB) in gain sets no corner."""
IN_BAND_DB = 1.0
"""An element both of whose states lower the gain by more than this (dB) acts inside the band."""
ROUNDOFF = 1e-10
CANCELLED = 1e-8
"""Where 1 − t·z of the Sherman–Morrison update is this small, the element is nearly a short
to the network it sees (a 1 F capacitor on a 1 TΩ node) and the difference has lost its digits:
the network without it is solved directly instead (one more factorisation)."""
"""A state's gain below this fraction of the largest is rounding error of an exact zero."""


@dataclass(frozen=True)
class BandTest:
    """The short/open gain test of one element at the mid-band frequency.

    Attributes
    ----------
    name : str
        The element.
    gain_shorted, gain_opened : float
        |H| with the element shorted, opened (V/V, or V/A for a current input), the
        others as they are at the test frequency.
    gain_as_is : float
        |H| with every element as it is.
    band : Band
        The test's verdict.
    acts_in_band : bool
        Both states lower the gain by more than :data:`IN_BAND_DB`.
    fixed : str or None
        Why one of the states is undefined (the element sits across an ideal voltage
        source, or in series with an ideal current source); such an element is neutral.
    """

    name: str
    gain_shorted: float
    gain_opened: float
    gain_as_is: float
    band: Band
    acts_in_band: bool
    fixed: str | None = None


def _db(ratio: float) -> float:
    return 20 * math.log10(ratio) if ratio > 0 else -math.inf


def fixed_elements(circuit) -> dict[str, str]:
    """Elements one of whose states is undefined, with the reason.

    A capacitor whose nodes are joined by ideal voltage sources cannot be shorted; an
    inductor whose removal leaves its nodes joined only through current sources cannot be
    opened. Either one carries what the sources impose and is reported as neutral.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    """
    els = list(circuit.elements.values())
    held = Pieces()
    for el in els:
        if isinstance(el, (VSource, VCVS, CCVS)):
            held.join(el.nodes[0], el.nodes[1])
    joined = {node: held.root(node) for piece in held.pieces() for node in piece}
    cut = set()
    if any(isinstance(el, Inductor) for el in els):
        cut = bridges(circuit.nodes(), [(el.nodes[0], el.nodes[1]) for el in els
                                        if not isinstance(el, (ISource, VCCS, CCCS))])
    out = {}
    for el in els:
        if isinstance(el, Capacitor) and el.a in joined and joined.get(el.b) == joined[el.a]:
            out[el.name] = "it sits across an ideal voltage source, which fixes its voltage"
        elif isinstance(el, Inductor) and frozenset(el.nodes) in cut:
            out[el.name] = "it is in series with an ideal current source, which fixes its current"
    return out


def parallel_groups(reactive) -> dict[frozenset, list]:
    """Capacitors by the pair of nodes they join; a group of two or more is in parallel.

    Parameters
    ----------
    reactive : sequence of Capacitor or Inductor
    """
    groups: dict[frozenset, list] = {}
    for el in reactive:
        if isinstance(el, Capacitor):
            groups.setdefault(frozenset(el.nodes), []).append(el)
    return groups


def parallel_capacitance(reactive) -> dict[str, float]:
    """Capacitor name -> total capacitance (F) of it and the capacitors in parallel with it.

    Parameters
    ----------
    reactive : sequence of Capacitor or Inductor
        Values in F (inductors are passed over).
    """
    return {el.name: sum(m.value for m in group)
            for group in parallel_groups(reactive).values() for el in group}


def verdict(gain_shorted: float, gain_opened: float, gain_as_is: float, low_state_is_open: bool) -> Band:
    """The band the test points to.

    Parameters
    ----------
    gain_shorted, gain_opened, gain_as_is : float
        |H| in the two states and with the element as it is.
    low_state_is_open : bool
        True for a capacitor (open at low frequencies), False for an inductor (a short).

    Notes
    -----
    An element whose low-frequency state lowers the gain while its high-frequency state
    leaves it as it is belongs to the low band, and the other way round for the high band;
    put generally, the state nearer to the gain as it is says where the element sits in the
    mid band. This also places a bypass whose opening *raises* the gain a little: it is a
    short at mid band, so it is low-band (a pole–zero pair, not a corner). When both
    states stay within :data:`NEUTRAL_DB` of the gain as it is, the element is neutral.
    """
    low_state, high_state = (gain_opened, gain_shorted) if low_state_is_open else (gain_shorted, gain_opened)
    if gain_as_is == 0:
        return Band.NEUTRAL
    off_low = abs(_db(low_state / gain_as_is))
    off_high = abs(_db(high_state / gain_as_is))
    if off_low < NEUTRAL_DB and off_high < NEUTRAL_DB:
        return Band.NEUTRAL
    return Band.LOW if off_high < off_low else Band.HIGH


def band_tests(system, reactive, f_test: float, fixed) -> dict[str, BandTest]:
    """Short/open gain test of every capacitor and inductor at ``f_test`` (Hz).

    Parameters
    ----------
    system : bandsketch.engine.solve.mna.MnaSystem
        The full network, every element as it is.
    reactive : sequence of Capacitor or Inductor
        The elements to test.
    f_test : float
        Test frequency in Hz.
    fixed : Mapping[str, str]
        :func:`fixed_elements` of the circuit: these are neutral without a test.

    Returns
    -------
    dict
        Name -> :class:`BandTest`.
    """
    w = 2 * math.pi * f_test
    A = system.dense_G + 1j * w * system.dense_C if is_dense(system) else (system.G + 1j * w * system.C).tocsc()
    lu = factorize(A, f"at the test frequency {f_test:g} Hz")
    U = port_columns(system, reactive)
    # One factorisation: the input and every port in one solve, the output in the transposed one.
    if isinstance(U, np.ndarray):
        X = lu.solve(np.column_stack((system.b, U)))
        x = X[:, 0]
        z = np.einsum("ij,ij->j", U, X[:, 1:])
    else:
        x = lu.solve(system.b)
        z = port_diagonal(lu, U)
    y = lu.solve(system.c, trans="T")
    H = complex(system.c @ x)
    p = U.T @ x
    q = U.T @ y
    # Capacitors in parallel share one port vector; each is tested with its partners, or
    # each alone would look neutral while together they are a coupling or bypass.
    together = parallel_capacitance(reactive)
    t = np.array([1j * w * together[el.name] if isinstance(el, Capacitor) else -1j * w * el.value
                  for el in reactive])
    out = {}
    for k, el in enumerate(reactive):
        if el.name in fixed:
            out[el.name] = BandTest(el.name, abs(H), abs(H), abs(H), Band.NEUTRAL, False, fixed[el.name])
            continue
        if abs(1 - t[k] * z[k]) < CANCELLED:
            removed = _removed_directly(system, A, U[:, [k]], t[k])
        else:
            removed = abs(H + t[k] * q[k] * p[k] / (1 - t[k] * z[k]))
        unbounded = abs(H - q[k] * p[k] / z[k])
        top = max(removed, unbounded, abs(H))
        removed, unbounded = (float(v) if v >= ROUNDOFF * top else 0.0 for v in (removed, unbounded))
        is_cap = isinstance(el, Capacitor)
        shorted, opened = (unbounded, removed) if is_cap else (removed, unbounded)
        band = verdict(shorted, opened, abs(H), is_cap)
        lower = _db(abs(H)) - IN_BAND_DB
        acts = abs(H) > 0 and _db(shorted) < lower and _db(opened) < lower
        out[el.name] = BandTest(el.name, shorted, opened, abs(H), band, bool(acts))
    return out


def _removed_directly(system, A, u, t) -> float:
    """|H| with the element of admittance ``t`` and port column ``u`` taken out of ``A``."""
    reduced = A - t * np.outer(u, u) if isinstance(A, np.ndarray) else (A - t * (u @ u.T)).tocsc()
    x = factorize(reduced, "with one element removed").solve(system.b)
    return abs(complex(system.c @ x))


@dataclass(frozen=True)
class GroupTest:
    """The short/open gain test of capacitors that can only act together.

    Attributes
    ----------
    names : tuple of str
        The capacitors, each inconclusive alone: they share nodes (other than ground), so
        with one of them opened or shorted the others still carry or still bypass the signal
        (a loop, a pair of paths, a series chain).
    gain_shorted, gain_opened, gain_as_is : float
        |H| at the test frequency with all of them shorted (a loop keeps one member open:
        its ends are already joined), all opened, and as they are (gain unit).
    band : Band
        What they are together: ``Band.LOW`` when opening them all costs gain, ``Band.HIGH``
        when shorting them all does, ``Band.NEUTRAL`` when neither does.
    """

    names: tuple[str, ...]
    gain_shorted: float
    gain_opened: float
    gain_as_is: float
    band: Band


def _neutral_groups(capacitors) -> list[list]:
    """Capacitors joined by nodes other than ground, in groups of two or more, in circuit order."""
    joined = Pieces()
    for el in capacitors:
        if "0" not in el.nodes:
            joined.join(el.a, el.b)
    groups: dict = {}
    for el in capacitors:
        if "0" not in el.nodes:
            groups.setdefault(joined.root(el.a), []).append(el)
    return [members for members in groups.values() if len(members) >= 2]


def group_tests(circuit, system, capacitors, f_test: float) -> list[GroupTest]:
    """The gain test of every group of ``capacitors`` (:func:`_neutral_groups`) at ``f_test`` (Hz).

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    system : bandsketch.engine.solve.mna.MnaSystem
        The full network, every element as it is.
    capacitors : sequence of Capacitor
        The capacitors the one-at-a-time test left inconclusive.
    f_test : float
        Hz, the test frequency.

    Notes
    -----
    Each group costs two factorisations at one frequency (all opened, all shorted); the
    shorts skip a member whose ends the others already join, so a loop stays solvable.
    """
    as_is = abs(frequency_response(system, [f_test])[0])
    out = []
    for members in _neutral_groups(capacitors):
        loop = Pieces()
        shorts = {el.name: SHORT if loop.join(el.a, el.b) else OPEN for el in members}
        try:
            shorted, opened = (abs(frequency_response(build_system(circuit, states), [f_test])[0])
                               for states in (shorts, {el.name: OPEN for el in members}))
        except CircuitError:
            continue  # the shorts close a loop with ideal sources: no state to compare
        out.append(GroupTest(tuple(el.name for el in members), float(shorted), float(opened), float(as_is),
                             verdict(shorted, opened, as_is, True)))
    return out
