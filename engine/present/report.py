"""The design report: one document a reviewer can open anywhere, the same however it is made.

The command line and the window build it here, from the design alone (never from what the
window has selected), with the same sections in the same order: the design file's name and a
SHA-256 of its contents, the tool's version, the schematic, the verdict, targets and the
advisor's chosen change, the Bode plot, the time-constant bars with the bands and time
constants, corners, the bias table, the step response, sensitivities, spread and yield,
warnings, the method with its references, and the caution that these are design estimates.

Every picture is SVG: the plots drawn by :mod:`bandsketch.engine.present.svgfigures`, the
schematic given by the app (Qt draws the sheet; the engine has no Qt). The HTML holds them
inline; a PDF writer passes ``figure_html`` to put its own rendering of each in their place.
Every number is taken from the engine's results and their plot data; nothing here computes a
figure of its own.
"""

from __future__ import annotations

import hashlib
import html
import math
from collections.abc import Callable
from dataclasses import dataclass
from datetime import date

import numpy as np

from ..core.band import Band
from ..solve.analysis import analyze
from ..design.netlist import design_to_circuit
from .plotdata import bar_data, bode_data, verdict_data
from .reportfigure import ReportFigure, inline_svg
from .reportstep import step_section
from .svgfigures import bars_svg, bode_svg
from ..core.versions import version_line
from ..advise.sensitivity import FIGURE_TITLES, sensitivities
from ..advise.suggest import suggest, verdict_line
from ..advise.targets import check_targets, parse_targets
from ..advise.tolerance import spread_of_design
from ..core.values import MINUS, error_text, format_gain, format_signed, format_value
from .biasdata import BIAS_HEADINGS, bias_rows

CAUTION = ("These are design estimates from a linear small-signal model. Confirm them by full "
           "circuit simulation and by measurement before anything is built.")

METHOD = (
    "The upper corner is estimated by open-circuit time constants (Thornton et al., 1965): each "
    "high-band capacitor's time constant is its capacitance times the resistance it sees with the "
    "other high-band capacitors open and the low-band ones shorted, and f<sub>H</sub> ≈ 1/(2π·b<sub>1</sub>) "
    "with b<sub>1</sub> their sum; b<sub>2</sub> and the second-order estimate follow Cochrun and Grabel "
    "(1973). The lower corner is estimated by short-circuit time constants: each low-band capacitor, "
    "seeing the network with the other low-band capacitors shorted, is a section with the pole 1/τ and the "
    "zero its open/short gain ratio gives (Hajimiri, 2010), and f<sub>L</sub> is where the sections together "
    "fall 3 dB (to first order √(Σω<sub>p</sub>² − 2Σω<sub>z</sub>²), Sedra and Smith), so a pole–zero "
    "pair counts only for the part of the 3 dB it costs. Bands are "
    "assigned by shorting and opening each capacitor at the mid-band frequency. Every resistance comes "
    "from one factorisation of the modified nodal equations (Ho, Ruehli and Brennan, 1975), and the exact "
    "response, corners, poles and zeros are computed from the same equations. Sensitivities are adjoint "
    "derivatives of those figures; the tolerance spread is a seeded Monte Carlo of the exact figures "
    "with every part drawn uniformly within its tolerance. The step response is exact (poles and residues "
    "of the same equations, or their L-stable integration for large networks); its rise time is set "
    "beside ln 9·b<sub>1</sub> ≈ 2.2·b<sub>1</sub> and beside the pair 1/(1 + b<sub>1</sub>s + b<sub>2</sub>s²).")

REFERENCES = (
    "R. D. Thornton, C. L. Searle, D. O. Pederson, R. B. Adler, E. J. Angelo, <i>Multistage Transistor "
    "Circuits</i>, SEEC vol. 5, Wiley, 1965.",
    "B. L. Cochrun, A. Grabel, “A Method for the Determination of the Transfer Function of Electronic "
    "Circuits”, <i>IEEE Trans. Circuit Theory</i> CT-20(1), 1973.",
    "C.-W. Ho, A. E. Ruehli, P. A. Brennan, “The Modified Nodal Approach to Network Analysis”, "
    "<i>IEEE Trans. Circuits and Systems</i> CAS-22(6), 1975.",
    "A. Hajimiri, “Generalized Time- and Transfer-Constant Circuit Analysis”, <i>IEEE Trans. Circuits and "
    "Systems I</i> 57(6), 2010.",
    "A. S. Sedra, K. C. Smith, <i>Microelectronic Circuits</i>, Oxford University Press.",
    "IEC 60063:2015, Preferred number series for resistors and capacitors.",
)

SPREAD_SAMPLES = 10_000
"""Monte Carlo samples a report runs unless told otherwise."""

_STYLE = """
body{font-family:"DejaVu Sans",system-ui,sans-serif;font-size:8pt;max-width:190mm;margin:1em auto;
color:#1d2430;line-height:115%;padding:0 1em}
h1{font-size:14pt;margin:0 0 3pt 0}h2{font-size:11pt;margin:9pt 0 2pt 0;color:#1d2430}
h3{font-size:9pt;margin:6pt 0 2pt 0}p{margin:2pt 0}ul,ol{margin-top:1pt;margin-bottom:1pt}
table{border-collapse:collapse;margin:2pt 0;font-size:7pt}
th,td{border:1px solid #ccd3dd;padding:1pt 4pt;text-align:left;vertical-align:top}
th{background:#eef2f7}td.n{text-align:right}
.caution{background:#fff4d6;padding:3pt 6pt}
.pass{color:#1a7f37;font-weight:bold}.fail{color:#b3261e;font-weight:bold}
.small{font-size:7.5pt;color:#4a5566}figure{margin:4pt 0}svg{max-width:100%;height:auto}
"""


@dataclass(frozen=True)
class DesignSource:
    """Which design file a report is of.

    Attributes
    ----------
    name : str
        The file's name as the reader knows it (``"ce_stage.json"``, or a shipped sample's).
    sha256 : str
        The SHA-256 of the file's bytes, hexadecimal: two reports of the same file match.
    """

    name: str
    sha256: str


def design_source(name: str, content: bytes) -> DesignSource:
    """The :class:`DesignSource` of a design file called ``name`` that holds ``content``.

    Parameters
    ----------
    name : str
        The file's name.
    content : bytes
        Its bytes, as on disk.
    """
    return DesignSource(name, hashlib.sha256(content).hexdigest())


def _e(text) -> str:
    return html.escape(str(text))


def _table(head, rows, numeric=()) -> str:
    out = ["<table><tr>" + "".join(f"<th>{_e(h)}</th>" for h in head) + "</tr>"]
    for row in rows:
        cells = "".join(f'<td class="n">{_e(c)}</td>' if i in numeric else f"<td>{_e(c)}</td>"
                        for i, c in enumerate(row))
        out.append(f"<tr>{cells}</tr>")
    out.append("</table>")
    return "\n".join(out)


def _fmt(value, unit="", digits=3) -> str:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "—"
    # A gain in its unit reads as the verdict writes it: a plain ratio, or ohms for V/A.
    return format_gain(value, unit, digits) if unit in ("V/V", "V/A") else format_value(value, unit, digits)


def _signed(x) -> str:
    return "—" if x is None else format_signed(x)


# -- the sections -------------------------------------------------------------------------------
def _bands_table(analysis) -> str:
    rows = []
    for r in analysis.elements.values():
        share = "—" if r.band == Band.NEUTRAL else f"{100 * r.share:.1f} %"
        state = "shorted" if r.state == "short" else "open"
        rows.append((r.name, r.band + (" (pinned)" if r.pinned else ""), state, _fmt(r.resistance, "Ω"),
                     _fmt(r.time_constant, "s"), share,
                     f"{_fmt(r.midband_reactance, 'Ω')} against {_fmt(r.midband_resistance, 'Ω')}", r.reason))
    return _table(("element", "band", "mid band", "R seen", "τ", "share", "|Z| at f_m against R", "why"), rows,
                  numeric=(3, 4, 5, 6))


def _corners_table(analysis) -> str:
    def err(est, ex):
        return error_text(est, ex) or "—"

    rows = [("f_H", _fmt(analysis.f_high_estimate, "Hz"), _fmt(analysis.f_high_estimate_2nd, "Hz"),
             _fmt(analysis.f_high_exact, "Hz"), err(analysis.f_high_estimate, analysis.f_high_exact)),
            ("f_L", _fmt(analysis.f_low_estimate, "Hz"), "—", _fmt(analysis.f_low_exact, "Hz"),
             err(analysis.f_low_estimate, analysis.f_low_exact))]
    extra = (f"<p>Mid-band gain A<sub>m</sub> = {_e(_fmt(analysis.midband_gain, analysis.gain_unit))}; "
             f"b<sub>1</sub> = {_e(_fmt(analysis.b1, 's'))}"
             + (f", b<sub>2</sub> = {_e(format_value(analysis.b2, 's²'))}" if analysis.b2 else "") + ".</p>")
    return _table(("corner", "estimate (1st order)", "estimate (2nd order)", "exact", "estimate error"),
                  rows, numeric=(1, 2, 3, 4)) + extra


def _sensitivity_table(sens) -> str:
    ordered = sorted(sens.rows, key=lambda r: (-abs(r.high_exact or 0.0), -abs(r.low_exact or 0.0)))
    rows = [(r.value.label, _signed(r.high_exact), _signed(r.high_estimate), _signed(r.low_exact),
             _signed(r.low_estimate), _signed(r.gain)) for r in ordered]
    head = ("part value",) + tuple(f"d ln {FIGURE_TITLES[f]} / d ln x" for f in
                                   ("high_exact", "high_estimate", "low_exact", "low_estimate", "gain"))
    return (_table(head, rows, numeric=(1, 2, 3, 4, 5)) +
            '<p class="small">+1 means the figure rises in proportion to the value; ranked by the exact '
            'upper corner, then the lower.</p>'
            + "".join(f'<p class="small">{_e(note)}</p>' for note in sens.notes.values()))


REPORT_SUGGESTIONS = 4
"""Suggestion rows the report lists (the best first); the app and the command line show all."""


def _targets_section(targets, analysis, doc, progress) -> str:
    if targets.is_empty():
        return "<p>The design sets no targets.</p>"
    checks = check_targets(targets, analysis, analysis.gain_unit)
    out = ["<ul>"]
    for c in checks:
        cls = "pass" if c.passed else "fail"
        out.append(f'<li><span class="{cls}">{"PASS" if c.passed else "FAIL"}</span> {_e(c.text)}</li>')
    out.append("</ul>")
    if all(c.passed for c in checks):
        return "\n".join(out)
    advice = suggest(doc, targets, progress=progress("suggestions") if progress else None)
    unit = analysis.gain_unit
    chosen = next((s for s in advice.suggestions if s.meets_all), None)
    if chosen is None:
        out.append("<p>No single knob meets every target; search two or three knobs together in the advisor "
                   "(or <code>bandsketch advise DESIGN --knobs A,B</code>).</p>")
    else:
        y = (f", with a yield of {100 * chosen.spread.fraction:.0f} % (±{100 * chosen.spread.standard_error:.1f} %, "
             f"{chosen.spread.samples} samples) under the parts' tolerances" if chosen.spread else "")
        out.append(f"<p><b>Chosen suggestion:</b> {_e(chosen.label)}: it meets every target{_e(y)}.</p>")
    rows = [(s.label, _e_none(s.changes[0].lower, s.changes[0].upper, s.changes[0].knob),
             _fmt(s.effect.f_high, "Hz"), _fmt(s.effect.f_low, "Hz"), _fmt(abs(s.effect.gain), unit),
             f"{100 * s.spread.fraction:.0f} %" if s.spread else "—", verdict_line(s.effect))
            for s in advice.suggestions[:REPORT_SUGGESTIONS]]
    out.append("<h3>Suggestions, one knob at a time, each with its whole effect</h3>")
    out.append(_table(("change", "exact value lies between", "f_H", "f_L", "|A_m|", "yield", "verdict"), rows,
                      numeric=(2, 3, 4, 5)))
    return "\n".join(out)


def _e_none(lower, upper, knob) -> str:
    if lower is None:
        return "—"
    return f"{knob.series}: {_fmt(lower, knob.unit)} and {_fmt(upper, knob.unit)}"


def _spread_section(spread, gain_unit) -> str:
    def stats(values, unit):
        good = values[np.isfinite(values)]
        if good.size == 0:
            return ("—",) * 4
        lo, med, hi = np.percentile(good, [0.135, 50, 99.865])
        return _fmt(lo, unit), _fmt(med, unit), _fmt(hi, unit), f"{100 * good.std() / good.mean():.1f} %"

    fh0, fl0, am0 = spread.nominal
    rows = []
    if fh0:
        rows.append(("f_H", _fmt(fh0, "Hz"), *stats(spread.f_high, "Hz")))
    if fl0:
        rows.append(("f_L", _fmt(fl0, "Hz"), *stats(spread.f_low, "Hz")))
    rows.append(("|A_m|", _fmt(abs(am0), gain_unit), *stats(np.abs(spread.gain), gain_unit)))
    out = [f"<p>{spread.samples:,} samples, seed {spread.seed} (numpy PCG64; the same seed gives the same "
           f"numbers), every part value uniform within its tolerance.</p>",
           _table(("figure", "nominal", "0.135 %", "median", "99.865 %", "σ / mean"), rows, numeric=(1, 2, 3, 4, 5))]
    if spread.yields:
        names = {"f_high_min": "minimum f_H", "f_low_max": "maximum f_L", "gain": "gain window",
                 "all": "every target"}
        out.append("<p><b>Yield:</b> " + "; ".join(f"{names[k]} {100 * v:.1f} %" for k, v in spread.yields.items())
                   + ".</p>")
    wc_rows = []
    for w in spread.worst_cases:
        unit = "Hz" if w.figure != "gain" else gain_unit
        top = sorted(w.settings, key=lambda s: -abs(s[1]))[:6]
        wc_rows.append((w.figure.replace("f_high", "f_H").replace("f_low", "f_L").replace("gain", "|A_m|"),
                        w.extreme, _fmt(w.value, unit),
                        ", ".join(f"{label} {100 * dev:+.0f} %".replace("-", MINUS) for label, dev in top)))
    out.append("<p>Worst case over the vertices of the tolerance box:</p>")
    out.append(_table(("figure", "extreme", "value", "parts at the edge of their band (largest first)"),
                      wc_rows, numeric=(2,)))
    # Parts that share a tolerance share its reason: one row per reason keeps the table short.
    by_source: dict[str, list[str]] = {}
    for t in spread.tolerances:
        by_source.setdefault(t.source, []).append(f"{t.value.label} {_fmt(t.value.nominal, t.value.unit, 4)}")
    out.append(_table(("part values (nominal)", "tolerance, and where it comes from"),
                      [(", ".join(parts), source) for source, parts in by_source.items()]))
    return "\n".join(out)


SCHEMATIC_MM, PLOT_MM, BARS_MM = 120, 150, 150
"""Printed widths of the schematic, the Bode plot and the bars, mm."""


def _meta(source: DesignSource | None) -> str:
    made = f"Design report, {date.today().isoformat()}, by {version_line()}."
    if source is None:
        return f'<p class="small">{_e(made)} No design file: the design was given as a document.</p>'
    return (f'<p class="small">{_e(made)}<br>Design file <b>{_e(source.name)}</b>, '
            f"SHA-256 <code>{_e(source.sha256)}</code>.</p>")


def _section(title: str, *content: str) -> str:
    return "\n".join((f"<h2>{_e(title)}</h2>", *content))


def build_report(doc, *, schematic_svg: str | None = None, source: DesignSource | None = None,
                 samples: int = SPREAD_SAMPLES, seed: int = 1, spread=None,
                 figure_html: Callable[[ReportFigure], str] = inline_svg,
                 progress: Callable[[str], Callable[[int, int], None]] | None = None) -> str:
    """The design report of ``doc`` as one HTML text.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
        The design (the report shows it as drawn, nothing else).
    schematic_svg : str, optional
        The sheet as SVG, drawn by the app's scene code; without it the report says that it
        has no schematic.
    source : DesignSource, optional
        The design file's name and hash (:func:`design_source`).
    samples, seed : int
        Monte Carlo size and seed (ignored when ``spread`` is given).
    spread : bandsketch.engine.advise.tolerance.Spread, optional
        A spread the app already ran (with the designer's tolerances), to report as is.
    figure_html : callable, optional
        ``figure_html(ReportFigure) -> str``, the HTML that stands for each picture:
        :func:`inline_svg` (the default) for a self-contained HTML file.
    progress : callable, optional
        ``progress(stage)`` returns the ``progress(done, total)`` callback of one stage of the
        work: ``"spread"`` (after each batch of samples), then ``"suggestions"`` (after each knob,
        when a target fails).

    Returns
    -------
    str
        A complete HTML document with no external references.
    """
    circuit = design_to_circuit(doc)
    analysis = analyze(circuit, bands=dict(doc.band_pins))
    targets = parse_targets(doc.targets)
    verdict = verdict_data(analysis)
    sens = sensitivities(circuit, analysis)
    spread = spread if spread is not None else spread_of_design(
        doc, samples, seed, progress=progress("spread") if progress else None)
    title = doc.title or "Untitled design"
    schematic = (figure_html(ReportFigure("schematic", "Schematic", schematic_svg, SCHEMATIC_MM))
                 if schematic_svg else '<p class="small">No schematic: the report was built without the '
                                       "sheet's drawing.</p>")
    body = [f"<h1>{_e(title)}</h1>", _meta(source),
            f"<p>{_e(doc.description)}</p>" if doc.description else "",
            f'<p class="caution"><b>Caution.</b> {_e(CAUTION)}</p>',
            _section("Schematic", schematic),
            _section("Bode plot", figure_html(ReportFigure("bode", "Bode plot", bode_svg(bode_data(analysis)),
                                                           PLOT_MM))),
            _section("Verdict", "<ul>" + "".join(f"<li>{_e(t)}</li>" for t in (
                verdict.gain_text, verdict.high_text, verdict.low_text, verdict.dominant_text)) + "</ul>"),
            _section("Targets", _targets_section(targets, analysis, doc, progress)),
            _section("Corners", _corners_table(analysis)),
            _section("Bands and time constants",
                     figure_html(ReportFigure("bars", "Time-constant bars", bars_svg(bar_data(analysis)), BARS_MM)),
                     _bands_table(analysis)),
            _section("Bias (DC operating point)",
                     _table(BIAS_HEADINGS, bias_rows(analysis.operating_point), numeric=range(2, 7))
                     if analysis.operating_point is not None else "<p>The design has no bias network: "
                     "its small-signal values are given on the sheet.</p>"),
            _section("Sensitivities", _sensitivity_table(sens)),
            _section("Step response", step_section(analysis, figure_html)),
            _section("Tolerance spread and yield", _spread_section(spread, analysis.gain_unit)),
            _section("Warnings", ("<ul>" + "".join(f"<li>{_e(w)}</li>" for w in verdict.warnings) + "</ul>")
                     if verdict.warnings else "<p>None.</p>"),
            _section("Method", f'<p class="small">{METHOD}</p>', "<h3>References</h3>",
                     '<ol class="small">' + "".join(f"<li>{r}</li>" for r in REFERENCES) + "</ol>"),
            f'<p class="caution">{_e(CAUTION)}</p>']
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f"<title>{_e(title)} — design report</title><style>{_STYLE}</style></head><body>\n"
            + "\n".join(b for b in body if b) + "\n</body></html>\n")


def write_report(doc, path, **kw) -> None:
    """Write :func:`build_report` of ``doc`` to ``path`` as HTML (UTF-8); keywords as for it.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    path : str or os.PathLike
        Where to write the HTML.
    """
    text = build_report(doc, **kw)
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(text)
