"""The values the nodal equations depend on, named by the user's parts, and their stamps.

Every primitive element carries one number (a resistance, a capacitance, a g_m ...). The
sensitivity, tolerance and what-if code all vary those numbers, so this module says once
which numbers there are (:func:`part_values`) and how each one enters G and C
(:func:`parametric_system`). The stamps themselves stay in :mod:`bandsketch.engine.solve.mna`: each element's
pattern is read back from two :func:`bandsketch.engine.solve.mna.build_system` calls that differ only in
that element's value, which is exact because every stamp is linear in its coefficient.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from ..network.elements import CCCS, CCVS, VCCS, VCVS, Capacitor, Inductor, Resistor
from ..solve.mna import build_system
from ..design.parts import KINDS

_VALUE_ATTR = {Resistor: ("value", "Ω"), Capacitor: ("value", "F"), Inductor: ("value", "H"),
               VCCS: ("gm", "S"), VCVS: ("gain", "V/V"), CCCS: ("gain", "A/A"), CCVS: ("r", "Ω")}
"""Element type -> the attribute holding its number, and that number's unit."""

_MODEL_CONSTANTS = {"gin", "rp"}
"""Block-internal elements that are modelling scaffolding (the op-amp's unit pole node), not
values a part has: they never vary."""

_OPAMP_LABELS = {"a0": "A₀", "cp": "open-loop pole C (1/2πf_p)", "rin": "r_in", "rout": "r_out"}


@dataclass(frozen=True)
class PartValue:
    """One number of the network, as the designer knows it.

    Attributes
    ----------
    element : str
        The primitive it sits in (``"R1"``, ``"Q1.gm"``).
    part : str
        The part on the sheet it belongs to (``"R1"``, ``"Q1"``).
    key : str
        Which value of the part (``"value"``, ``"gm"``, ``"rpi"`` ...).
    label : str
        How a table names it (``"R1"``, ``"Q1 gₘ"``).
    unit : str
        SI unit of :attr:`nominal` (``"Ω"``, ``"F"``, ``"S"`` ...).
    nominal : float
        Its value in the circuit as analysed, in :attr:`unit`.
    kind : str
        The part's kind (``"resistor"``, ``"bjt"`` ...), for defaults by kind.
    """

    element: str
    part: str
    key: str
    label: str
    unit: str
    nominal: float
    kind: str


def _kind_of(el, circuit) -> str:
    if el.owner is not None:
        return circuit.blocks[el.owner].kind
    return {Resistor: "resistor", Capacitor: "capacitor", Inductor: "inductor", VCCS: "vccs",
            VCVS: "vcvs", CCCS: "cccs", CCVS: "ccvs"}[type(el)]


def _label(part: str, key: str, kind: str) -> str:
    if key == "value":
        return part
    if kind == "opamp":
        return f"{part} {_OPAMP_LABELS.get(key, key)}"
    try:
        return f"{part} {KINDS[kind].field(key).label}"
    except KeyError:
        return f"{part} {key}"


def part_values(circuit) -> tuple:
    """Every number of ``circuit`` that a part really has, in the order the elements were added.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit

    Returns
    -------
    tuple of PartValue
        One per primitive with a value, op-amp modelling constants left out.
    """
    out = []
    for el in circuit.elements.values():
        spec = _VALUE_ATTR.get(type(el))
        if spec is None:
            continue
        attr, unit = spec
        if el.owner is not None:
            key = el.name.split(".", 1)[1]
            if key in _MODEL_CONSTANTS:
                continue
            part = el.owner
        else:
            key, part = ("value" if attr == "value" else attr), el.name
        kind = _kind_of(el, circuit)
        out.append(PartValue(el.name, part, key, _label(part, key, kind), unit, float(getattr(el, attr)), kind))
    return tuple(out)


def stamp_coefficient(element, value: float) -> float:
    """The number an element's stamp is linear in: 1/R for a resistor, the value otherwise.

    Parameters
    ----------
    element : Resistor, Capacitor, Inductor or a controlled source
        The element (its type decides).
    value : float
        Its value, SI units (Ω, F, H, S or a gain).

    Returns
    -------
    float
        1/value (S) for a resistor, else the value itself.
    """
    return 1.0 / value if isinstance(element, Resistor) else float(value)


def value_of(element) -> float:
    """The number an element carries, as :func:`part_values` reads it.

    Parameters
    ----------
    element : Resistor, Capacitor, Inductor or a controlled source

    Returns
    -------
    float
        Its value, SI units (Ω, F, H, S or a gain).
    """
    return float(getattr(element, _VALUE_ATTR[type(element)][0]))


def with_value(element, value: float):
    """A copy of ``element`` holding ``value`` (SI units) instead of its own number.

    Parameters
    ----------
    element : Resistor, Capacitor, Inductor or a controlled source
        A resistor, capacitor, inductor or controlled source.
    value : float
        The new value in the element's SI unit (Ω, F, H, S, V/V ...).
    """
    return replace(element, **{_VALUE_ATTR[type(element)][0]: value})


def _value_for_coefficient(element, coefficient: float) -> float:
    return 1.0 / coefficient if isinstance(element, Resistor) else coefficient


@dataclass(frozen=True)
class ParametricSystem:
    """Nodal matrices as an affine function of chosen elements' stamp coefficients.

    ``G(p) = G_rest + Σ_k p_k G_patterns[k]`` and likewise C, with ``p_k`` the stamp
    coefficient of element k (1/R, C, L, g_m, gain). All arrays are dense: these systems are
    small, and batches of them are solved at once.

    Attributes
    ----------
    names : tuple of str
        The varied elements, in pattern order.
    G_rest, C_rest : numpy.ndarray
        (n, n) matrices of everything not varied (S / F; branch rows dimensionless / H).
    G_patterns, C_patterns : numpy.ndarray
        (k, n, n) derivative of G and C with respect to each coefficient.
    coefficients : numpy.ndarray
        (k,) nominal stamp coefficients.
    b, c : numpy.ndarray
        Input excitation and output selector, as in :class:`bandsketch.engine.solve.mna.MnaSystem`.
    """

    names: tuple
    G_rest: np.ndarray
    C_rest: np.ndarray
    G_patterns: np.ndarray
    C_patterns: np.ndarray
    coefficients: np.ndarray
    b: np.ndarray
    c: np.ndarray

    def matrices(self, coefficients: np.ndarray) -> tuple:
        """G and C for a batch of coefficient vectors.

        Parameters
        ----------
        coefficients : numpy.ndarray
            (m, k) stamp coefficients, one row per sample.

        Returns
        -------
        (numpy.ndarray, numpy.ndarray)
            G and C, each (m, n, n).
        """
        p = np.asarray(coefficients, dtype=float)
        G = self.G_rest + np.einsum("mk,kij->mij", p, self.G_patterns)
        C = self.C_rest + np.einsum("mk,kij->mij", p, self.C_patterns)
        return G, C


def parametric_system(circuit, names, states=None) -> ParametricSystem:
    """Read each named element's stamp pattern out of :func:`bandsketch.engine.solve.mna.build_system`.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    names : sequence of str
        Elements to vary (each must carry a value; see :func:`part_values`).
    states : Mapping[str, str], optional
        Shorted or opened reactances, as for :func:`bandsketch.engine.solve.mna.build_system`. A varied
        element that is shorted or opened gets a zero pattern.

    Returns
    -------
    ParametricSystem
    """
    base = build_system(circuit, states)
    G0, C0 = base.dense_G, base.dense_C
    k, n = len(names), base.size
    Gp, Cp = np.zeros((k, n, n)), np.zeros((k, n, n))
    coefs = np.zeros(k)
    for i, name in enumerate(names):
        el = circuit.elements[name]
        p0 = stamp_coefficient(el, getattr(el, _VALUE_ATTR[type(el)][0]))
        # Doubling is exact in binary, so the difference is the pattern to rounding of the sums.
        p1 = 2.0 * p0 if p0 != 0 else 1.0
        other = build_system(circuit.with_elements({name: with_value(el, _value_for_coefficient(el, p1))}), states)
        Gp[i] = (other.dense_G - G0) / (p1 - p0)
        Cp[i] = (other.dense_C - C0) / (p1 - p0)
        coefs[i] = p0
    G_rest = G0 - np.einsum("k,kij->ij", coefs, Gp)
    C_rest = C0 - np.einsum("k,kij->ij", coefs, Cp)
    return ParametricSystem(tuple(names), G_rest, C_rest, Gp, Cp, coefs, base.b.copy(), base.c.copy())


def coefficients_for(system: ParametricSystem, circuit, factors: np.ndarray) -> np.ndarray:
    """Stamp coefficients of a batch in which each varied value is scaled by a factor.

    Parameters
    ----------
    system : ParametricSystem
    circuit : bandsketch.engine.network.circuit.Circuit
        The circuit the system was read from (to know which elements are resistors).
    factors : numpy.ndarray
        (m, k) value multipliers (dimensionless, 1 = nominal), one row per sample.

    Returns
    -------
    numpy.ndarray
        (m, k) coefficients: a resistor's is 1/(factor·R), every other's factor·value.
    """
    f = np.asarray(factors, dtype=float)
    inverse = np.array([isinstance(circuit.elements[n], Resistor) for n in system.names], dtype=bool)
    return system.coefficients * np.where(inverse, 1.0 / f, f)

