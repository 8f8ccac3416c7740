"""The design report: one self-contained HTML file a reviewer can open anywhere.

It holds the schematic picture and the plots (PNG images the app renders, embedded as
base64; without them — from the command line, with no Qt — the Bode plot and the
time-constant bars are drawn here as inline SVG), every table the app shows (elements;
bands and reasons; R, τ and shares; corners estimated and exact; sensitivities; the value
that meets each failing target; spread and yield), the warnings, the method with its
references, and the caution that these are design estimates. Every number is taken from
the engine's results and their plot data; nothing here computes a figure of its own.
"""

from __future__ import annotations

import base64
import html
import math
from dataclasses import dataclass
from datetime import date

import numpy as np

from ..core.band import Band
from ..solve.analysis import analyze
from ..design.netlist import design_to_circuit
from ..advise.partvalues import part_values
from .plotdata import bar_data, bode_data, verdict_data
from .reportstep import step_section
from ..advise.sensitivity import FIGURE_TITLES, sensitivities
from ..advise.suggest import suggest, verdict_line
from ..advise.targets import check_targets, parse_targets
from ..advise.tolerance import spread_of_design
from ..core.values import db_unit, error_text, format_value
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
    "IEC 60063:2015, Preferred number series for resistors and capacitors.",
)

SPREAD_SAMPLES = 10_000
"""Monte Carlo samples a report runs unless told otherwise."""

_STYLE = """
body{font-family:system-ui,-apple-system,"Segoe UI",sans-serif;max-width:1000px;margin:2em auto;
color:#1d2430;line-height:1.45;padding:0 1em}
h1{font-size:1.6em;margin-bottom:.2em}h2{font-size:1.2em;margin-top:1.8em;border-bottom:1px solid #ccd3dd}
table{border-collapse:collapse;margin:.6em 0;font-size:.92em}
th,td{border:1px solid #ccd3dd;padding:.25em .6em;text-align:left;vertical-align:top}
th{background:#eef2f7}td.n{text-align:right;font-variant-numeric:tabular-nums}
.caution{background:#fff4d6;border-left:4px solid #d49a00;padding:.6em 1em}
.pass{color:#1a7f37;font-weight:600}.fail{color:#b3261e;font-weight:600}
.small{font-size:.85em;color:#4a5566}figure{margin:1em 0}img{max-width:100%}
"""


@dataclass(frozen=True)
class Pictures:
    """Pictures the app renders for the report, as PNG bytes (None: draw it here as SVG).

    Attributes
    ----------
    schematic : bytes or None
        The sheet.
    bode : bytes or None
        The Bode plot.
    bars : bytes or None
        The time-constant bars.
    """

    schematic: bytes | None = None
    bode: bytes | None = None
    bars: bytes | None = None


def _e(text) -> str:
    return html.escape(str(text))


def _png(data: bytes, alt: str) -> str:
    return f'<img alt="{_e(alt)}" src="data:image/png;base64,{base64.b64encode(data).decode("ascii")}">'


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
    return format_value(value, unit, digits)


def _signed(x) -> str:
    return "—" if x is None else f"{x:+.3f}"


# -- inline SVG (plain Python; the data come from bandsketch.engine.present.plotdata) -------------------------------
_W, _H, _PAD_L, _PAD_R, _PAD_T, _PAD_B = 900, 340, 60, 20, 20, 40


def _bode_svg(bode) -> str:
    f, mag = bode.exact.freq_hz, bode.exact.magnitude_db
    finite = mag[np.isfinite(mag)]
    top = math.ceil((bode.midband_db + 10) / 10) * 10
    bottom = max(math.floor((finite.min() if finite.size else top - 60) / 10) * 10, top - 80)
    lx0, lx1 = math.log10(f[0]), math.log10(f[-1])

    def x(fr):
        return _PAD_L + (math.log10(fr) - lx0) / (lx1 - lx0) * (_W - _PAD_L - _PAD_R)

    def y(db):
        db = min(max(db, bottom), top)
        return _PAD_T + (top - db) / (top - bottom) * (_H - _PAD_T - _PAD_B)

    def path(curve, colour, dash=""):
        pts = " ".join(f"{x(a):.1f},{y(b):.1f}" for a, b in zip(curve.freq_hz, curve.magnitude_db) if np.isfinite(b))
        extra = f' stroke-dasharray="{dash}"' if dash else ""
        return f'<polyline fill="none" stroke="{colour}" stroke-width="2"{extra} points="{pts}"/>'

    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{_W}" height="{_H}" font-size="11" '
             f'font-family="sans-serif" role="img" aria-label="Bode magnitude">']
    for dec in range(math.ceil(lx0), math.floor(lx1) + 1):
        xx = x(10 ** dec)
        parts.append(f'<line x1="{xx:.1f}" y1="{_PAD_T}" x2="{xx:.1f}" y2="{_H - _PAD_B}" stroke="#dde3ea"/>')
        parts.append(f'<text x="{xx:.1f}" y="{_H - _PAD_B + 14}" text-anchor="middle">{_e(format_value(10 ** dec, "Hz"))}</text>')
    for db in range(int(bottom), int(top) + 1, 10):
        yy = y(db)
        parts.append(f'<line x1="{_PAD_L}" y1="{yy:.1f}" x2="{_W - _PAD_R}" y2="{yy:.1f}" stroke="#dde3ea"/>')
        parts.append(f'<text x="{_PAD_L - 6}" y="{yy + 4:.1f}" text-anchor="end">{db}</text>')
    parts.append(f'<text x="14" y="{_H / 2:.0f}" transform="rotate(-90 14 {_H / 2:.0f})" text-anchor="middle">'
                 f'|H| ({_e(db_unit(bode.gain_unit))})</text>')
    parts.append(path(bode.exact, "#1f5fbf"))
    for est in (bode.high_estimate, bode.low_estimate):
        if est is not None:
            parts.append(path(est, "#d9822b", "6 4"))
    for m in bode.markers:
        xx, yy = x(m.freq_hz), y(m.level_db)
        colour = "#d9822b" if m.estimated else "#1f5fbf"
        parts.append(f'<circle cx="{xx:.1f}" cy="{yy:.1f}" r="4" fill="{colour}"/>')
        dy = 16 if m.estimated else -8
        parts.append(f'<text x="{xx + 6:.1f}" y="{yy + dy:.1f}" fill="{colour}">{_e(m.text)}</text>')
    parts.append(f'<text x="{_W - _PAD_R}" y="{_PAD_T + 12}" text-anchor="end">'
                 '<tspan fill="#1f5fbf">— exact</tspan>  <tspan fill="#d9822b">- - estimate</tspan></text>')
    parts.append("</svg>")
    return "\n".join(parts)


def _bars_svg(bars) -> str:
    rows = [(g, r) for g in bars.groups for r in g.rows]
    row_h, label_w, bar_w = 22, 160, 420
    height = 20 + len(rows) * row_h + len(bars.groups) * 26
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{label_w + bar_w + 320}" height="{height}" '
             f'font-size="12" font-family="sans-serif" role="img" aria-label="Time-constant bars">']
    yy = 16
    for g in bars.groups:
        parts.append(f'<text x="0" y="{yy}" font-weight="bold">{_e(g.title)} — {_e(g.total_text)}</text>')
        yy += 10
        for r in g.rows:
            colour = "#1f5fbf" if g.band == Band.HIGH else "#2f9e6e" if g.band == Band.LOW else "#9aa5b1"
            w = max(1.0, r.share * bar_w)
            parts.append(f'<text x="0" y="{yy + 14}">{_e(r.name)}{" (pinned)" if r.pinned else ""}</text>')
            parts.append(f'<rect x="{label_w}" y="{yy + 3}" width="{w:.1f}" height="{row_h - 6}" fill="{colour}"/>')
            parts.append(f'<text x="{label_w + w + 6:.1f}" y="{yy + 14}">{_e(r.value_text)}  {_e(r.share_text)}</text>')
            yy += row_h
        yy += 16
    parts.append("</svg>")
    return "\n".join(parts)


# -- the sections -------------------------------------------------------------------------------
def _elements_table(circuit) -> str:
    rows = [(pv.part, pv.label, pv.element, _fmt(pv.nominal, pv.unit, 4)) for pv in part_values(circuit)]
    return _table(("part", "value", "element", "nominal"), rows, numeric=(3,))


def _bands_table(analysis) -> str:
    rows = []
    for r in analysis.elements.values():
        share = "—" if r.band == Band.NEUTRAL else f"{100 * r.share:.1f} %"
        rows.append((r.name, r.band + (" (pinned)" if r.pinned else ""), _fmt(r.resistance, "Ω"),
                     _fmt(r.time_constant, "s"), share, f"{r.reason}; {r.state_reason}"))
    return _table(("element", "band", "R seen", "τ", "share", "why"), rows, numeric=(2, 3, 4))


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


REPORT_SUGGESTIONS = 8
"""Suggestion rows the report lists (the best first); the app and the command line show all."""


def _targets_section(targets, analysis, doc) -> str:
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
    advice = suggest(doc, targets)
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
        out.append(_table(("target", "yield"), [(names[k], f"{100 * v:.1f} %") for k, v in spread.yields.items()],
                          numeric=(1,)))
    wc_rows = []
    for w in spread.worst_cases:
        unit = "Hz" if w.figure != "gain" else gain_unit
        top = sorted(w.settings, key=lambda s: -abs(s[1]))[:6]
        wc_rows.append((w.figure.replace("f_high", "f_H").replace("f_low", "f_L").replace("gain", "|A_m|"),
                        w.extreme, _fmt(w.value, unit),
                        ", ".join(f"{label} {100 * dev:+.0f} %" for label, dev in top)))
    out.append("<p>Worst case over the vertices of the tolerance box:</p>")
    out.append(_table(("figure", "extreme", "value", "parts at the edge of their band (largest first)"),
                      wc_rows, numeric=(2,)))
    out.append(_table(("part value", "nominal", "tolerance", "where the tolerance comes from"),
                      [(t.value.label, _fmt(t.value.nominal, t.value.unit, 4), f"±{100 * t.tolerance:g} %", t.source)
                       for t in spread.tolerances], numeric=(1, 2)))
    return "\n".join(out)


def build_report(doc, *, pictures: Pictures | None = None, samples: int = SPREAD_SAMPLES, seed: int = 1,
                 spread=None) -> str:
    """The design report of ``doc`` as one HTML text.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    pictures : Pictures, optional
        PNGs rendered by the app; missing plots are drawn as inline SVG, a missing schematic
        is noted.
    samples, seed : int
        Monte Carlo size and seed (ignored when ``spread`` is given).
    spread : bandsketch.engine.advise.tolerance.Spread, optional
        A spread the app already ran (with the designer's tolerances), to report as is.

    Returns
    -------
    str
        A complete HTML document with no external references.
    """
    pictures = pictures or Pictures()
    circuit = design_to_circuit(doc)
    analysis = analyze(circuit, bands=dict(doc.band_pins))
    targets = parse_targets(doc.targets)
    verdict = verdict_data(analysis)
    sens = sensitivities(circuit, analysis)
    spread = spread if spread is not None else spread_of_design(doc, samples, seed)
    title = doc.title or "Untitled design"
    body = [f"<h1>{_e(title)}</h1>",
            f'<p class="small">Design report, {date.today().isoformat()}.</p>',
            f"<p>{_e(doc.description)}</p>" if doc.description else "",
            f'<p class="caution"><b>Caution.</b> {_e(CAUTION)}</p>',
            "<h2>Schematic</h2>",
            _png(pictures.schematic, "schematic") if pictures.schematic else
            '<p class="small">No schematic picture: export the report from the app to include the sheet.</p>',
            "<h2>Verdict</h2>",
            "<ul>" + "".join(f"<li>{_e(t)}</li>" for t in (verdict.gain_text, verdict.high_text, verdict.low_text,
                                                             verdict.dominant_text)) + "</ul>",
            "<h2>Targets</h2>", _targets_section(targets, analysis, doc),
            "<h2>Bode plot</h2>",
            f"<figure>{_png(pictures.bode, 'Bode plot') if pictures.bode else _bode_svg(bode_data(analysis))}</figure>",
            "<h2>Time constants</h2>",
            f"<figure>{_png(pictures.bars, 'time-constant bars') if pictures.bars else _bars_svg(bar_data(analysis))}</figure>",
            "<h2>Corners</h2>", _corners_table(analysis),
            "<h2>Step response</h2>", step_section(analysis),
            "<h2>Bands, resistances and time constants</h2>", _bands_table(analysis),
            "<h2>Elements</h2>", _elements_table(circuit),
            *(("<h2>Bias (DC operating point)</h2>",
               _table(BIAS_HEADINGS, bias_rows(analysis.operating_point), numeric=range(2, 7)))
              if analysis.operating_point is not None else ()),
            "<h2>Sensitivities</h2>", _sensitivity_table(sens),
            "<h2>Tolerance spread and yield</h2>", _spread_section(spread, analysis.gain_unit),
            "<h2>Warnings</h2>",
            ("<ul>" + "".join(f"<li>{_e(w)}</li>" for w in verdict.warnings) + "</ul>") if verdict.warnings
            else "<p>None.</p>",
            "<h2>Method</h2>", f"<p>{METHOD}</p>",
            "<h3>References</h3>", "<ol>" + "".join(f"<li>{r}</li>" for r in REFERENCES) + "</ol>",
            f'<p class="caution">{_e(CAUTION)}</p>']
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f"<title>{_e(title)} — design report</title><style>{_STYLE}</style></head><body>\n"
            + "\n".join(b for b in body if b) + "\n</body></html>\n")


def write_report(doc, path, **kw) -> None:
    """Write :func:`build_report` of ``doc`` to ``path`` (UTF-8); keywords as for it.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    path : str or os.PathLike
        Where to write the HTML.
    """
    text = build_report(doc, **kw)
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(text)
