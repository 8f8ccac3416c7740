"""An :class:`~bandsketch.engine.solve.analysis.Analysis` as plain JSON-ready data: what
:meth:`Analysis.to_dict` returns and ``bandsketch analyze --json`` prints
(``docs/schemas/analysis.schema.json`` describes it)."""

from __future__ import annotations

import math

import numpy as np

from ..core.values import db_unit
from .mna import SHORT

_ELEMENT_UNITS = {"capacitance": "F", "inductance": "H", "resistance": "Ω", "time_constant": "s",
                  "share": "1", "gain_shorted": None, "gain_opened": None, "midband_reactance": "Ω",
                  "midband_resistance": "Ω", "f_zero": "Hz"}


def json_number(x):
    """A float for JSON: None for None, inf and nan (JSON has no infinity).

    Parameters
    ----------
    x : float or None
        The value, in its unit (SI, as the key it goes under names it).
    """
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def _complex_list(values):
    return None if values is None else [[json_number(v.real), json_number(v.imag)] for v in np.asarray(values, complex)]


def _element(r) -> dict:
    out = {"name": r.name, "nodes": list(r.nodes), "band": r.band, "pinned": r.pinned, "state": r.state,
           "state_reason": r.state_reason, "pole_zero_pair": r.pole_zero_pair,
           "acts_in_band": r.acts_in_band, "reason": r.reason}
    for key in _ELEMENT_UNITS:
        if hasattr(r, key):
            out[key] = json_number(getattr(r, key))
    return out


ANALYSIS_FORMAT = "bandsketch-analysis"
"""The ``format`` of the analysis JSON (``docs/schemas/analysis.schema.json`` describes it)."""
ANALYSIS_FORMAT_VERSION = 1
"""Its ``version``: raised when a key changes meaning or goes away (new keys keep it)."""


def analysis_to_dict(a) -> dict:
    """Every field of ``a`` as plain JSON-ready data.

    ``format`` and ``version`` name the layout (:data:`ANALYSIS_FORMAT`,
    :data:`ANALYSIS_FORMAT_VERSION`); the other keys are the attribute names; ``units`` maps each key to its unit (the gain unit is
    ``V/V`` or ``V/A``). Complex values are ``[re, im]`` pairs; a value that is infinite or
    absent is ``null`` (an inductor that sees an open circuit has ``resistance: null`` and
    ``time_constant: 0``). ``midband_states`` lists the elements shorted and opened in the
    mid-band network: every test picture is that network with its own element replaced by
    the test source, and the sources in ``zeroed`` zeroed.

    Parameters
    ----------
    a : bandsketch.engine.solve.analysis.Analysis
    """
    gain = a.gain_unit
    states = {"shorted": [], "opened": []}
    for r in a.elements.values():
        states["shorted" if r.state == SHORT else "opened"].append(r.name)
    return {
        "format": ANALYSIS_FORMAT,
        "version": ANALYSIS_FORMAT_VERSION,
        "title": a.title,
        "gain_unit": gain,
        "midband_gain": json_number(a.midband_gain),
        "midband_gain_db": json_number(20 * math.log10(abs(a.midband_gain))),
        "midband_frequency": json_number(a.midband_frequency),
        "b1": json_number(a.b1),
        "b2": json_number(a.b2),
        "high_time_constants": _complex_list(a.high_time_constants),
        "f_high_estimate": json_number(a.f_high_estimate),
        "f_high_estimate_2nd": json_number(a.f_high_estimate_2nd),
        "f_high_exact": json_number(a.f_high_exact),
        "f_high_ratio": json_number(a.f_high_ratio),
        "omega_low_estimate": json_number(a.omega_low_estimate),
        "f_low_estimate": json_number(a.f_low_estimate),
        "f_low_estimate_squares": json_number(a.f_low_estimate_squares),
        "f_low_estimate_sum": json_number(a.f_low_estimate_sum),
        "f_low_exact": json_number(a.f_low_exact),
        "f_low_ratio": json_number(a.f_low_ratio),
        "dominant_high": a.dominant_high,
        "dominant_low": a.dominant_low,
        "capacitors": [_element(r) for r in a.capacitors.values()],
        "inductors": [_element(r) for r in a.inductors.values()],
        "midband_states": states,
        "zeroed": list(a.sources),
        "warnings": a.warnings,
        "poles": _complex_list(a.poles),
        "zeros": _complex_list(a.zeros),
        "roots_note": a.roots_note,
        "operating_point": _operating_point(a.operating_point),
        "units": {
            "midband_gain": gain, "midband_gain_db": db_unit(gain), "midband_frequency": "Hz", "b1": "s", "b2": "s²",
            "high_time_constants": "s", "f_high_estimate": "Hz", "f_high_estimate_2nd": "Hz",
            "f_high_exact": "Hz", "f_low_estimate": "Hz", "f_low_estimate_squares": "Hz",
            "f_low_estimate_sum": "Hz", "f_low_exact": "Hz", "omega_low_estimate": "rad/s",
            "f_high_ratio": "1", "f_low_ratio": "1", "poles": "rad/s", "zeros": "rad/s",
            "node_voltages": "V", "branch_currents": "A", "ic": "A", "ib": "A", "id": "A", "vbe": "V",
            "vce": "V", "vbc": "V", "vgs": "V", "vds": "V", "vbs": "V", "vth": "V", "gm": "S", "gmb": "S",
            "rpi": "Ω", "ro": "Ω", "rb": "Ω", "cpi": "F", "cmu": "F", "ccs": "F", "cgs": "F", "cgd": "F",
            "cdb": "F", "csb": "F", "vt": "V",
            **{key: unit or gain for key, unit in _ELEMENT_UNITS.items()},
        },
    }


def _operating_point(point) -> dict | None:
    """The DC operating point as JSON-ready data (None when nothing is biased from the circuit)."""
    if point is None:
        return None
    devices = {}
    for name, b in point.devices.items():
        keys = ("ic", "ib", "vbe", "vce", "vbc") if b.kind == "bjt" else ("id", "vgs", "vds", "vbs", "vth")
        devices[name] = {"kind": b.kind, "region": b.region, **{k: json_number(b[k]) for k in keys},
                         "small_signal": {k: json_number(v) for k, v in b.small_signal.items()}}
    return {"node_voltages": {k: json_number(v) for k, v in point.node_voltages.items()},
            "branch_currents": {k: json_number(v) for k, v in point.branch_currents.items()},
            "devices": devices, "warnings": list(point.warnings), "method": point.method,
            "iterations": point.iterations}
