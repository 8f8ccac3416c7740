"""The Bode plot, the time-constant bars and the step response as SVG pictures, for the report
and for the exported figures.

Plain SVG 1.1 (lines, polylines, rectangles, circles and text; no scripts, filters, CSS or
external references), so a browser, librsvg and Qt's own renderer draw it alike. Each picture
states its ``width``, ``height`` and ``viewBox`` in CSS pixels. The data come from
:mod:`bandsketch.engine.present.plotdata` and :mod:`bandsketch.engine.present.stepdata` and the
colours from :mod:`bandsketch.engine.core.colours`: nothing here computes a figure.
"""

from __future__ import annotations

import html
import math

import numpy as np

from ..core.values import format_value
from ..core.colours import LIGHT, Palette

SVG_NS = "http://www.w3.org/2000/svg"
FONT = "DejaVu Sans, Helvetica, Arial, sans-serif"
WIDTH = 720
"""Width of every picture, CSS pixels (the report's text width)."""
MAX_POINTS = 600
"""At most this many points per drawn curve (a picture gains nothing from more)."""
MINUS = "\u2212"


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _number(x: float) -> str:
    """A tick label: ``-20`` written with the minus sign."""
    return f"{x:g}".replace("-", MINUS)


class _Picture:
    """The elements of one SVG picture, written out by :meth:`text`."""

    def __init__(self, width: float, height: float, label: str, palette: Palette):
        self.width, self.height, self.label, self.palette = width, height, label, palette
        self.items = [f'<rect x="0" y="0" width="{width}" height="{height}" fill="{palette.paper}"/>']

    def line(self, x1, y1, x2, y2, colour, width=1.0, dash=""):
        extra = f' stroke-dasharray="{dash}"' if dash else ""
        self.items.append(f'<line x1="{x1:.1f}" y1="{y1:.1f}" x2="{x2:.1f}" y2="{y2:.1f}" stroke="{colour}" '
                          f'stroke-width="{width:g}"{extra}/>')

    def polyline(self, xs, ys, colour, width=1.8, dash=""):
        step = max(1, len(xs) // MAX_POINTS)
        pts = " ".join(f"{a:.1f},{b:.1f}" for a, b in zip(xs[::step], ys[::step]))
        if not pts:
            return
        extra = f' stroke-dasharray="{dash}"' if dash else ""
        self.items.append(f'<polyline fill="none" stroke="{colour}" stroke-width="{width:g}" '
                          f'stroke-linejoin="round"{extra} points="{pts}"/>')

    def rect(self, x, y, w, h, colour, opacity=1.0):
        extra = f' fill-opacity="{opacity:g}"' if opacity < 1 else ""
        self.items.append(f'<rect x="{x:.1f}" y="{y:.1f}" width="{w:.1f}" height="{h:.1f}" fill="{colour}"{extra}/>')

    def dot(self, x, y, colour, r=3.5):
        self.items.append(f'<circle cx="{x:.1f}" cy="{y:.1f}" r="{r:g}" fill="{colour}"/>')

    def text(self, x, y, text, colour=None, anchor="start", size=11, bold=False, rotate=False):
        attrs = f'x="{x:.1f}" y="{y:.1f}" font-size="{size:g}" fill="{colour or self.palette.ink}"'
        if anchor != "start":
            attrs += f' text-anchor="{anchor}"'
        if bold:
            attrs += ' font-weight="bold"'
        if rotate:
            attrs += f' transform="rotate(-90 {x:.1f} {y:.1f})"'
        self.items.append(f"<text {attrs}>{_e(text)}</text>")

    def svg(self) -> str:
        return (f'<svg xmlns="{SVG_NS}" version="1.1" width="{self.width:g}" height="{self.height:g}" '
                f'viewBox="0 0 {self.width:g} {self.height:g}" font-family="{FONT}" role="img" '
                f'aria-label="{_e(self.label)}">\n<title>{_e(self.label)}</title>\n'
                + "\n".join(self.items) + "\n</svg>\n")


def _nice_step(span: float, ticks: int = 6) -> float:
    raw = span / ticks
    base = 10 ** math.floor(math.log10(raw))
    return next(m * base for m in (1, 2, 2.5, 5, 10) if m * base >= raw)


_L, _R, _T = 58, 16, 26
_MAG_H, _GAP, _PHASE_H, _B = 180, 16, 96, 34


def bode_svg(data, palette: Palette = LIGHT) -> str:
    """The Bode plot (magnitude over phase, on one log frequency axis) as SVG text.

    Parameters
    ----------
    data : bandsketch.engine.present.plotdata.BodeData
        The curves and markers, as the window's plot draws them.
    palette : Palette, optional
        The colours (the light ones by default, for paper).

    Returns
    -------
    str
        A complete ``<svg>`` element.
    """
    c = palette
    height = _T + _MAG_H + _GAP + _PHASE_H + _B
    pic = _Picture(WIDTH, height, "Bode plot", c)
    lo, hi = data.freq_range
    lx0, lx1 = math.log10(lo), math.log10(hi)
    x0, x1 = _L, WIDTH - _R

    def x(f):
        return x0 + (np.log10(f) - lx0) / (lx1 - lx0) * (x1 - x0)

    def panel(top, h, bottom_v, top_v, step, values_of, title):
        def y(v):
            return top + (top_v - np.clip(v, bottom_v, top_v)) / (top_v - bottom_v) * h

        for dec in range(math.ceil(lx0), math.floor(lx1) + 1):
            pic.line(x(10 ** dec), top, x(10 ** dec), top + h, c.grid, 0.6)
        v = math.ceil(bottom_v / step) * step
        while v <= top_v + 1e-9:
            pic.line(x0, y(v), x1, y(v), c.grid, 0.6)
            pic.text(x0 - 5, y(v) + 4, _number(round(v, 6)), c.value, "end", 10)
            v += step
        pic.line(x0, top, x0, top + h, c.value, 0.8)
        pic.line(x0, top + h, x1, top + h, c.value, 0.8)
        pic.text(14, top + h / 2, title, c.ink, "middle", 11, rotate=True)
        for curve, colour, dash in ((data.exact, c.ink, ""), (data.high_estimate, c.band_high, "6 4"),
                                    (data.low_estimate, c.band_low, "6 4")):
            if curve is not None:
                values = values_of(curve)
                keep = np.isfinite(values)
                pic.polyline(x(curve.freq_hz[keep]), y(values[keep]), colour, 2.0 if not dash else 1.6, dash)
        return y

    bottom_db, top_db = data.magnitude_view_db
    y_mag = panel(_T, _MAG_H, bottom_db, top_db, _nice_step(top_db - bottom_db), lambda k: k.magnitude_db,
                  data.gain_axis)
    pic.line(x0, y_mag(data.midband_db - 3.0103), x1, y_mag(data.midband_db - 3.0103), c.value, 0.8, "2 3")
    for m in data.markers:
        colour = c.band(m.corner) if m.estimated else c.ink
        xx = float(x(m.freq_hz))
        pic.line(xx, _T, xx, _T + _MAG_H, colour, 0.8, "3 3" if m.estimated else "")
        pic.dot(xx, float(y_mag(m.level_db)), colour)
        # The label points into the mid band: left of f_H, right of f_L.
        inward = "end" if m.corner == "high" else "start"
        dx = -5 if m.corner == "high" else 5
        yy = float(y_mag(m.label_db)) + (-7 if m.estimated else 15)
        if m.estimated:
            # 3 dB is a few pixels here: clear of the mid band, not written over its curve.
            yy = min(yy, float(y_mag(data.midband_db)) - 6)
        pic.text(xx + dx, yy, m.text, colour, inward, 10.5)
    p_lo, p_hi = data.phase_view_deg
    panel(_T + _MAG_H + _GAP, _PHASE_H, p_lo, p_hi, 90 if p_hi - p_lo > 180 else 45, lambda k: k.phase_deg,
          "Phase (°)")
    axis_y = _T + _MAG_H + _GAP + _PHASE_H
    for dec in range(math.ceil(lx0), math.floor(lx1) + 1):
        pic.text(float(x(10 ** dec)), axis_y + 14, format_value(10 ** dec, "Hz"), c.value, "middle", 10)
    pic.text((x0 + x1) / 2, height - 6, "Frequency", c.ink, "middle", 11)
    legend = ((c.ink, "", "exact"), (c.band_high, "6 4", "A_m/(1 + jω b1)"), (c.band_low, "6 4", "A_m·s/(s + ω_L)"))
    lx = x0 + 4
    for colour, dash, label in legend:
        pic.line(lx, 12, lx + 22, 12, colour, 2, dash)
        pic.text(lx + 27, 16, label, c.ink, size=10.5)
        lx += 40 + 7 * len(label)
    return pic.svg()


_ROW_H, _LABEL_W, _BAR_W = 20, 120, 330


def bars_svg(data, palette: Palette = LIGHT) -> str:
    """The time-constant bars (one group per band, each bar its share) as SVG text.

    Parameters
    ----------
    data : bandsketch.engine.present.plotdata.BarData
        The groups and rows, as the window's bars draw them.
    palette : Palette, optional
        The colours (the light ones by default, for paper).

    Returns
    -------
    str
        A complete ``<svg>`` element.
    """
    c = palette
    rows = sum(len(g.rows) for g in data.groups)
    height = 8 + rows * _ROW_H + len(data.groups) * 28
    pic = _Picture(WIDTH, height, "Time-constant bars", c)
    yy = 4.0
    for g in data.groups:
        colour = c.band(g.band)
        pic.text(0, yy + 15, f"{g.title} — {g.total_text}", colour, bold=True, size=11.5)
        yy += 24
        for r in g.rows:
            pic.text(0, yy + 14, r.name + (" (pinned)" if r.pinned else ""), c.ink, size=11)
            pic.rect(_LABEL_W, yy + 3, _BAR_W, _ROW_H - 6, c.grid, 0.35)
            w = max(1.0, min(1.0, max(r.share, 0.0)) * _BAR_W)
            pic.rect(_LABEL_W, yy + 3, w, _ROW_H - 6, colour)
            pic.text(_LABEL_W + _BAR_W + 8, yy + 14, "  ".join(t for t in (r.value_text, r.share_text) if t),
                     c.ink, size=11)
            yy += _ROW_H
        yy += 4
    return pic.svg()


_STEP_H = 190


def step_svg(data, palette: Palette = LIGHT) -> str:
    """The step response (exact, the first-order and the second-order estimate) as SVG text.

    Parameters
    ----------
    data : bandsketch.engine.present.stepdata.StepData
        The curves and markers, as the window's step plot draws them.
    palette : Palette, optional
        The colours (the light ones by default, for paper).

    Returns
    -------
    str
        A complete ``<svg>`` element.
    """
    c = palette
    height = _T + _STEP_H + _B
    pic = _Picture(WIDTH, height, "Step response", c)
    t = data.time
    curves = [v for v in (data.exact, data.first_order, data.second_order) if v is not None]
    # Room over the highest curve for the overshoot's label, clear of the key above the plot.
    top = max(1.1, max(float(v.max()) for v in curves) + 0.12)
    bottom = min(-0.05, min(float(v.min()) for v in curves) - 0.05)
    t_end = float(t[-1]) or 1.0
    x0, x1 = _L, WIDTH - _R

    def x(v):
        return x0 + np.asarray(v) / t_end * (x1 - x0)

    def y(v):
        return _T + (top - np.asarray(v)) / (top - bottom) * _STEP_H

    for level in (0.0, 0.1, 0.5, 0.9, 1.0):
        pic.line(x0, float(y(level)), x1, float(y(level)), c.grid, 0.6)
        pic.text(x0 - 5, float(y(level)) + 4, f"{level:g}", c.value, "end", 10)
    step = _nice_step(t_end, 6)
    k = 0
    while k * step <= t_end * (1 + 1e-9):
        xx = float(x(k * step))
        pic.line(xx, _T, xx, _T + _STEP_H, c.grid, 0.6)
        pic.text(xx, _T + _STEP_H + 14, f"{k * step:.4g}", c.value, "middle", 10)
        k += 1
    pic.line(x0, _T, x0, _T + _STEP_H, c.value, 0.8)
    pic.line(x0, _T + _STEP_H, x1, _T + _STEP_H, c.value, 0.8)
    pic.text((x0 + x1) / 2, height - 6, f"time ({data.time_label}) after an input step", c.ink, "middle", 11)
    pic.text(14, _T + _STEP_H / 2, "output ÷ final value", c.ink, "middle", 11, rotate=True)
    pic.polyline(x(t), y(data.exact), c.ink, 2.0)
    for values, dash in ((data.first_order, "6 4"), (data.second_order, "2 3")):
        if values is not None:
            pic.polyline(x(t), y(values), c.band_high, 1.6, dash)
    for m in data.markers:
        xx, yy = float(x(m.time)), float(y(m.level))
        pic.dot(xx, yy, c.ink)
        pic.text(xx + 6, yy + (-8 if m.level > 1 else 14), m.text, c.ink, size=10.5)
    lx = x0 + 4
    for colour, dash, label in ((c.ink, "", "exact"), (c.band_high, "6 4", f"1 {MINUS} e^({MINUS}t/b1)"),
                                (c.band_high, "2 3", "pair from b1, b2")):
        pic.line(lx, 12, lx + 22, 12, colour, 2, dash)
        pic.text(lx + 27, 16, label, c.ink, size=10.5)
        lx += 40 + 7 * len(label)
    return pic.svg()
