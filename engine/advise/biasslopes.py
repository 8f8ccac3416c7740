"""How a biased block's small-signal values follow the part values through the bias.

A resistor in a bias network moves the operating point, and with it g_m, r_π, r_o and the
capacitances that depend on the point. With F(x, p) = G(p)·x + f(x) − b = 0 the DC
equations at the solved point x, the implicit function theorem gives
dx/d ln p = −(G + ∂f/∂x)⁻¹ · (∂G/∂ln p)·x, exactly and with one factorisation for every
part. The derived values' own slopes in the junction voltages are central differences of
the device model (their error is O(δ²) with δ = 1 µV; common practice, no source).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..network.elements import Resistor
from ..solve.dcop import DcEquations
from .partvalues import stamp_coefficient, value_of, with_value

VOLT_STEP = 1e-6
"""Junction-voltage step of the model's central differences, V."""

VOLTAGES = {"bjt": ("vbe", "vbc"), "mosfet": ("vgs", "vds", "vbs")}
RAW_SLICE = {"bjt": slice(0, 2), "mosfet": slice(2, 5)}
"""Where each kind's voltages sit in :meth:`DcEquations.devices.raw`'s tuple."""


@dataclass(frozen=True)
class BiasSlopes:
    """d ln y / d ln x of each derived small-signal value y against each part value x.

    Attributes
    ----------
    derived : tuple of str
        Element names of the derived values (``"Q1.gm"``, ``"Q1.rpi"``), in row order.
    values : tuple of str
        Element names of the part values that carry DC current (``"R1"``), in column order.
    matrix : numpy.ndarray
        (len(derived), len(values)) dimensionless slopes: +1 means y rises in proportion to x.
    """

    derived: tuple
    values: tuple
    matrix: np.ndarray


def bias_slopes(circuit, names) -> BiasSlopes | None:
    """The slopes of every derived value of ``circuit``'s biased blocks against ``names``.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
        A circuit whose operating point is solved (its blocks hold the point's values).
    names : sequence of str
        Element names of the part values to differentiate against; those outside the DC
        network (capacitors, inductors, the derived values themselves) are left out.

    Returns
    -------
    BiasSlopes or None
        None when no block is biased from the circuit.
    """
    point = circuit.operating_point
    if point is None or not circuit.large_blocks:
        return None
    eqs = DcEquations(circuit)
    x = unknowns(eqs, point)
    xe = np.append(x, 0.0)
    volts = eqs.devices.raw(xe)
    J, _ = eqs.devices.linearised(volts, eqs.n + 1)
    A = eqs.G + J[:-1, :-1]
    dc = {el.name for el in circuit.dc_elements()}
    values = [n for n in names if n in dc and n in circuit.elements]
    dF = np.column_stack([_residual_slope(circuit, eqs, x, n) for n in values]) if values else np.zeros((eqs.n, 0))
    dx = -np.linalg.solve(A, dF)
    dxe = np.vstack([dx, np.zeros((1, dx.shape[1]))])
    derived, rows = [], []
    for large in circuit.large_blocks.values():
        own = _device_voltage_slopes(eqs, large, dxe)
        k = device_index(eqs, large)
        at = {key: float(v[k]) for key, v in zip(VOLTAGES[large.kind], volts[RAW_SLICE[large.kind]])}
        for key, slope in _log_value_slopes(large, at).items():
            name = f"{large.name}.{key}"
            # r_b is a part value of its own in the DC network, not a value the bias sets.
            if name in circuit.elements and name not in dc:
                derived.append(name)
                rows.append(sum(slope[v] * own[v] for v in own))
    matrix = np.array(rows) if rows else np.zeros((0, len(values)))
    return BiasSlopes(tuple(derived), tuple(values), matrix.reshape(len(derived), len(values)))


def unknowns(eqs: DcEquations, point) -> np.ndarray:
    """The unknowns x of ``eqs`` at a solved point.

    Parameters
    ----------
    eqs : bandsketch.engine.solve.dcop.DcEquations
    point : bandsketch.engine.solve.dcop.OperatingPoint
        A point solved for the same circuit.

    Returns
    -------
    numpy.ndarray
        (n,) node voltages (V) and branch currents (A) in the equations' order.
    """
    x = np.zeros(eqs.n)
    for node, i in eqs.system.node_index.items():
        x[i] = point.node_voltages[node]
    for name, i in eqs.system.branch_index.items():
        x[i] = point.branch_currents[name]
    return x


def dc_pattern(circuit, eqs: DcEquations, name: str) -> tuple:
    """(∂G/∂p, p) of one element in the DC equations, with p its stamp coefficient (1/R ...).

    Doubling the coefficient is exact in binary, so the difference is its pattern.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    eqs : bandsketch.engine.solve.dcop.DcEquations
        The circuit's DC equations.
    name : str
        An element of the DC network with a value.

    Returns
    -------
    (numpy.ndarray, float)
        The (n, n) pattern of the coefficient in G, and the coefficient (S for a resistor).
    """
    el = circuit.elements[name]
    p0 = stamp_coefficient(el, value_of(el))
    doubled = DcEquations(circuit.with_elements({name: with_value(el, 1.0 / (2 * p0) if isinstance(el, Resistor)
                                                                  else 2 * p0)}))
    return (doubled.G - eqs.G) / p0, p0


def _residual_slope(circuit, eqs: DcEquations, x, name) -> np.ndarray:
    """∂F/∂ln x_k = (∂G/∂p_k)·x·(dp_k/d ln x_k)."""
    dG_dp, p0 = dc_pattern(circuit, eqs, name)
    dp_dlnx = -p0 if isinstance(circuit.elements[name], Resistor) else p0
    return dG_dp @ x * dp_dlnx


def device_index(eqs: DcEquations, large) -> int:
    """Where a biased block sits among its kind in ``eqs.devices``.

    Parameters
    ----------
    eqs : bandsketch.engine.solve.dcop.DcEquations
    large : bandsketch.engine.network.circuit.LargeBlock

    Returns
    -------
    int
        Its index among the BJTs or the MOSFETs.
    """
    names = eqs.devices.bjt_names if large.kind == "bjt" else eqs.devices.mos_names
    return names.index(large.name)


def _device_voltage_slopes(eqs: DcEquations, large, dxe) -> dict:
    """Each junction voltage's slope (V per unit ln x) against every part value."""
    k, part = device_index(eqs, large), RAW_SLICE[large.kind]
    # raw() is linear in the unknowns, so it maps their slopes to the voltages' slopes.
    cols = [eqs.devices.raw(dxe[:, j])[part] for j in range(dxe.shape[1])]
    return {key: np.array([c[i][k] for c in cols]) for i, key in enumerate(VOLTAGES[large.kind])}


def _log_value_slopes(large, volts: dict) -> dict:
    """∂ ln y / ∂v for every derived value y of one device, by central differences."""
    base = large.model.small_signal(large.name, volts)
    out = {key: {} for key, y in base.items() if np.isfinite(y) and y != 0}
    for v in volts:
        up = large.model.small_signal(large.name, {**volts, v: volts[v] + VOLT_STEP})
        down = large.model.small_signal(large.name, {**volts, v: volts[v] - VOLT_STEP})
        for key in out:
            hi, lo = up[key], down[key]
            out[key][v] = (np.log(hi / lo) / (2 * VOLT_STEP)) if hi > 0 and lo > 0 and np.isfinite(hi * lo) else 0.0
    return out
