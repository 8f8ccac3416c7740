"""An :class:`~bandsketch.engine.solve.analysis.Analysis` as JSON-ready data and as a readable table
(its sweep as CSV is :func:`bandsketch.engine.present.plotdata.write_response_csv`)."""

from __future__ import annotations

import math

import numpy as np

from ..core.band import Band
from ..solve.mna import SHORT
from ..core.values import db_unit, error_text, format_value
from .biasdata import BIAS_HEADINGS, bias_rows

_ELEMENT_UNITS = {"capacitance": "F", "inductance": "H", "resistance": "Ω", "time_constant": "s",
                  "share": "1", "gain_shorted": None, "gain_opened": None, "midband_reactance": "Ω",
                  "midband_resistance": "Ω", "f_zero": "Hz"}


def _number(x):
    """A float for JSON: None for None, inf and nan (JSON has no infinity)."""
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def _complex_list(values):
    return None if values is None else [[_number(v.real), _number(v.imag)] for v in np.asarray(values, complex)]


def _element(r) -> dict:
    out = {"name": r.name, "nodes": list(r.nodes), "band": r.band, "pinned": r.pinned, "state": r.state,
           "state_reason": r.state_reason, "pole_zero_pair": r.pole_zero_pair,
           "acts_in_band": r.acts_in_band, "reason": r.reason}
    for key in _ELEMENT_UNITS:
        if hasattr(r, key):
            out[key] = _number(getattr(r, key))
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
        "midband_gain": _number(a.midband_gain),
        "midband_gain_db": _number(20 * math.log10(abs(a.midband_gain))),
        "midband_frequency": _number(a.midband_frequency),
        "b1": _number(a.b1),
        "b2": _number(a.b2),
        "high_time_constants": _complex_list(a.high_time_constants),
        "f_high_estimate": _number(a.f_high_estimate),
        "f_high_estimate_2nd": _number(a.f_high_estimate_2nd),
        "f_high_exact": _number(a.f_high_exact),
        "f_high_ratio": _number(a.f_high_ratio),
        "omega_low_estimate": _number(a.omega_low_estimate),
        "f_low_estimate": _number(a.f_low_estimate),
        "f_low_estimate_squares": _number(a.f_low_estimate_squares),
        "f_low_estimate_sum": _number(a.f_low_estimate_sum),
        "f_low_exact": _number(a.f_low_exact),
        "f_low_ratio": _number(a.f_low_ratio),
        "dominant_high": a.dominant_high,
        "dominant_low": a.dominant_low,
        "capacitors": [_element(r) for r in a.capacitors.values()],
        "inductors": [_element(r) for r in a.inductors.values()],
        "midband_states": states,
        "zeroed": list(a.sources),
        "warnings": a.warnings,
        "poles": _complex_list(a.poles),
        "zeros": _complex_list(a.zeros),
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
        devices[name] = {"kind": b.kind, "region": b.region, **{k: _number(b[k]) for k in keys},
                         "small_signal": {k: _number(v) for k, v in b.small_signal.items()}}
    return {"node_voltages": {k: _number(v) for k, v in point.node_voltages.items()},
            "branch_currents": {k: _number(v) for k, v in point.branch_currents.items()},
            "devices": devices, "warnings": list(point.warnings), "method": point.method,
            "iterations": point.iterations}


def _aligned(rows) -> list[str]:
    """Rows of texts as columns, the first row a heading ruled off below."""
    widths = [max(len(row[i]) for row in rows) for i in range(len(rows[0]))]
    lines = []
    for k, row in enumerate(rows):
        lines.append("  ".join(cell.ljust(w) for cell, w in zip(row, widths)).rstrip())
        if k == 0:
            lines.append("  ".join("─" * w for w in widths))
    return lines


def _fmt(x, unit):
    return "—" if x is None else format_value(x, unit)


def _error(estimate, exact):
    text = error_text(estimate, exact)
    return f"(error {text})" if text else ""


ROOTS_LISTED_UP_TO = 40
"""The table lists the exact poles and zeros for circuits up to this many reactive elements
(beyond, the eigenproblem costs more than a table is worth; JSON still has them)."""


def _roots(roots) -> str:
    """Poles or zeros as |s|/2π, slowest first, a right-half-plane one marked."""
    if len(roots) == 0:
        return "none"
    out = []
    for s in sorted(roots, key=abs):
        text = format_value(abs(s) / (2 * math.pi), "Hz")
        if s.imag > 0:
            continue  # a complex pair is listed once
        if s.imag < 0:
            text += f" (complex pair, Q = {abs(s) / (-2 * s.real):.2g})" if s.real != 0 else " (on the jω axis)"
        if s.real > 0:
            text += " (right half-plane)"
        elif s == 0:
            text = "0 Hz (at the origin)"
        out.append(text)
    return ", ".join(out)


def format_table(a, title: str | None = None) -> str:
    """The analysis as a readable text table.

    Elements with band, resistance, time constant and share of their band; the mid-band
    gain in the gain unit and in dB; each corner estimated beside its exact value with the
    estimate's error; the warnings.

    Parameters
    ----------
    a : bandsketch.engine.solve.analysis.Analysis
    title : str, optional
        Heading; the circuit's title by default.
    """
    unit, db = a.gain_unit, db_unit(a.gain_unit)
    lines = [title or a.title, ""]
    gain = f"{a.midband_gain:.4g}".replace("-", "−")
    level = f"{20 * math.log10(abs(a.midband_gain)):.1f}".replace("-", "−")
    lines.append(f"Mid-band gain  {gain} {unit}  ({level} {db}), band test at {format_value(a.midband_frequency, 'Hz')}")
    lines.append("")
    rows = [("Element", "Band", "Mid band", "R", "τ", "Share")]
    for r in a.elements.values():
        band = (r.band + (" (pinned)" if r.pinned else "") + (" *" if r.acts_in_band else "")
                + (" (pair)" if r.pole_zero_pair else ""))
        share = "" if r.band == Band.NEUTRAL else f"{100 * r.share:.1f} %"
        state = "shorted" if r.state == SHORT else "open"
        rows.append((r.name, band, state, _fmt(r.resistance, "Ω"), _fmt(r.time_constant, "s"), share))
    lines += _aligned(rows)
    if any(r.acts_in_band for r in a.elements.values()):
        lines.append("* acts inside the band")
    if any(r.pole_zero_pair for r in a.elements.values()):
        lines.append("(pair) a pole–zero pair: no corner of its own")
    lines.append("")
    lines.append("Mid-band states")
    lines += [f"  {r.name}: {r.state_reason}" for r in a.elements.values()]
    lines.append("")
    corners = [("Upper corner", a.f_high_estimate, a.f_high_exact), ("Lower corner", a.f_low_estimate, a.f_low_exact)]
    for label, est, exact in corners:
        exact_text = _fmt(exact, "Hz") if exact is not None else "none (the gain never falls 3 dB)"
        lines.append(f"{label}  estimated {_fmt(est, 'Hz')}, exact {exact_text}  {_error(est, exact)}".rstrip())
    if a.f_high_estimate_2nd is not None:
        lines.append(f"Upper corner, second order  {_fmt(a.f_high_estimate_2nd, 'Hz')}  "
                     f"{_error(a.f_high_estimate_2nd, a.f_high_exact)}".rstrip())
    b2 = "" if a.b2 is None else f", b2 = {a.b2:.4g} s²"
    lines.append(f"b1 = {_fmt(a.b1, 's')}{b2}")
    if len(a.elements) <= ROOTS_LISTED_UP_TO:
        lines += ["", f"Exact poles   {_roots(a.poles)}", f"Exact zeros   {_roots(a.zeros)}"]
    if a.operating_point is not None:
        lines += ["", "Bias (DC operating point)"] + _aligned((BIAS_HEADINGS,) + bias_rows(a.operating_point))
    if a.warnings:
        lines += ["", "Warnings"] + [f"  • {w}" for w in a.warnings]
    return "\n".join(lines) + "\n"
