"""The report's step-response section: the plot and the table of figures.

Like the rest of the report it draws the engine's results and computes no figure of its own:
the curves and markers come from :mod:`bandsketch.engine.present.stepdata`, the figures and
each estimate's error from the step response itself.
"""

from __future__ import annotations

import html

from ..core.errors import CircuitError
from ..core.values import format_value
from .reportfigure import ReportFigure
from .stepdata import step_data, time_responses
from .svgfigures import step_svg
from .timesummary import figure_error_text, figure_value_text

def _e(text) -> str:
    return html.escape(str(text), quote=True)


STEP_MM = 110
"""Printed width of the step plot, mm."""


def step_section(analysis, figure_html) -> str:
    """The section's HTML: the plot, then each figure exact and estimated with its error.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    figure_html : callable
        ``figure_html(ReportFigure) -> str``, as
        :func:`bandsketch.engine.present.report.build_report` takes it.
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
    picture = figure_html(ReportFigure("step", "Step response", step_svg(step_data(step)), STEP_MM))
    return "\n".join([picture, *table,
                      f'<p class="small">Sag for a pulse of {_e(format_value(pulse.width, "s"))}; '
                      'the sag estimate is ω<sub>L</sub>·T. Errors of times are relative, of '
                      'fractions in percentage points.</p>',
                      f"<ul>{notes}</ul>" if notes else ""])
