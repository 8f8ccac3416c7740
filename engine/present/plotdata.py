"""What the analysis views draw, computed once from an analysis: curves, markers, bars, verdict.

The plots and bars of the app turn these frozen objects into items and never compute; every
number and every label text they show is decided here, so it can be tested without Qt and
reads the same in every view.

The estimated responses are the first-order forms the time-constant estimates stand for:
above the mid band ``A_m / (1 + jω b1)``, below it ``A_m · s / (s + ω_L)`` with ``ω_L`` the
sum of the short-circuit reciprocal time constants.
"""

from __future__ import annotations

import csv
import math
from dataclasses import dataclass
from types import MappingProxyType
from typing import Mapping

import numpy as np

from ..core.band import Band
from ..core.values import MINUS, db_unit, error_text, format_gain, format_value
from ..solve.mna import SHORT

HALF_POWER_DB = 20 * math.log10(math.sqrt(2))
"""The −3 dB corner lies this many dB (3.0103) below the mid-band gain."""

POINTS_PER_DECADE = 40
MAX_POINTS = 600
DEFAULT_RANGE_HZ = (10.0, 100e6)
"""Sweep used when the analysis names no corner and no pole to centre on."""
MIN_DECADES = 4.0
"""A sweep narrower than this shows too little of the mid band around a single corner."""
RANGE_STEP_DECADES = 0.25
"""The swept span's ends are rounded outward to this step, so an edit that moves a corner a
little leaves the axes as they were (the curve moves against still axes, and the plot is not
re-ticked on every edit)."""
POLE_REACH_DECADES = 1.0
"""Poles further than this beyond the corners do not stretch the sweep: a parasitic pole at
tens of gigahertz would otherwise squeeze the corners into a corner of the plot."""

VIEW_DEPTH_DB = 60.0
"""How far below the mid-band gain the magnitude axis reaches at most, dB."""
VIEW_MARGIN_DB = 6.0
"""Room above and below the magnitude curve, dB."""
VIEW_STEP_DB = 10.0
"""The magnitude axis ends on a multiple of this (dB), out from its margins: an edit that
moves the curve by less keeps the axis, and its ticks, where they were."""
PHASE_STEP_DEG = 45.0
"""The phase axis ends on a multiple of an eighth of a turn."""
PHASE_MARGIN_DEG = 2.0
"""Room above and below the phase curve, degrees, before the axis is rounded out."""
PEAK_SHOWN_DB = 0.1
"""An exact gain this far above the mid-band gain (dB) is a peak the plot keeps in view."""
PEAK_ROOM = 0.25
"""Above the mid band (or a peak) the magnitude axis leaves this fraction of its span for labels."""

PAIR_TITLE = "Pole–zero pairs: pole → zero, no corner"
PAIR_TOTAL = "opening each costs < 3 dB"
PAIR_NOTE = ("a pole–zero pair: opening it costs less than 3 dB, so it sets no corner of its own; "
             "the f_L estimate counts it for the part of the 3 dB it costs at f_L")
BAND_TITLES = {Band.HIGH: "High band: τ, share of b1", Band.LOW: "Low band: 1/2πτ, share of the 3 dB at f_L",
               Band.NEUTRAL: "No effect on the gain"}


@dataclass(frozen=True)
class Curve:
    """One response curve.

    Attributes
    ----------
    freq_hz : numpy.ndarray
        Frequencies, Hz, ascending.
    magnitude_db : numpy.ndarray
        20·log10|H|, dB (of V/V, or of Ω for a current input).
    phase_deg : numpy.ndarray
        Phase, degrees, unwrapped.
    """

    freq_hz: np.ndarray
    magnitude_db: np.ndarray
    phase_deg: np.ndarray


@dataclass(frozen=True)
class Marker:
    """A corner marked on the Bode plot.

    Attributes
    ----------
    corner : str
        ``"high"`` (f_H) or ``"low"`` (f_L).
    estimated : bool
        True for the time-constant estimate, False for the exact corner.
    freq_hz : float
        Where the corner is, Hz.
    level_db : float
        The gain there, dB (the mid-band gain less 3.01 dB).
    text : str
        The label drawn beside it, e.g. ``"f_H ≈ 894 kHz"``.
    label_db : float
        Where the label is pinned, dB: an estimate's label sits above it, an exact one's
        below. The corner's level, or for an estimate the top of a peak on its side of the
        mid band, so the label does not hide the peak.
    """

    corner: str
    estimated: bool
    freq_hz: float
    level_db: float
    text: str
    label_db: float


@dataclass(frozen=True)
class BodeData:
    """Everything the Bode plot draws.

    Attributes
    ----------
    exact : Curve
        The exact response of the full network over the sweep.
    high_estimate : Curve or None
        ``A_m / (1 + jω b1)`` over the upper part of the sweep; None without high-band elements.
    low_estimate : Curve or None
        ``A_m · s / (s + ω_L)`` over the lower part of the sweep; None without low-band elements.
    midband_db : float
        20·log10|A_m|, dB.
    peak : (float, float) or None
        (Hz, dB) of the exact gain's highest point, when it rises more than
        :data:`PEAK_SHOWN_DB` above the mid band; None otherwise.
    markers : tuple of Marker
        f_H and f_L, estimated and exact, where they exist.
    gain_unit : str
        ``"V/V"``, or ``"V/A"`` for a current input (its dB are dBΩ).
    """

    exact: Curve
    high_estimate: Curve | None
    low_estimate: Curve | None
    midband_db: float
    peak: tuple | None
    markers: tuple
    gain_unit: str

    @property
    def phase_view_deg(self) -> tuple:
        """(bottom, top) of the phase axis, degrees: the exact phase wherever the magnitude
        axis shows the exact curve (the far tails, sunk below it, do not stretch the axis),
        out to the next eighth of a turn."""
        bottom_db = self.magnitude_view_db[0]
        shown = self.exact.phase_deg[self.exact.magnitude_db >= bottom_db]
        if shown.size == 0:
            shown = self.exact.phase_deg
        step, room = PHASE_STEP_DEG, PHASE_MARGIN_DEG
        return (step * math.floor((float(shown.min()) - room) / step),
                step * math.ceil((float(shown.max()) + room) / step))

    @property
    def gain_axis(self) -> str:
        """The title of the magnitude axis: ``"Gain (dB)"``, or ``"Gain (dBΩ)"`` for V/A."""
        return f"Gain ({db_unit(self.gain_unit)})"

    @property
    def freq_range(self) -> tuple:
        """(lowest, highest) swept frequency, Hz."""
        return float(self.exact.freq_hz[0]), float(self.exact.freq_hz[-1])

    @property
    def magnitude_view_db(self) -> tuple:
        """(bottom, top) of the magnitude axis, dB: the exact curve, but no deeper than
        :data:`VIEW_DEPTH_DB` below the mid band, so a deep notch does not flatten the corners.
        Above the mid band, or above a peak, the axis leaves :data:`PEAK_ROOM` of its span
        (at least :data:`VIEW_MARGIN_DB`) for the corner labels; both ends are then rounded
        out to :data:`VIEW_STEP_DB`."""
        m = self.exact.magnitude_db
        return self.magnitude_view_from(max(float(m.min()), self.midband_db - VIEW_DEPTH_DB) - VIEW_MARGIN_DB)

    def magnitude_view_from(self, bottom_db: float) -> tuple:
        """(bottom, top) of a magnitude axis that reaches down to ``bottom_db`` (dB): the top
        leaves the corner labels their share of that span, as :attr:`magnitude_view_db` does."""
        # The corner labels sit just above the -3 dB line, so the room above the curve is a
        # share of the span (it is a share of the plot's height on screen), not a fixed dB.
        highest = self.midband_db if self.peak is None else self.peak[1]
        top = highest + max(VIEW_MARGIN_DB, PEAK_ROOM * (highest - bottom_db) / (1 - PEAK_ROOM))
        step = VIEW_STEP_DB
        return step * math.floor(bottom_db / step), step * math.ceil(top / step)

    def readout(self, freq_hz: float) -> str:
        """The exact response at the swept point nearest ``freq_hz``, as the hover line reads it.

        Returns
        -------
        str
            E.g. ``"f = 1.23 MHz · 28.9 dB · ∠ 135.2°"``; empty outside the sweep.
        """
        f = self.exact.freq_hz
        if not (f[0] <= freq_hz <= f[-1]):
            return ""
        i = int(np.argmin(np.abs(np.log(f / freq_hz))))
        unit = db_unit(self.gain_unit)
        return (f"f = {format_value(f[i], 'Hz')} · {self.exact.magnitude_db[i]:.1f} {unit}"
                f" · ∠ {self.exact.phase_deg[i]:.1f}°")


@dataclass(frozen=True)
class BarRow:
    """One element's bar.

    Attributes
    ----------
    name : str
        Element name (``Cin``, ``Q1.cmu``).
    part : str
        The part on the sheet the element belongs to (``Q1`` for ``Q1.cmu``).
    band : str
        ``"high"``, ``"low"`` or ``"neutral"``.
    value : float
        High band: the time constant τ, s. Low band: its pole 1/(2πτ), Hz. Neutral: 0.
    value_text : str
        ``value`` formatted with its unit (``"150 ns"``, ``"53.1 Hz"``; a pole–zero pair
        ``"19.2 Hz → 15.9 Hz"``, its pole and zero); ``"—"`` if neutral.
    share : float
        Share of b1 (high band) or of the 3 dB at f_L (low band), 0–1 (below 0 for a low-band
        element whose opening raises the gain); 0 for neutral elements.
    share_text : str
        E.g. ``"84 %"`` (of the sum named in the group's title); empty if neutral.
    pinned : bool
        The user pinned this element's band.
    dominant : bool
        The largest share of its band.
    tooltip : str
        Band, R, τ and why the element is in its band, in plain words.
    """

    name: str
    part: str
    band: str
    value: float
    value_text: str
    share: float
    share_text: str
    pinned: bool
    dominant: bool
    tooltip: str


@dataclass(frozen=True)
class BandGroup:
    """The bars of one band, largest share first, with the sum they add up to.

    Attributes
    ----------
    band : str
        ``"high"``, ``"low"`` or ``"neutral"``.
    title : str
        Heading, e.g. ``"High band: τ, share of b1"``.
    total_text : str
        The sum and the estimate it gives, e.g. ``"b1 = 178 ns → f_H ≈ 894 kHz"``.
    rows : tuple of BarRow
    """

    band: str
    title: str
    total_text: str
    rows: tuple


@dataclass(frozen=True)
class BarData:
    """The time-constant bars: the high band, then the low band, then the neutral elements."""

    groups: tuple

    def row(self, name: str) -> BarRow | None:
        """The bar of element ``name``, or None if it has none."""
        return next((r for g in self.groups for r in g.rows if r.name == name), None)


@dataclass(frozen=True)
class VerdictData:
    """The verdict strip's lines.

    Attributes
    ----------
    gain_text : str
        Mid-band gain, e.g. ``"A_m = −42.3 V/V (32.5 dB)"``.
    high_text : str
        f_H estimated against exact with the error, or why there is none.
    low_text : str
        f_L likewise.
    dominant_text : str
        Which element limits the bandwidth and by how much.
    warnings : tuple of str
        The analysis's warnings in plain words.
    """

    gain_text: str
    high_text: str
    low_text: str
    dominant_text: str
    warnings: tuple


def part_of(element: str) -> str:
    """The sheet part an element belongs to: ``Q1`` for the block-internal ``Q1.cmu``.

    Parameters
    ----------
    element : str
        An element's name.
    """
    return element.split(".", 1)[0]


def _positive(x) -> float | None:
    return float(x) if x is not None and math.isfinite(x) and x > 0 else None


def _pole_frequencies(analysis) -> list:
    """Hz: the high band's exact poles (−1/λ) and each low-band element's 1/(2πτ).

    These come with the analysis; the full network's poles would need an eigenproblem of
    the whole system on every edit, which the sweep range does not justify.
    """
    out = [1 / (2 * math.pi * abs(lam)) for lam in (analysis.high_time_constants or ()) if abs(lam) > 0]
    out += [1 / (2 * math.pi * r.time_constant) for r in analysis.elements.values()
            if r.band == Band.LOW and r.time_constant and r.time_constant > 0]
    return [f for f in out if math.isfinite(f)]


def sweep_range(analysis) -> tuple:
    """The frequencies (Hz) the plot spans: a decade beyond the outermost corners and poles,
    out to the next quarter decade.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis

    Returns
    -------
    (float, float)
        Lowest and highest frequency, Hz, at least :data:`MIN_DECADES` apart.
    """
    corners = [f for f in map(_positive, (analysis.f_low_estimate, analysis.f_low_exact,
                                          analysis.f_high_estimate, analysis.f_high_exact)) if f]
    poles = _pole_frequencies(analysis)
    if corners:
        lo_c, hi_c = min(corners), max(corners)
        reach = 10 ** POLE_REACH_DECADES
        poles = [f for f in poles if lo_c / reach <= f <= hi_c * reach]
    found = corners + poles
    if not found:
        return DEFAULT_RANGE_HZ
    lo, hi = min(found) / 10, max(found) * 10
    short = MIN_DECADES - math.log10(hi / lo)
    if short > 0:
        if _positive(analysis.f_low_estimate) or _positive(analysis.f_low_exact):
            lo, hi = lo / 10 ** (short / 2), hi * 10 ** (short / 2)
        else:
            # DC-coupled: the missing decades go below, where the flat mid band is.
            lo /= 10 ** short
    step = RANGE_STEP_DECADES
    # The 1e-9 keeps an end already on a step (1e7 Hz) from being pushed a step further by rounding.
    return (10 ** (step * math.floor(math.log10(lo) / step + 1e-9)),
            10 ** (step * math.ceil(math.log10(hi) / step - 1e-9)))


def sweep_frequencies(analysis, span_hz: tuple | None = None) -> np.ndarray:
    """Log-spaced sweep frequencies (Hz) over ``span_hz``, or over :func:`sweep_range`.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    span_hz : (float, float), optional
        The lowest and highest frequency, Hz; None spans :func:`sweep_range`.
    """
    lo, hi = span_hz or sweep_range(analysis)
    decades = math.log10(hi / lo)
    n = int(min(MAX_POINTS, max(200, round(decades * POINTS_PER_DECADE))))
    return np.logspace(math.log10(lo), math.log10(hi), n)


DB_FLOOR = -400.0
"""Where a transmission zero's −∞ dB is drawn: far below any view, and a finite number to plot."""


def _db(h) -> np.ndarray:
    with np.errstate(divide="ignore"):
        return np.maximum(20 * np.log10(np.abs(h)), DB_FLOOR)


def _curve(f, h, reference_deg: float, anchor_hz: float) -> Curve:
    return Curve(f, _db(h), _phase_from(f, h, reference_deg, anchor_hz))


def _phase_from(f, h, reference_deg: float, anchor_hz: float) -> np.ndarray:
    """The unwrapped phase of ``h`` (degrees), shifted by whole turns to read near
    ``reference_deg`` at the frequency nearest ``anchor_hz`` (the mid band), so every curve
    agrees there."""
    phase = np.degrees(np.unwrap(np.angle(h)))
    at = int(np.argmin(np.abs(np.log(np.asarray(f) / anchor_hz))))
    turns = np.round((reference_deg - phase[at]) / 360.0)
    return phase + 360.0 * turns


def phase_deg(analysis, freq_hz, h) -> np.ndarray:
    """The phase of the response ``h`` of ``analysis`` at ``freq_hz``, degrees, read from the
    one reference every output shares (the plot, its CSV, the command line's CSV): unwrapped,
    in the whole turns that put the mid band at 0° for a non-inverting stage and at −180° for
    an inverting one.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    freq_hz : array_like
        Frequencies, Hz, ascending.
    h : array_like
        The complex response there (V/V, or V/A = Ω).
    """
    return _phase_from(freq_hz, h, _midband_phase(float(analysis.midband_gain)), midband_frequency(analysis))


def midband_frequency(analysis) -> float:
    """A frequency (Hz) inside the mid band: between the corners, or well clear of the only one.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    """
    f_lo = _positive(analysis.f_low_exact) or _positive(analysis.f_low_estimate)
    f_hi = _positive(analysis.f_high_exact) or _positive(analysis.f_high_estimate)
    if f_lo and f_hi:
        return math.sqrt(f_lo * f_hi)
    if f_hi:
        return f_hi / 100
    if f_lo:
        return f_lo * 100
    return math.sqrt(DEFAULT_RANGE_HZ[0] * DEFAULT_RANGE_HZ[1])


def _midband_phase(gain: float) -> float:
    # An inversion is a lag of half a turn, so the high band's further lag reads below it.
    return -180.0 if gain < 0 else 0.0


def high_estimate_response(midband_gain: float, b1: float, freq_hz) -> np.ndarray:
    """``A_m / (1 + jω b1)``: the first-order response the open-circuit estimate stands for.

    Parameters
    ----------
    midband_gain : float
        A_m, signed (V/V or Ω).
    b1 : float
        Sum of the open-circuit time constants, s.
    freq_hz : array_like
        Frequencies, Hz.
    """
    w = 2 * np.pi * np.asarray(freq_hz, dtype=float)
    return midband_gain / (1 + 1j * w * b1)


def low_estimate_response(midband_gain: float, omega_low: float, freq_hz) -> np.ndarray:
    """``A_m · s / (s + ω_L)``: the first-order response the short-circuit estimate stands for.

    Parameters
    ----------
    midband_gain : float
        A_m, signed (V/V or Ω).
    omega_low : float
        Sum of the short-circuit reciprocal time constants ω_L, rad/s.
    freq_hz : array_like
        Frequencies, Hz.
    """
    s = 2j * np.pi * np.asarray(freq_hz, dtype=float)
    return midband_gain * s / (s + omega_low)


def _marker_text(corner: str, estimated: bool, f: float) -> str:
    sym = "f_H" if corner == "high" else "f_L"
    return f"{sym} {'≈' if estimated else '='} {format_value(f, 'Hz')}"


def bode_data(analysis, span_hz: tuple | None = None) -> BodeData:
    """The Bode plot's curves and markers for ``analysis``.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    span_hz : (float, float), optional
        The sweep the designer chose, Hz (lowest, highest); None spans :func:`sweep_range`.

    Returns
    -------
    BodeData
    """
    f = sweep_frequencies(analysis, span_hz)
    am = float(analysis.midband_gain)
    ref, anchor = _midband_phase(am), midband_frequency(analysis)
    exact = _curve(f, np.asarray(analysis.response(f)), ref, anchor)
    f_hi, f_lo = _positive(analysis.f_high_estimate), _positive(analysis.f_low_estimate)
    # Each estimate describes one side of the mid band; they meet at its geometric centre.
    split = math.sqrt(f_hi * f_lo) if f_hi and f_lo else None
    high = low = None
    if f_hi and _positive(analysis.b1):
        fh = f if split is None else f[f >= split]
        if fh.size:
            high = _curve(fh, high_estimate_response(am, analysis.b1, fh), ref, anchor)
    if f_lo and _positive(analysis.omega_low_estimate):
        fl = f if split is None else f[f <= split]
        if fl.size:
            low = _curve(fl, low_estimate_response(am, analysis.omega_low_estimate, fl), ref, anchor)
    mid_db = float(_db(am))
    level = mid_db - HALF_POWER_DB
    top = int(np.argmax(exact.magnitude_db))
    peak = (float(f[top]), float(exact.magnitude_db[top])) \
        if exact.magnitude_db[top] - mid_db > PEAK_SHOWN_DB else None
    peak_side = None if peak is None else ("high" if peak[0] > anchor else "low")
    markers = []
    for corner, est, value in (("high", True, analysis.f_high_estimate),
                               ("high", False, analysis.f_high_exact),
                               ("low", True, analysis.f_low_estimate),
                               ("low", False, analysis.f_low_exact)):
        if _positive(value):
            label_db = max(level, peak[1]) if est and corner == peak_side else level
            markers.append(Marker(corner, est, float(value), level, _marker_text(corner, est, value), label_db))
    return BodeData(exact, high, low, mid_db, peak, tuple(markers), analysis.gain_unit)


@dataclass(frozen=True)
class CornerShift:
    """How the corners moved from one response to the next (a value scrub's note).

    Attributes
    ----------
    text : str
        The whole move in a line, e.g. ``"f_H 757 → 812 kHz"``: each corner that moved,
        ``"·"`` between them; the mid-band gain's move when neither did (``"A_m 32.1 → 33.0 dB"``).
    labels : Mapping
        Corner (``"high"``, ``"low"``) -> the text its exact marker carries meanwhile
        (``"f_H 757 → 812 kHz"``), for each corner that moved and is still there.
    note : str
        What no marker can carry, written apart: a corner that came or went, or the gain's
        move when no corner moved; empty when the labels say it all.
    """

    text: str
    labels: Mapping
    note: str


def moved_text(before: float, after: float, unit: str) -> str:
    """``"757 → 812 kHz"``: two values with one prefix and unit when they share them.

    Parameters
    ----------
    before, after : float
        The values in their SI unit (Hz, Ω, F ...), the one ``unit`` names.
    unit : str
        That unit's symbol (``"Hz"``).
    """
    a, b = format_value(before, unit), format_value(after, unit)
    head_a, _, tail_a = a.partition(" ")
    head_b, _, tail_b = b.partition(" ")
    return f"{head_a} → {b}" if tail_a == tail_b else f"{a} → {b}"


def _exact_corners(data: BodeData) -> dict:
    return {mk.corner: mk.freq_hz for mk in data.markers if not mk.estimated}


def corner_shift(before: BodeData, after: BodeData) -> CornerShift:
    """How the exact corners of ``after`` moved from those of ``before`` (a value scrub's note).

    Parameters
    ----------
    before, after : BodeData
        The responses before and after a change.

    Returns
    -------
    CornerShift
    """
    old, new = _exact_corners(before), _exact_corners(after)
    labels, apart = {}, []
    for corner, sym in (("high", "f_H"), ("low", "f_L")):
        if corner in old and corner in new:
            # A move too small to change the three figures written is no move to the reader.
            if format_value(new[corner], "Hz") != format_value(old[corner], "Hz"):
                labels[corner] = f"{sym} {moved_text(old[corner], new[corner], 'Hz')}"
        elif corner in old:
            apart.append(f"{sym} {format_value(old[corner], 'Hz')} → none")
        elif corner in new:
            apart.append(f"{sym} none → {format_value(new[corner], 'Hz')}")
    if not labels and not apart:
        apart = [f"A_m {before.midband_db:.1f} → {after.midband_db:.1f} {db_unit(after.gain_unit)}"]
    note = " · ".join(apart)
    return CornerShift(" · ".join([*labels.values(), *apart]), MappingProxyType(labels), note)


SENSITIVITY_HEADS = MappingProxyType({Band.HIGH: "∂ln f_H/∂ln C", Band.LOW: "∂ln f_L/∂ln C"})
"""The heading over each band's column of exact sensitivities (C stands for L on an inductor)."""


@dataclass(frozen=True)
class BarSensitivity:
    """The exact sensitivity written beside one bar.

    Attributes
    ----------
    name : str
        The element (``Cpd``, ``Q1.cmu``).
    value : float or None
        d ln f / d ln x of the exact corner the element's band sets (f_H for the high band,
        f_L for the low band) to the element's value x, dimensionless; None where the design
        has no such corner or it could not be computed.
    text : str
        ``value`` as written (``"−0.93"``; ``"—"`` for None).
    leads : bool
        The largest magnitude of its band: the element the exact answer says to change.
    tooltip : str
        What the number means, in words.
    """

    name: str
    value: float | None
    text: str
    leads: bool
    tooltip: str


def bar_sensitivities(bars: BarData, sens) -> Mapping:
    """Element -> :class:`BarSensitivity` for every bar of ``bars``.

    Parameters
    ----------
    bars : BarData
        The bars drawn.
    sens : bandsketch.engine.advise.sensitivity.Sensitivities
        The adjoint sensitivities of the same analysis (dimensionless).
    """
    rows = {r.value.element: r for r in sens.rows}
    out = {}
    for g in bars.groups:
        figure = {Band.HIGH: ("high_exact", "f_H"), Band.LOW: ("low_exact", "f_L")}.get(g.band)
        values = {r.name: (getattr(rows[r.name], figure[0]) if figure and r.name in rows else None) for r in g.rows}
        known = [abs(v) for v in values.values() if v is not None]
        for name, v in values.items():
            if v is None:
                out[name] = BarSensitivity(name, None, "—", False, "No exact corner of this band to move")
                continue
            text = "≈0" if abs(v) < 0.005 else f"{v:+.2f}".replace("-", "−")
            tip = (f"Exact: 1 % more {name} moves {figure[1]} by {v:+.2f} %".replace("-", "−")
                   + " (adjoint sensitivity of the exact corner)")
            out[name] = BarSensitivity(name, float(v), text, bool(known) and abs(v) == max(known) and abs(v) >= 0.005, tip)
    return MappingProxyType(out)


@dataclass(frozen=True)
class TargetMarks:
    """The designer's targets as the Bode plot draws them; None where a target is not set.

    Attributes
    ----------
    f_high_min_hz, f_low_max_hz : float or None
        The least upper corner and the most lower corner allowed, Hz.
    gain_db : (float, float) or None
        The window 20·log10|A_m| must fall in (dB of the gain unit), low to high.
    f_high_text, f_low_text, gain_text : str
        Their labels (``"f_H ≥ 1 MHz"``, ``"f_L ≤ 20 Hz"``, ``"gain 38.5–41.5 dB"``, ``"gain −1.36 to −0.5 dB"``).
    """

    f_high_min_hz: float | None = None
    f_low_max_hz: float | None = None
    gain_db: tuple | None = None
    f_high_text: str = ""
    f_low_text: str = ""
    gain_text: str = ""


def target_marks(targets, gain_unit: str = "V/V") -> TargetMarks:
    """What the Bode plot draws of ``targets``.

    Parameters
    ----------
    targets : bandsketch.engine.advise.targets.Targets
        The design's targets, parsed (Hz, and the gain in its unit).
    gain_unit : str
        ``"V/V"``, or ``"V/A"`` for a current input (its dB are dBΩ).
    """
    window = None
    gain_text = ""
    if targets.gain_min and targets.gain_max:
        window = (float(_db(targets.gain_min)), float(_db(targets.gain_max)))
        low, high = (f"{db:.3g}".replace("-", MINUS) for db in window)
        # An en dash between two negative figures reads as a third minus ("−1.36–−0.49").
        between = " to " if window[0] < 0 else "–"
        gain_text = f"gain {low}{between}{high} {db_unit(gain_unit)}"
    hi, lo = targets.f_high_min, targets.f_low_max
    return TargetMarks(hi, lo, window, f"f_H ≥ {format_value(hi, 'Hz')}" if hi else "",
                       f"f_L ≤ {format_value(lo, 'Hz')}" if lo else "", gain_text)


def _percent(share: float) -> str:
    # A small but real share reads "<1 %", not "0 %", which would say it adds nothing; a
    # small negative one (a pair whose opening raises the gain a little) "−<1 %".
    if 0 < abs(share) < 0.005:
        return "<1 %" if share > 0 else "−<1 %"
    return f"{100 * share:.0f} %".replace("-", "−")


def _band_sum_name(band: Band) -> str:
    return "b1" if band == Band.HIGH else "the 3 dB at f_L"


def element_label(result) -> str:
    """The label of an element's test picture, e.g. ``"R = 74.9 kΩ · τ = 150 ns · 84 % of b1"``.

    Parameters
    ----------
    result : capacitor or inductor result of an Analysis
    """
    if result.band == Band.NEUTRAL:
        return f"{result.name} has no effect on the gain: it sets no corner"
    return (f"R = {format_value(result.resistance, 'Ω')} · τ = {format_value(result.time_constant, 's')}"
            f" · {_percent(result.share)} of {_band_sum_name(result.band)}")


_BAND_WORDS = {
    Band.HIGH: "high band: open in the mid band, it sets the upper corner",
    Band.LOW: "low band: a short in the mid band, it sets the lower corner",
    Band.NEUTRAL: "neutral: neither shorting nor opening it changes the gain",
}


def element_tooltip(result) -> str:
    """Hover text for an element: band, R, τ and why it is in that band.

    Parameters
    ----------
    result : capacitor or inductor result of an Analysis
    """
    lines = [f"{result.name}: {_BAND_WORDS[result.band]}" + (" (pinned)" if result.pinned else "")]
    if result.band != Band.NEUTRAL:
        lines.append(element_label(result))
    if result.pole_zero_pair:
        lines.append(PAIR_NOTE)
    lines.append(f"State: {result.state_reason}")
    lines.append(f"Why: {result.reason}")
    return "\n".join(lines)


def _group(band: Band, results: list, analysis, pairs: bool = False) -> BandGroup:
    results = sorted(results, key=lambda r: (-r.share, r.name))
    top = {Band.HIGH: analysis.dominant_high, Band.LOW: analysis.dominant_low}.get(band)
    rows = []
    for r in results:
        if band == Band.HIGH:
            value, text = r.time_constant, format_value(r.time_constant, "s")
        elif band == Band.LOW:
            value = 1 / (2 * math.pi * r.time_constant)
            text = format_value(value, "Hz")
            if pairs:
                text += f" → {format_value(r.f_zero, 'Hz')}"
        else:
            value, text = 0.0, "—"
        share_text = "" if band == Band.NEUTRAL else _percent(r.share)
        rows.append(BarRow(r.name, part_of(r.name), band, float(value), text,
                           0.0 if band == Band.NEUTRAL else float(r.share), share_text,
                           bool(r.pinned), r.name == top, element_tooltip(r)))
    if band == Band.HIGH:
        total = f"b1 = {format_value(analysis.b1, 's')}"
        if _positive(analysis.f_high_estimate):
            total += f" → f_H ≈ {format_value(analysis.f_high_estimate, 'Hz')}"
    elif band == Band.LOW:
        total = f"ω_L = {format_value(analysis.omega_low_estimate or 0.0, 'rad/s')}"
        if _positive(analysis.f_low_estimate):
            total += f" → f_L ≈ {format_value(analysis.f_low_estimate, 'Hz')}"
    else:
        total = "shorting or opening these leaves the gain as it is"
    if pairs:
        return BandGroup(band, PAIR_TITLE, PAIR_TOTAL, tuple(rows))
    return BandGroup(band, BAND_TITLES[band], total, tuple(rows))


def bar_data(analysis) -> BarData:
    """The time-constant bars of ``analysis``: one group per band that has elements, and the
    low band's pole–zero pairs in a group of their own after it.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    """
    by_band: dict = {Band.HIGH: [], Band.LOW: [], Band.NEUTRAL: []}
    pairs = [r for r in analysis.elements.values() if r.pole_zero_pair]
    for r in analysis.elements.values():
        if not r.pole_zero_pair:
            by_band[r.band].append(r)
    groups = [_group(b, rs, analysis) for b, rs in by_band.items() if rs]
    if pairs:
        # Drawn apart, after the corner-setting low band: a pair moves no corner of its own.
        groups.insert(sum(1 for b in (Band.HIGH, Band.LOW) if by_band[b]), _group(Band.LOW, pairs, analysis, pairs=True))
    return BarData(tuple(groups))


def _corner_text(sym: str, est, exact) -> str:
    est, exact = _positive(est), _positive(exact)
    if est and exact:
        return (f"{sym} ≈ {format_value(est, 'Hz')} estimated, {format_value(exact, 'Hz')} exact "
                f"({error_text(est, exact)})")
    if est:
        return f"{sym} ≈ {format_value(est, 'Hz')} estimated; the exact gain never falls 3 dB"
    if exact:
        return f"{sym} = {format_value(exact, 'Hz')} exact; no element of this band to estimate it"
    return f"{sym}: none (no element sets this corner)"


def _gain_text(gain: float, unit: str) -> str:
    level = f"{float(_db(gain)):.1f}".replace("-", MINUS)
    return f"A_m = {format_gain(gain, unit)} ({level} {db_unit(unit)})"


def verdict_data(analysis) -> VerdictData:
    """The verdict strip's lines for ``analysis``.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    """
    bars = bar_data(analysis)
    limits = []
    for g in bars.groups:
        top = next((r for r in g.rows if r.dominant), None)
        if top is not None:
            corner = "f_H" if g.band == Band.HIGH else "f_L"
            limits.append(f"{top.name} sets {corner} ({top.share_text} of {_band_sum_name(g.band)})")
    dominant = "; ".join(limits) if limits else "no element sets a corner"
    placed = [r.name for r in analysis.elements.values() if r.band == Band.NEUTRAL and r.state == SHORT]
    if placed:
        dominant += f"; shorted at mid band by their impedance: {', '.join(placed)}"
    return VerdictData(_gain_text(float(analysis.midband_gain), analysis.gain_unit),
                       _corner_text("f_H", analysis.f_high_estimate, analysis.f_high_exact),
                       _corner_text("f_L", analysis.f_low_estimate, analysis.f_low_exact),
                       dominant, tuple(analysis.warnings))


def response_csv_columns(gain_unit: str) -> list[str]:
    """The columns of the response CSV for a stage whose gain is in ``gain_unit``.

    ``frequency_hz``; ``magnitude_db`` (dB of the gain unit: dBΩ for V/A); the linear magnitude
    ``magnitude_v_per_v`` or ``magnitude_ohm``; ``phase_deg`` (from :func:`phase_deg`'s one
    reference: unwrapped, the mid band at 0° for a non-inverting stage and −180° for an
    inverting one); then each estimate's dB and phase (``high_estimate_db``,
    ``high_estimate_phase_deg``, ``low_estimate_db``, ``low_estimate_phase_deg``), blank
    where it is not drawn.

    Parameters
    ----------
    gain_unit : str
        ``"V/V"``, or ``"V/A"`` for a current input.
    """
    linear = "magnitude_ohm" if gain_unit == "V/A" else "magnitude_v_per_v"
    return ["frequency_hz", "magnitude_db", linear, "phase_deg", "high_estimate_db", "high_estimate_phase_deg",
            "low_estimate_db", "low_estimate_phase_deg"]


def write_response_csv(data: BodeData, path) -> None:
    """Write the response as CSV, one row per swept frequency, in the columns of
    :func:`response_csv_columns`: the one writer of the window's export and of
    ``bandsketch analyze --csv``. Numbers are written with a plain ``-`` and ``e`` exponents.

    Parameters
    ----------
    data : BodeData
        The curves, as the Bode plot draws them.
    path : str or os.PathLike
        Where to write the CSV.
    """
    estimates = []
    for curve in (data.high_estimate, data.low_estimate):
        at = {}
        if curve is not None:
            for f, m, ph in zip(curve.freq_hz, curve.magnitude_db, curve.phase_deg):
                at[float(f)] = (f"{m:.9g}", f"{ph:.9g}")
        estimates.append(at)
    exact = data.exact
    linear = 10.0 ** (exact.magnitude_db / 20.0)
    with open(path, "w", newline="", encoding="utf-8") as fh:
        out = csv.writer(fh)
        out.writerow(response_csv_columns(data.gain_unit))
        for f, db, mag, ph in zip(exact.freq_hz, exact.magnitude_db, linear, exact.phase_deg):
            row = [f"{f:.9g}", f"{db:.9g}", f"{mag:.9g}", f"{ph:.9g}"]
            for at in estimates:
                row += at.get(float(f), ("", ""))
            out.writerow(row)


HISTOGRAM_TICKS = 5
"""At most this many labelled ticks under a spread histogram (they must fit a third of a panel)."""
HISTOGRAM_MARGIN = 0.04
"""Room left each side of a histogram's span, as a fraction of it."""


@dataclass(frozen=True)
class HistogramAxis:
    """The value axis of a spread histogram: its span and its labelled ticks.

    Attributes
    ----------
    low, high : float
        The span shown, in the histogram's unit: every bin, the nominal value and the target
        bounds, with a little room each side.
    ticks : tuple of (float, str)
        Tick positions on 1-2-2.5-5 steps, each written with an SI prefix and the unit
        (``(250e3, "250 kHz")``), so no axis ever reads a bare 250000.
    """

    low: float
    high: float
    ticks: tuple


def _nice_step(span: float, most: int) -> float:
    raw = span / max(1, most - 1)
    decade = 10 ** math.floor(math.log10(raw))
    return next(m * decade for m in (1, 2, 2.5, 5, 10) if m * decade >= raw)


def histogram_axis(hist) -> HistogramAxis:
    """Span and tick labels for the value axis of ``hist`` (an :class:`bandsketch.engine.advise.tolerance.Histogram`).

    Labels use :func:`bandsketch.engine.core.values.format_value` with as many digits as it takes for
    neighbouring ticks to read differently.

    Parameters
    ----------
    hist : bandsketch.engine.advise.tolerance.Histogram
        Values in the figure's unit (Hz, or the gain unit).
    """
    marks = [float(hist.edges[0]), float(hist.edges[-1])] + [v for v, _ in hist.target_lines]
    if hist.nominal:
        marks.append(float(hist.nominal))
    lo, hi = min(marks), max(marks)
    if hi <= lo:
        # One value only: a span of ±1 % round it (or ±1 at zero) still reads.
        pad = abs(lo) * 0.01 or 1.0
        lo, hi = lo - pad, hi + pad
    margin = (hi - lo) * HISTOGRAM_MARGIN
    lo, hi = lo - margin, hi + margin
    step = _nice_step(hi - lo, HISTOGRAM_TICKS)
    values = [k * step for k in range(math.ceil(lo / step), math.floor(hi / step) + 1)]
    for digits in range(3, 8):
        texts = [format_value(v, hist.unit, digits) for v in values]
        if len(set(texts)) == len(texts):
            break
    return HistogramAxis(lo, hi, tuple(zip(values, texts)))
