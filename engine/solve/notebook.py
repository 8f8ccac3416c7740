"""An analysis in a notebook: the one-line reprs of the results, their rows, and the small HTML
table a notebook shows for an :class:`~bandsketch.engine.solve.analysis.Analysis`.

The words and numbers are the engine's own (formatted by :func:`bandsketch.engine.core.values.format_value`);
nothing here computes a figure.
"""

from __future__ import annotations

import html
import math

from ..core.band import Band
from ..core.colours import LIGHT
from ..core.values import db_unit, error_text, format_gain, format_value
from .mna import SHORT

BAR_PX = 120
"""Width of a full (100 %) bar in the HTML table, pixels."""


def _v(x, unit: str) -> str:
    return "none" if x is None else format_value(x, unit)


def _corner(sym: str, exact, estimate) -> str:
    if exact is None and estimate is None:
        return f"no {sym}"
    text = f"{sym} {_v(exact, 'Hz')}" if exact is not None else f"{sym} none exact"
    if estimate is not None:
        err = error_text(estimate, exact) if exact is not None else ""
        text += f" (est. {format_value(estimate, 'Hz')}{', ' + err if err else ''})"
    return text


def _gain(a) -> str:
    return f"A_m {format_gain(a.midband_gain, a.gain_unit)} ({20 * math.log10(abs(a.midband_gain)):.1f} {db_unit(a.gain_unit)})"


def analysis_repr(a) -> str:
    """One line: the title, the gain and both corners, exact with the estimate and its error.

    Parameters
    ----------
    a : bandsketch.engine.solve.analysis.Analysis
    """
    counts = f"{len(a.capacitors)} C, {len(a.inductors)} L"
    warned = f", {len(a.warnings)} warning{'s' if len(a.warnings) != 1 else ''}" if a.warnings else ""
    return (f"<Analysis {a.title!r}: {_gain(a)} · {_corner('f_H', a.f_high_exact, a.f_high_estimate)} · "
            f"{_corner('f_L', a.f_low_exact, a.f_low_estimate)} · {counts}{warned}>")


def element_repr(r) -> str:
    """One line for an element's result: band, mid-band state, R, τ and share.

    Parameters
    ----------
    r : bandsketch.engine.solve.analysis.ElementResult
    """
    state = "shorted" if r.state == SHORT else "open"
    share = "" if r.band == Band.NEUTRAL else f", {100 * r.share:.1f} % of its band"
    pinned = " (pinned)" if r.pinned else ""
    return (f"<{type(r).__name__} {r.name}: {r.band} band{pinned}, {state} at mid band, "
            f"R {_v(r.resistance, 'Ω')}, τ {_v(r.time_constant, 's')}{share}>")


ROW_KEYS = ("element", "kind", "band", "pinned", "mid_band", "resistance_ohm", "time_constant_s", "share",
            "pole_zero_pair", "reason")
"""The keys of each row of :func:`analysis_rows`, in order (units in the names)."""


def analysis_rows(a) -> list[dict]:
    """One dict per capacitor and inductor, keyed by :data:`ROW_KEYS`: the bars as a table
    (``mid_band`` is ``"short"`` or ``"open"``; ``share`` a fraction of its band).

    Parameters
    ----------
    a : bandsketch.engine.solve.analysis.Analysis
    """
    rows = []
    for kind, results in (("capacitor", a.capacitors), ("inductor", a.inductors)):
        for r in results.values():
            rows.append(dict(zip(ROW_KEYS, (r.name, kind, str(r.band), r.pinned, r.state, r.resistance,
                                            r.time_constant, r.share, r.pole_zero_pair, r.reason))))
    return rows


def analysis_html(a, colours=None) -> str:
    """The verdict and the bars as a small HTML table, for a notebook's ``_repr_html_``.

    Parameters
    ----------
    a : bandsketch.engine.solve.analysis.Analysis
    colours : bandsketch.engine.core.colours.Palette, optional
        The bars' colours (default: the window's light palette).
    """
    colours = colours or LIGHT
    e = html.escape
    lines = [_gain(a), _corner("f_H", a.f_high_exact, a.f_high_estimate),
             _corner("f_L", a.f_low_exact, a.f_low_estimate)]
    out = [f"<div><b>{e(a.title or 'Analysis')}</b><br/>{'<br/>'.join(e(x) for x in lines)}",
           '<table><tr><th style="text-align:left">element</th><th style="text-align:left">band</th>'
           "<th>τ</th><th>share</th><th></th></tr>"]
    for r in a.elements.values():
        share = "" if r.band == Band.NEUTRAL else f"{100 * r.share:.1f} %"
        width = 0 if r.band == Band.NEUTRAL else max(1, round(BAR_PX * min(max(r.share, 0.0), 1.0)))
        bar = (f'<div style="width:{width}px;height:0.8em;background:{colours.band(r.band)}"></div>'
               if width else "")
        out.append(f'<tr><td style="text-align:left">{e(r.name)}</td><td style="text-align:left">{e(str(r.band))}'
                   f"</td><td>{e(_v(r.time_constant, 's'))}</td><td>{e(share)}</td>"
                   f'<td style="text-align:left">{bar}</td></tr>')
    out.append("</table>")
    out += [f"<div>⚠ {e(w)}</div>" for w in a.warnings]
    out.append("</div>")
    return "\n".join(out)
