"""Step and pulse responses of a stage, their figures, and the estimates beside them.

The exact waveform comes from :mod:`bandsketch.engine.solve.waveform`. The figures (10–90 %
rise, overshoot, settling, 50 % delay, pulse sag) are read off it against the level the edge
settles to; the estimates are the same figures of the responses the time constants predict:
a single pole of time constant b1, and the pair 1/(1 + b1·s + b2·s²).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..core.values import format_gain, format_value
from ..core.band import Band
from .waveform import MODAL_LIMIT, dc_gain, integrated_step, modal_step

RISE_FROM, RISE_TO, DELAY_LEVEL = 0.1, 0.9, 0.5
"""The rise time runs from 10 % to 90 % of the final value; the delay to 50 %."""
SETTLE_BAND, SETTLE_BAND_FINE = 0.01, 0.001
"""Settling bands, as fractions of the final value."""
LN9 = math.log(9.0)
"""A single pole's 10–90 % rise time is ln 9·τ ≈ 2.197·τ."""
LIGHT_DAMPING = 0.5
"""A complex pair damped less than this gets a warning (about 16 % overshoot or more)."""
UNDERSHOOT_NOTED = 1e-3
"""A wrong-way start larger than this fraction of the final value gets a warning."""
SLOW_TAIL = 5.0
"""Settling to 1 % later than this multiple of the 90 % time, without overshoot, is a slow tail."""
PAIR_POINTS = 4001
"""Samples of the equivalent pair's own response its figures are read from."""
METHODS = ("modal", "integrated")


@dataclass(frozen=True)
class TimeFigure:
    """One figure of a step or pulse response, exact and estimated.

    Attributes
    ----------
    name : str
        What it is, in words (``"rise time (10–90 %)"``).
    unit : str
        ``"s"`` for a time, ``"fraction"`` for a share of the final value.
    exact : float or None
        From the exact waveform; None when the waveform does not reach it in its window.
    first_order : float or None
        From a single pole of time constant b1 (for the sag: ω_L·T).
    second_order : float or None
        From the pair 1/(1 + b1·s + b2·s²); None without b2.
    from_bandwidth : float or None
        The rise time from the exact upper corner, ln 9/(2π·f_H) ≈ 0.35/f_H; None otherwise.
    """

    name: str
    unit: str
    exact: float | None
    first_order: float | None
    second_order: float | None = None
    from_bandwidth: float | None = None

    def error(self, estimate: float | None) -> float | None:
        """The estimate's error: relative ((est − exact)/exact) for a time, the difference
        (est − exact, a fraction of the final value) for a fraction; None when either is missing."""
        if estimate is None or self.exact is None:
            return None
        if self.unit == "fraction":
            return estimate - self.exact
        return (estimate - self.exact) / self.exact if self.exact else None

    @property
    def estimates(self) -> dict[str, float | None]:
        """Label -> estimate, for tables: ``"first order"``, ``"second order"``, ``"from f_H"``."""
        out = {"first order": self.first_order, "second order": self.second_order}
        if self.name.startswith("rise"):
            out["from f_H"] = self.from_bandwidth
        return out


@dataclass(frozen=True)
class StepResponse:
    """The response to a unit step at the input; immutable.

    Attributes
    ----------
    t : numpy.ndarray
        s, uniform from 0 (read-only).
    y : numpy.ndarray
        The output per unit input step (gain unit: V/V or V/A), exact; y[0] = 0 is the output
        before the step, so a jump at t = 0 (direct feed-through) shows between t[0] and t[1].
    y_first_order, y_second_order : numpy.ndarray or None
        The estimated responses on ``t``: final·(1 − e^(−t/b1)), and the pair's; None when b1
        (or b2) is not known or not positive.
    final_value : float
        Gain unit: the level the edge settles to, H(0) when the d.c. gain is within 3 dB of
        the mid-band gain, else the mid-band gain (a low band makes the response sag later).
    gain_unit : str
        ``"V/V"`` or ``"V/A"``.
    method : str
        ``"modal"`` (poles and residues) or ``"integrated"`` (L-stable integration).
    rise_time : float or None
        s, 10 % to 90 % of the final value; None when 90 % is not reached in the window.
    time_10, time_90 : float or None
        s, when the response first reaches 10 % and 90 % (the rise markers).
    overshoot : float
        Fraction of the final value the response exceeds it by at most; 0 when none.
    peak_time : float or None
        s, where the overshoot peaks; None without overshoot.
    undershoot : float
        Fraction of the final value the response first moves the wrong way by; 0 when none.
    settling_time, settling_time_fine : float or None
        s, after which the response stays within 1 % (0.1 %) of the final value; None when it
        does not within the window.
    delay : float or None
        s, to 50 % of the final value.
    rise_time_estimate : float or None
        s, ln 9·b1 ≈ 2.2·b1 (a dominant pole).
    rise_time_estimate_2nd : float or None
        s, the 10–90 % rise of the pair 1/(1 + b1·s + b2·s²).
    damping : float or None
        ζ = b1/(2√b2) of that pair; None without b2.
    figures : tuple of TimeFigure
        Rise, overshoot, settling to 1 % and 0.1 %, delay: exact and estimated.
    warnings : tuple of str
        Plain-language notes on the shape: light damping, a wrong-way start, a slow tail.
    """

    t: np.ndarray = field(repr=False)
    y: np.ndarray = field(repr=False)
    y_first_order: np.ndarray | None = field(repr=False)
    y_second_order: np.ndarray | None = field(repr=False)
    final_value: float
    gain_unit: str
    method: str
    rise_time: float | None
    time_10: float | None
    time_90: float | None
    overshoot: float
    peak_time: float | None
    undershoot: float
    settling_time: float | None
    settling_time_fine: float | None
    delay: float | None
    rise_time_estimate: float | None
    rise_time_estimate_2nd: float | None
    damping: float | None
    figures: tuple[TimeFigure, ...]
    warnings: tuple[str, ...]

    def __repr__(self) -> str:
        def t(x):
            return "none" if x is None else format_value(x, "s")

        est = f" (est. {t(self.rise_time_estimate)})" if self.rise_time_estimate is not None else ""
        return (f"<StepResponse {self.method}: final {format_gain(self.final_value, self.gain_unit)}, "
                f"t_r {t(self.rise_time)}{est}, overshoot {100 * self.overshoot:.1f} %, "
                f"settling {t(self.settling_time)}, {self.t.size} samples>")

    @property
    def overshoot_estimate(self) -> float | None:
        """Fraction: the pair's overshoot exp(−πζ/√(1 − ζ²)), 0 for ζ ≥ 1; None without b2."""
        return _pair_overshoot(self.damping)


@dataclass(frozen=True)
class PulseResponse:
    """The response to a unit pulse of a chosen width at the input; immutable.

    Attributes
    ----------
    t : numpy.ndarray
        s, uniform from 0, with the pulse's end on the grid (read-only).
    y : numpy.ndarray
        The output per unit input pulse (gain unit).
    width : float
        s, the pulse's width T.
    final_value : float
        Gain unit, as for :class:`StepResponse`: the level the top would hold without sag.
    sag : float
        Fraction of the final value the top has fallen by at the end of the pulse.
    sag_estimate : float
        Fraction, ω·T with ω the low band's Σ 1/τ (the sum of its pole magnitudes; a pole–zero
        pair's zero, which slows the fall, is left out); 0 without a low band.
    edge : StepResponse
        The rising edge (the step response on the high band's time scale); the falling edge
        is its mirror image, less the sag.
    figures : tuple of TimeFigure
        The sag, exact and estimated.
    """

    t: np.ndarray = field(repr=False)
    y: np.ndarray = field(repr=False)
    width: float
    final_value: float
    sag: float
    sag_estimate: float
    edge: StepResponse = field(repr=False)
    figures: tuple[TimeFigure, ...]

    def __repr__(self) -> str:
        return (f"<PulseResponse T {format_value(self.width, 's')}: sag {100 * self.sag:.2f} % "
                f"(est. {100 * self.sag_estimate:.2f} %)>")


def pair_step(b1: float, b2: float, t) -> np.ndarray:
    """Unit step response of 1/(1 + b1·s + b2·s²) (b1 in s, b2 in s², t in s), in closed form.

    Underdamped: 1 − e^(−ζω_n t)·(cos ω_d t + ζ/√(1−ζ²)·sin ω_d t); critically damped:
    1 − e^(−ω_n t)·(1 + ω_n t); overdamped: 1 + (p2·e^(p1 t) − p1·e^(p2 t))/(p1 − p2).

    Parameters
    ----------
    b1 : float
        s.
    b2 : float
        s².
    t : array_like
        s.
    """
    t = np.asarray(t, dtype=float)
    wn = 1 / math.sqrt(b2)
    zeta = b1 * wn / 2
    if abs(zeta - 1) < 1e-6:
        return 1 - np.exp(-wn * t) * (1 + wn * t)
    if zeta < 1:
        wd = wn * math.sqrt(1 - zeta * zeta)
        return 1 - np.exp(-zeta * wn * t) * (np.cos(wd * t) + zeta / math.sqrt(1 - zeta * zeta) * np.sin(wd * t))
    root = math.sqrt(zeta * zeta - 1)
    p1, p2 = wn * (-zeta + root), wn * (-zeta - root)
    return 1 + (p2 * np.exp(p1 * t) - p1 * np.exp(p2 * t)) / (p1 - p2)


def _pair_overshoot(zeta):
    if zeta is None:
        return None
    return math.exp(-math.pi * zeta / math.sqrt(1 - zeta * zeta)) if zeta < 1 else 0.0


def _crossing(t, yn, level):
    """First time yn reaches ``level``, between samples by linear interpolation; None if never."""
    above = np.flatnonzero(yn >= level)
    if above.size == 0:
        return None
    i = int(above[0])
    if i == 0:
        return float(t[0])
    return float(t[i - 1] + (level - yn[i - 1]) / (yn[i] - yn[i - 1]) * (t[i] - t[i - 1]))


def _settling(t, yn, band):
    """When |yn − 1| last leaves ``band``, interpolated; None when it is still outside at the end."""
    err = np.abs(yn - 1)
    outside = np.flatnonzero(err > band)
    if outside.size == 0:
        return float(t[0])
    i = int(outside[-1])
    if i == t.size - 1:
        return None
    return float(t[i] + (err[i] - band) / (err[i] - err[i + 1]) * (t[i + 1] - t[i]))


def _shape(t, yn) -> dict:
    """The figures of a normalised waveform (final value 1)."""
    t10, t90 = _crossing(t, yn, RISE_FROM), _crossing(t, yn, RISE_TO)
    top = int(np.argmax(yn))
    over = max(0.0, float(yn[top]) - 1.0)
    return dict(time_10=t10, time_90=t90,
                rise_time=None if t10 is None or t90 is None else t90 - t10,
                overshoot=over, peak_time=float(t[top]) if over > 0 else None,
                undershoot=max(0.0, -float(yn.min())),
                settling_time=_settling(t, yn, SETTLE_BAND), settling_time_fine=_settling(t, yn, SETTLE_BAND_FINE),
                delay=_crossing(t, yn, DELAY_LEVEL))


def _pair_window(b1, b2):
    """s: long enough for the pair 1/(1 + b1·s + b2·s²) to settle within 0.1 %."""
    window = 10 * b1
    if b2 and b1 * b1 < 4 * b2:
        zeta, wn = b1 / (2 * math.sqrt(b2)), 1 / math.sqrt(b2)
        window = max(window, 1.2 * math.log(1 / SETTLE_BAND_FINE) / (zeta * wn))
    return window


def _pair(analysis):
    """(b1, b2) when both describe a stable pair, else (b1 or None, None)."""
    b1 = analysis.b1 if analysis.b1 and analysis.b1 > 0 else None
    b2 = analysis.b2 if b1 and analysis.b2 and analysis.b2 > 0 else None
    return b1, b2


def _default_window(analysis) -> float:
    """s: the step-response window, from b1 and b2 (10·b1, or longer for a light pair's ringing)."""
    b1, b2 = _pair(analysis)
    if b1:
        return _pair_window(b1, b2)
    return 10 / (2 * math.pi * analysis.midband_frequency)


def _final_value(analysis, system) -> float:
    """H(0) when the d.c. gain is within 3 dB of the mid-band gain (a d.c.-coupled stage, or
    one whose low band holds only pole–zero pairs); otherwise the mid-band gain, the level the
    edge reaches before the low band makes it sag."""
    value = dc_gain(system)[0]
    if abs(value) >= abs(analysis.midband_gain) / math.sqrt(2):
        return value
    return analysis.midband_gain


def _poles_hint(analysis) -> np.ndarray:
    """−1/τ of the time constants known: the exact high band's where computed, else its
    open-circuit ones, and the low band's short-circuit ones."""
    if analysis.high_time_constants is not None:
        high = np.asarray(analysis.high_time_constants, dtype=complex)
    else:
        high = np.asarray([el.time_constant for el in analysis.elements.values() if el.band == Band.HIGH], dtype=complex)
    low = np.asarray([el.time_constant for el in analysis.elements.values() if el.band == Band.LOW], dtype=complex)
    taus = np.concatenate([high, low])
    taus = taus[np.abs(taus) > 1e-12 * np.abs(taus).max(initial=0.0)]
    return -1 / taus


def _waveform(analysis, t, method):
    """(y on t, method used, poles or None)."""
    if method is not None and method not in METHODS:
        raise ValueError(f"method must be one of {', '.join(METHODS)}, not {method!r}")
    system = analysis._system
    if method != "integrated" and (method == "modal" or system.size <= MODAL_LIMIT):
        found = analysis._step_modes
        if found is not None:
            return modal_step(found, t), "modal", found[0]
    return integrated_step(system, t, _poles_hint(analysis)), "integrated", None


def _grid(t_stop, points):
    if not (t_stop > 0 and math.isfinite(t_stop)):
        raise ValueError(f"t_stop must be a positive time in s, not {t_stop!r}")
    if int(points) != points or points < 3:
        raise ValueError(f"points must be a whole number of 3 or more, not {points!r}")
    return np.linspace(0.0, float(t_stop), int(points))


def step_response(analysis, t_stop: float | None = None, points: int = 2000, *, method: str | None = None) -> StepResponse:
    """The exact step response of the analysed stage and its figures beside their estimates.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    t_stop : float, optional
        s, the window's end; by default 10·b1, or longer for a lightly damped pair's ringing.
    points : int
        Samples from 0 to ``t_stop``.
    method : {"modal", "integrated"}, optional
        Force one way; by default the poles and residues up to
        :data:`~bandsketch.engine.solve.waveform.MODAL_LIMIT` unknowns, the integration beyond.

    Returns
    -------
    StepResponse

    Raises
    ------
    CircuitError
        An unstable network, or one with no level to settle to.
    """
    t = _grid(_default_window(analysis) if t_stop is None else t_stop, points)
    system = analysis._system
    final = _final_value(analysis, system)
    y, used, poles = _waveform(analysis, t, method)
    shape = _shape(t, y / final)
    b1, b2 = _pair(analysis)
    y1 = final * (1 - np.exp(-t / b1)) if b1 else None
    y2 = final * pair_step(b1, b2, t) if b2 else None
    if y2 is not None:
        y2[0] = 0.0
    pair = None
    if b2:
        tp = np.linspace(0.0, _pair_window(b1, b2), PAIR_POINTS)
        pair = _shape(tp, pair_step(b1, b2, tp))
    zeta = b1 / (2 * math.sqrt(b2)) if b2 else None

    def first(factor):
        return factor * b1 if b1 else None

    def second(key):
        return pair[key] if pair else None

    f_h = analysis.f_high_exact
    figures = (
        TimeFigure("rise time (10–90 %)", "s", shape["rise_time"], first(LN9), second("rise_time"),
                   LN9 / (2 * math.pi * f_h) if f_h else None),
        TimeFigure("overshoot", "fraction", shape["overshoot"], 0.0 if b1 else None, _pair_overshoot(zeta)),
        TimeFigure("settling to 1 %", "s", shape["settling_time"], first(math.log(1 / SETTLE_BAND)),
                   second("settling_time")),
        TimeFigure("settling to 0.1 %", "s", shape["settling_time_fine"], first(math.log(1 / SETTLE_BAND_FINE)),
                   second("settling_time_fine")),
        TimeFigure("delay to 50 %", "s", shape["delay"], first(math.log(2)), second("delay")),
    )
    for arr in (t, y, y1, y2):
        if arr is not None:
            arr.flags.writeable = False
    notes = _warnings(analysis, shape, poles, zeta, final)
    if shape["settling_time"] is None:
        notes.append(_unsettled(analysis, t, y / final, final))
    return StepResponse(t=t, y=y, y_first_order=y1, y_second_order=y2, final_value=final,
                        gain_unit=analysis.gain_unit, method=used, **shape,
                        rise_time_estimate=first(LN9), rise_time_estimate_2nd=second("rise_time"), damping=zeta,
                        figures=figures, warnings=tuple(notes))


def pulse_response(analysis, width: float, t_stop: float | None = None, points: int = 2000, *,
                   method: str | None = None) -> PulseResponse:
    """The response to a unit pulse of ``width`` s: the sag of its top and its edges.

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    width : float
        s, the pulse's width T.
    t_stop : float, optional
        s, the window's end; by default 1.5·T, so the falling edge and its undershoot show.
    points : int
        About this many samples; the spacing is chosen so that T falls on the grid.
    method : {"modal", "integrated"}, optional
        As for :func:`step_response`.

    Returns
    -------
    PulseResponse
    """
    if not (width > 0 and math.isfinite(width)):
        raise ValueError(f"width must be a positive time in s, not {width!r}")
    t_stop = 1.5 * width if t_stop is None else t_stop
    grid = _grid(t_stop, points)
    per_width = max(1, round(width / (grid[1] - grid[0])))
    dt = width / per_width
    t = np.arange(int(math.floor(t_stop / dt + 1e-9)) + 1) * dt
    final = _final_value(analysis, analysis._system)
    s, _, _ = _waveform(analysis, t, method)
    y = s.copy()
    y[per_width:] -= s[:t.size - per_width]
    sag = 1 - s[min(per_width, t.size - 1)] / final
    omega = 2 * math.pi * (analysis.f_low_estimate_sum or 0.0)
    t.flags.writeable = False
    y.flags.writeable = False
    return PulseResponse(t=t, y=y, width=float(width), final_value=final, sag=float(sag),
                         sag_estimate=omega * width, edge=step_response(analysis, method=method),
                         figures=(TimeFigure("pulse sag", "fraction", float(sag), omega * width),))


def _warnings(analysis, shape, poles, zeta, final) -> list[str]:
    """Light damping, a wrong-way start and a slow tail, in words."""
    notes = []
    pair = _light_pair(analysis, poles, zeta)
    if pair is not None:
        f, z = pair
        where = f" at {format_value(f, 'Hz')}" if f else ""
        notes.append(f"The high band has a complex pole pair{where} damped only ζ = {z:.2f} (below {LIGHT_DAMPING:g}): "
                     f"expect about {100 * _pair_overshoot(z):.0f} % overshoot and ringing after an edge "
                     f"(the exact step overshoots {100 * shape['overshoot']:.0f} %).")
    if shape["undershoot"] > UNDERSHOOT_NOTED:
        rhp = _rhp_zero(analysis)
        cause = (f"a right-half-plane zero at {format_value(rhp, 'Hz')}" if rhp
                 else "a right-half-plane zero (a path that feeds the input forward around the gain)")
        notes.append(f"The step starts the wrong way: the output first swings {100 * shape['undershoot']:.1f} % of its "
                     f"final value opposite to it before rising ({cause}).")
    t90, settle = shape["time_90"], shape["settling_time"]
    if t90 and settle and shape["overshoot"] <= SETTLE_BAND and settle > SLOW_TAIL * t90:
        notes.append(f"A slow tail: the step reaches 90 % at {format_value(t90, 's')} but stays within 1 % only after "
                     f"{format_value(settle, 's')}, {settle / t90:.0f}× later. A pole–zero pair close together "
                     "(a doublet) settles far slower than the rise suggests.")
    return notes


def _unsettled(analysis, t, yn, final) -> str:
    """Why there is no settling time: the step is outside 1 % of its final value at the end."""
    window, level = format_value(float(t[-1]), "s"), 100 * float(yn[-1])
    target = format_gain(final, analysis.gain_unit)
    tail = yn[t >= 0.9 * t[-1]]
    if float(tail.max() - tail.min()) > SETTLE_BAND / 2:
        return (f"No settling time: at the end of the {window} shown the step is still moving ({level:.1f} % of its "
                f"final value, {target}); a longer window may show it settle.")
    why = ""
    peak = float(np.abs(analysis.sweep_response).max())
    if final == analysis.midband_gain and 0 < peak < abs(final):
        # The edge levels off where the exact gain tops out: below A_m when an element of one
        # band still acts in the other's (a coupling capacitor against a Miller capacitance).
        why = (f"; the exact gain itself tops out {20 * math.log10(abs(final) / peak):.2f} dB below |A_m| "
               "(the bands interact), and the edge levels off there")
    return (f"No settling time: the step levels off at {level:.1f} % of its final value ({target}), not within "
            f"1 % of it, in the {window} shown{why}.")


def _light_pair(analysis, poles, zeta):
    """(Hz or None, ζ) of the slowest lightly damped complex pair in the high band, or None."""
    if poles is not None:
        w_m = 2 * math.pi * analysis.midband_frequency
        pairs = [p for p in poles if p.imag > 0 and abs(p) > w_m]
        if not pairs:
            return None
        p = min(pairs, key=abs)
        z = -p.real / abs(p)
        return (abs(p) / (2 * math.pi), z) if z < LIGHT_DAMPING else None
    if zeta is not None and zeta < LIGHT_DAMPING:
        return None, zeta
    return None


def _rhp_zero(analysis):
    """Hz of the lowest right-half-plane zero, when the zeros are known cheaply."""
    if analysis._zeros is None:
        return None
    rhp = [abs(z) for z in analysis._zeros if z.real > 0]
    return min(rhp) / (2 * math.pi) if rhp else None
