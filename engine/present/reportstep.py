"""The report's step-response section: the plot as inline SVG and the table of figures.

Like the rest of the report it draws the engine's results and computes no figure of its own:
the curves and markers come from :mod:`bandsketch.engine.present.stepdata`, the figures and
each estimate's error from the step response itself.
"""

from __future__ import annotations

import html

from ..core.errors import CircuitError
from ..core.values import format_value
from .stepdata import step_data, time_responses
from .timesummary import figure_error_text, figure_value_text

_W, _H = 720, 300
_PAD_L, _PAD_R, _PAD_T, _PAD_B = 56, 16, 14, 34
EXACT, ESTIMATE = "#1f5fbf", "#d9822b"
"""The report's own colours for exact and estimated curves (as on its Bode plot)."""


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _step_svg(data) -> str:
    """A :class:`~bandsketch.engine.present.stepdata.StepData` as an SVG picture."""
    t = data.time
    curves = [c for c in (data.exact, data.first_order, data.second_order) if c is not None]
    top = max(1.1, max(float(c.max()) for c in curves) + 0.05)
    bottom = min(-0.05, min(float(c.min()) for c in curves) - 0.05)
    t_end = float(t[-1]) or 1.0

    def x(v):
        return _PAD_L + v / t_end * (_W - _PAD_L - _PAD_R)

    def y(v):
        return _PAD_T + (top - v) / (top - bottom) * (_H - _PAD_T - _PAD_B)

    def path(values, colour, dash=""):
        step = max(1, t.size // 600)
        pts = " ".join(f"{x(a):.1f},{y(b):.1f}" for a, b in zip(t[::step], values[::step]))
        extra = f' stroke-dasharray="{dash}"' if dash else ""
        return f'<polyline fill="none" stroke="{colour}" stroke-width="2"{extra} points="{pts}"/>'

    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{_W}" height="{_H}" font-size="11" '
             f'font-family="sans-serif" role="img" aria-label="Step response">']
    for level in (0.0, 0.1, 0.5, 0.9, 1.0):
        yy = y(level)
        parts.append(f'<line x1="{_PAD_L}" y1="{yy:.1f}" x2="{_W - _PAD_R}" y2="{yy:.1f}" stroke="#dde3ea"/>')
        parts.append(f'<text x="{_PAD_L - 6}" y="{yy + 4:.1f}" text-anchor="end">{level:g}</text>')
    for k in range(6):
        v = t_end * k / 5
        xx = x(v)
        parts.append(f'<line x1="{xx:.1f}" y1="{_PAD_T}" x2="{xx:.1f}" y2="{_H - _PAD_B}" stroke="#dde3ea"/>')
        parts.append(f'<text x="{xx:.1f}" y="{_H - _PAD_B + 14}" text-anchor="middle">{v:.3g}</text>')
    parts.append(f'<text x="{(_W + _PAD_L) / 2:.0f}" y="{_H - 4}" text-anchor="middle">'
                 f'time ({_e(data.time_label)}) after an input step</text>')
    parts.append(f'<text x="14" y="{_H / 2:.0f}" transform="rotate(-90 14 {_H / 2:.0f})" text-anchor="middle">'
                 'output ÷ final value</text>')
    parts.append(path(data.exact, EXACT))
    for values, dash in ((data.first_order, "6 4"), (data.second_order, "2 3")):
        if values is not None:
            parts.append(path(values, ESTIMATE, dash))
    for m in data.markers:
        xx, yy = x(m.time), y(m.level)
        parts.append(f'<circle cx="{xx:.1f}" cy="{yy:.1f}" r="4" fill="{EXACT}"/>')
        dy = -8 if m.level > 1 else 14
        parts.append(f'<text x="{xx + 6:.1f}" y="{yy + dy:.1f}" fill="{EXACT}">{_e(m.text)}</text>')
    parts.append(f'<text x="{_W - _PAD_R}" y="{_PAD_T + 10}" text-anchor="end">'
                 f'<tspan fill="{EXACT}">— exact</tspan>  <tspan fill="{ESTIMATE}">- - 1 − e^(−t/b1)</tspan>'
                 f'  <tspan fill="{ESTIMATE}">·· pair from b1, b2</tspan></text>')
    parts.append("</svg>")
    return "\n".join(parts)


def step_section(analysis) -> str:
    """The section's HTML: the plot, then each figure exact and estimated with its error.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    """
    try:
        step, pulse = time_responses(analysis)
    except CircuitError as exc:
        return f"<p>No step response: {_e(exc.message)}</p>"
    head = ["Figure", "Exact", "First order", "error", "Second order", "error", "From f_H", "error"]
    rows = []
    for f in (*step.figures, *pulse.figures):
        est = f.estimates
        row = [f.name, figure_value_text(f.exact, f.unit)]
        for key in ("first order", "second order", "from f_H"):
            value = est.get(key)
            row += ["" if value is None else figure_value_text(value, f.unit),
                    figure_error_text(f, value) if value is not None else ""]
        rows.append(row)
    table = ["<table><tr>" + "".join(f"<th>{_e(h)}</th>" for h in head) + "</tr>"]
    for row in rows:
        table.append("<tr>" + "".join(f'<td{"" if i == 0 else " class=n"}>{_e(v)}</td>'
                                      for i, v in enumerate(row)) + "</tr>")
    table.append("</table>")
    notes = "".join(f"<li>{_e(w)}</li>" for w in step.warnings)
    return "\n".join([f"<figure>{_step_svg(step_data(step))}</figure>", *table,
                      f'<p class="small">Sag for a pulse of {_e(format_value(pulse.width, "s"))}; '
                      'the sag estimate is ω<sub>L</sub>·T. Errors of times are relative, of '
                      'fractions in percentage points.</p>',
                      f"<ul>{notes}</ul>" if notes else ""])
