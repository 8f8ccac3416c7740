"""The bias of many variants of one design solved at once, for the spread and the search.

A tolerance sample or a candidate value of a bias resistor moves the operating point, so
its small-signal values are not the nominal ones. :class:`BiasBatch` solves the DC
equations of every variant together (Newton–Raphson from the nominal point, one batched
linear solve a step) and turns each variant's point into factors on the derived
small-signal values (g_m, r_π, r_o, C_π ...), which the batched AC evaluator then applies
like any other value's factor. A row may also scale a transistor's own parameters
(:data:`DEVICE_PARAMETERS`: β and I_S of a BJT, V_th and K_P of a MOSFET), named
``"<block>.<parameter>"``; they enter the row's bias and its small-signal values.
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from ..network.elements import Resistor
from ..network.largesignal import bjt_forward_active, mos_current, mos_saturated
from ..solve.dcop import DcEquations
from .biasslopes import RAW_SLICE, VOLTAGES, dc_pattern, device_index, unknowns
from .partvalues import value_of

DEVICE_PARAMETERS = {"bjt": ("beta", "isat"), "mosfet": ("vth", "kp")}
"""A biased transistor's own parameters a row may scale (its transport or square-law model's)."""


def device_parameter(circuit, name: str):
    """(block, parameter) when ``name`` is ``"<block>.<parameter>"`` of a block biased from
    ``circuit`` and one of :data:`DEVICE_PARAMETERS`; else None.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    name : str
        A column name of a spread or a search (``"Q1.beta"``).
    """
    block, _, key = name.partition(".")
    large = circuit.large_blocks.get(block)
    return (large, key) if large is not None and key in DEVICE_PARAMETERS[large.kind] else None


class BiasBatch:
    """Re-solves the bias of a design for rows of value factors.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
        A circuit with blocks biased from it and its operating point solved.
    names : sequence of str
        The element names whose factors the rows hold (the spread's or the search's).

    Attributes
    ----------
    derived : tuple of str
        Element names of the derived small-signal values it gives factors for.
    """

    def __init__(self, circuit, names) -> None:
        self._circuit = circuit
        self._eqs = DcEquations(circuit)
        self._x0 = unknowns(self._eqs, circuit.operating_point)
        dc = {el.name for el in circuit.dc_elements()}
        self._names = tuple(names)
        self._dc_cols = [k for k, n in enumerate(self._names) if n in dc]
        patterns = [dc_pattern(circuit, self._eqs, self._names[k]) for k in self._dc_cols]
        self._patterns = np.array([p for p, _ in patterns]).reshape(len(patterns), self._eqs.n, self._eqs.n)
        self._p0 = np.array([p0 for _, p0 in patterns])
        self._inverse = np.array([isinstance(circuit.elements[self._names[k]], Resistor) for k in self._dc_cols])
        self._device_cols = [(k, found) for k, n in enumerate(self._names)
                             if (found := device_parameter(circuit, n)) is not None]
        derived = []
        for large in circuit.large_blocks.values():
            for key in large.model.small_signal(large.name, _point_volts(self._eqs, large, self._x0)):
                name = f"{large.name}.{key}"
                if name in circuit.elements and name not in dc:
                    derived.append(name)
        self.derived = tuple(derived)

    def apply(self, factors: np.ndarray, columns) -> tuple:
        """Factors on the derived values for each row, from its own solved bias.

        Parameters
        ----------
        factors : numpy.ndarray
            (m, len(names)) value multipliers, in the order of ``names``.
        columns : Mapping[str, int]
            Element name -> its column in the returned factors (every derived value has one).

        Returns
        -------
        (numpy.ndarray, numpy.ndarray)
            The factors with each derived value's column multiplied by (its value at the row's
            bias) / (its nominal value), and a (m,) mask of the rows whose bias settled with
            every transistor in its amplifying region (the others are not an amplifier as
            drawn: their figures should not count).
        """
        f = np.array(factors, dtype=float)
        m = f.shape[0]
        if self._dc_cols:
            scale = f[:, self._dc_cols]
            p = self._p0 * np.where(self._inverse, 1.0 / scale, scale)
            G = self._eqs.G + np.einsum("mk,kij->mij", p - self._p0, self._patterns)
        else:
            G = np.broadcast_to(self._eqs.G, (m, self._eqs.n, self._eqs.n))
        scaled = self._device_factors(f)
        devices = self._eqs.devices.per_row(self._row_factors(scaled, m)) if scaled else None
        x, ok = self._eqs.solve_batch(G, self._x0, devices=devices)
        xe = np.concatenate([np.where(ok[:, None], x, self._x0), np.zeros((m, 1))], axis=1)
        raw = self._eqs.devices.raw(xe)
        for large in self._circuit.large_blocks.values():
            k = device_index(self._eqs, large)
            volts = {key: v[:, k] for key, v in zip(VOLTAGES[large.kind], raw[RAW_SLICE[large.kind]])}
            own = scaled.get(large.name, {})
            model = large.model if not own else replace(large.model, params=replace(
                large.model.params, **{key: getattr(large.model.params, key) * g for key, g in own.items()}))
            row = replace(large, model=model)
            ok &= _in_region(row, volts)
            values = model.small_signal(large.name, volts)
            for key, y in values.items():
                name = f"{large.name}.{key}"
                if name in columns and name in self.derived:
                    f[:, columns[name]] *= y / value_of(self._circuit.elements[name])
        return f, ok & np.all(np.isfinite(f), axis=1)


    def _device_factors(self, f: np.ndarray) -> dict:
        """Block name -> parameter -> (m,) factors of the device columns in ``f``."""
        out: dict = {}
        for k, (large, key) in self._device_cols:
            out.setdefault(large.name, {})[key] = f[:, k]
        return out

    def _row_factors(self, scaled: dict, m: int) -> dict:
        """The solver's (m, devices) multipliers of each scaled parameter."""
        dev = self._eqs.devices
        out = {}
        for name, params in scaled.items():
            kind_names = dev.bjt_names if name in dev.bjt_names else dev.mos_names
            i = kind_names.index(name)
            for key, g in params.items():
                if key not in out:
                    out[key] = np.ones((m, len(kind_names)))
                out[key][:, i] = g
        return out


def _point_volts(eqs: DcEquations, large, x) -> dict:
    raw = eqs.devices.raw(np.append(x, 0.0))
    k = device_index(eqs, large)
    return {key: float(v[k]) for key, v in zip(VOLTAGES[large.kind], raw[RAW_SLICE[large.kind]])}


def _in_region(large, volts) -> np.ndarray:
    """Per row, whether the device is forward active (BJT) or saturated (MOSFET)."""
    if large.kind == "bjt":
        return bjt_forward_active(volts["vbe"], volts["vbc"])
    p = large.model.params
    *_, vth = mos_current(volts["vgs"], volts["vds"], volts["vbs"], p.vth, p.kp, p.lam, p.gamma, p.phi)
    return mos_saturated(volts["vgs"], volts["vds"], vth)
