"""An :class:`~bandsketch.engine.solve.analysis.Analysis` as a readable table (its JSON-ready data is
:meth:`Analysis.to_dict <bandsketch.engine.solve.analysis.Analysis.to_dict>`, its sweep as CSV
:func:`bandsketch.engine.present.plotdata.write_response_csv`)."""

from __future__ import annotations

import math

from ..core.band import Band
from ..solve.mna import SHORT
from ..core.values import MINUS, db_unit, error_text, format_gain, format_value
from .biasdata import BIAS_HEADINGS, bias_rows

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
    level = f"{20 * math.log10(abs(a.midband_gain)):.1f}".replace("-", MINUS)
    lines.append(f"Mid-band gain  {format_gain(a.midband_gain, unit, 4)}  ({level} {db}), "
                 f"band test at {format_value(a.midband_frequency, 'Hz')}")
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
        if a.roots_note:
            lines.append(f"  ({a.roots_note})")
    if a.operating_point is not None:
        lines += ["", "Bias (DC operating point)"] + _aligned((BIAS_HEADINGS,) + bias_rows(a.operating_point))
    if a.warnings:
        lines += ["", "Warnings"] + [f"  • {w}" for w in a.warnings]
    return "\n".join(lines) + "\n"
