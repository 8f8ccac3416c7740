"""What the time-domain view draws: the step and pulse responses, scaled and labelled.

Computed once from a :class:`~bandsketch.engine.solve.step.StepResponse` and a
:class:`~bandsketch.engine.solve.step.PulseResponse`, so the plot only draws. Times are shown
in one engineering unit per plot (``ns``, ``µs``, ``ms``) chosen here, and the output as a
fraction of the final value (the edge rises to 1 whatever the stage's gain and sign).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..core.values import format_gain, format_value

_PREFIXES = ((1e-12, "ps"), (1e-9, "ns"), (1e-6, "µs"), (1e-3, "ms"), (1.0, "s"))
PULSE_SAG_SHOWN = 0.1
"""The default pulse is as wide as makes the low band's estimated sag 10 %."""
DC_PULSE_WIDTHS = 5.0
"""A stage with no low band gets a pulse this many step windows wide."""


def _time_unit(t_max: float) -> tuple[float, str]:
    """(scale in s, label): the unit a time axis reaching ``t_max`` s reads best in."""
    scale, label = _PREFIXES[0]
    for s, name in _PREFIXES:
        if t_max >= s:
            scale, label = s, name
    return scale, label


@dataclass(frozen=True)
class TimeMarker:
    """A point marked on a time plot.

    Attributes
    ----------
    time : float
        In the plot's time unit.
    level : float
        Fraction of the final value.
    text : str
        The label beside it, e.g. ``"90 % at 25 ns"``.
    """

    time: float
    level: float
    text: str


@dataclass(frozen=True)
class StepData:
    """Everything the step plot draws.

    Attributes
    ----------
    time : numpy.ndarray
        Sample times in ``time_label`` units.
    time_label : str
        ``"ns"``, ``"µs"``, ...
    exact, first_order, second_order : numpy.ndarray or None
        Output ÷ final value: the exact response and the two estimates (None when not known).
    markers : tuple of TimeMarker
        10 % and 90 % of the exact rise, and the overshoot's peak when there is one.
    summary : str
        One line of the figures, e.g. ``"t_r 20.1 ns (est. 26.7 ns, 2nd 20.7 ns) · overshoot 0 %"``.
    final_text : str
        The final value in the gain unit (Ω for a current input): ``"−9.1 V/V"``.
    warnings : tuple of str
        The step's plain-language notes.
    scale : float
        s per ``time_label`` unit (1e-9 for ``"ns"``).
    """

    time: np.ndarray
    time_label: str
    exact: np.ndarray
    first_order: np.ndarray | None
    second_order: np.ndarray | None
    markers: tuple[TimeMarker, ...]
    summary: str
    final_text: str
    warnings: tuple[str, ...]
    scale: float = 1.0

    def readout(self, time: float) -> str:
        """The exact response at the sample nearest ``time`` (plot units); empty outside."""
        t = self.time
        if not (t[0] <= time <= t[-1]):
            return ""
        i = int(np.argmin(np.abs(t - time)))
        return f"t = {t[i]:.4g} {self.time_label} · {100 * self.exact[i]:.2f} % of final"


@dataclass(frozen=True)
class PulseData:
    """Everything the pulse plot draws.

    Attributes
    ----------
    time : numpy.ndarray
        Sample times in ``time_label`` units.
    time_label : str
    exact : numpy.ndarray
        Output ÷ final value.
    sag_line : tuple of (float, float)
        (level at the start, level at the end of the top) of the estimated sag, 1 − ω_L·t,
        drawn dashed across the top.
    width : float
        The pulse's width in ``time_label`` units.
    summary : str
        E.g. ``"pulse 1 ms · sag 2.1 % (est. ω_L·T 2.2 %)"``.
    """

    time: np.ndarray
    time_label: str
    exact: np.ndarray
    sag_line: tuple[float, float]
    width: float
    summary: str


def _s(x) -> str:
    return "—" if x is None else format_value(x, "s")


def _pct(x) -> str:
    return "—" if x is None else f"{100 * x:.1f}\u00a0%".replace(".0\u00a0%", "\u00a0%")


def step_data(step) -> StepData:
    """The step plot's data from a :class:`~bandsketch.engine.solve.step.StepResponse`.

    Parameters
    ----------
    step : bandsketch.engine.solve.step.StepResponse
        Times in s, the output in the gain unit.
    """
    scale, label = _time_unit(float(step.t[-1]))
    final = step.final_value
    markers = []
    for when, level, name in ((step.time_10, 0.1, "10 %"), (step.time_90, 0.9, "90 %")):
        if when is not None:
            markers.append(TimeMarker(when / scale, level, f"{name} at {_s(when)}"))
    if step.peak_time is not None:
        markers.append(TimeMarker(step.peak_time / scale, 1 + step.overshoot, f"overshoot {_pct(step.overshoot)}"))
    second = f", 2nd order {_s(step.rise_time_estimate_2nd)}" if step.rise_time_estimate_2nd is not None else ""
    summary = (f"t_r {_s(step.rise_time)} (2.2·b1 {_s(step.rise_time_estimate)}{second}) · overshoot "
               f"{_pct(step.overshoot)} · settles to 1\u00a0% in {_s(step.settling_time)}, to 0.1\u00a0% in "
               f"{_s(step.settling_time_fine)}")
    return StepData(time=step.t / scale, time_label=label, exact=step.y / final,
                    first_order=None if step.y_first_order is None else step.y_first_order / final,
                    second_order=None if step.y_second_order is None else step.y_second_order / final,
                    markers=tuple(markers), summary=summary,
                    final_text=format_gain(final, step.gain_unit), warnings=step.warnings,
                    scale=scale)


@dataclass(frozen=True)
class TimeTargetLine:
    """One time target drawn on the step plot.

    Attributes
    ----------
    vertical : bool
        A time (True: ``position`` in the plot's time unit) or a level (False: a fraction of
        the final value).
    position : float
        Where the line is drawn.
    text : str
        Its label, e.g. ``"90 % by 40 ns (t_r ≤ 30 ns)"``.
    """

    vertical: bool
    position: float
    text: str


def time_target_lines(targets, step: StepData) -> tuple[TimeTargetLine, ...]:
    """The design's time targets as lines on the step plot: where the 90 % point must be
    reached (the 10 % point plus the longest rise), the highest peak allowed, and the time
    by which the step must have settled.

    Parameters
    ----------
    targets : bandsketch.engine.advise.targets.Targets
        Parsed targets (times in s, the overshoot a fraction).
    step : StepData
        The step plot's data, for its time unit and its 10 % point.
    """
    out = []
    start = next((m.time for m in step.markers if m.level == 0.1), None)
    if targets.rise_time_max is not None and start is not None:
        end = start + targets.rise_time_max / step.scale
        out.append(TimeTargetLine(True, end, f"90 % by {_s(end * step.scale)} (t_r ≤ {_s(targets.rise_time_max)})"))
    if targets.overshoot_max is not None:
        out.append(TimeTargetLine(False, 1 + targets.overshoot_max, f"overshoot ≤ {_pct(targets.overshoot_max)}"))
    if targets.settling_time_max is not None:
        out.append(TimeTargetLine(True, targets.settling_time_max / step.scale,
                                  f"settled to 1\u00a0% by {_s(targets.settling_time_max)}"))
    return tuple(out)


def _default_pulse_width(analysis, step) -> float:
    """s: wide enough for the low band's estimated sag to be 10 % (ω_L·T = 0.1); with no low
    band, :data:`DC_PULSE_WIDTHS` step windows."""
    omega = 2 * math.pi * (analysis.f_low_estimate_sum or 0.0)
    if omega > 0:
        return PULSE_SAG_SHOWN / omega
    return DC_PULSE_WIDTHS * float(step.t[-1])


def _pulse_data(pulse) -> PulseData:
    """The pulse plot's data from a :class:`~bandsketch.engine.solve.step.PulseResponse`."""
    scale, label = _time_unit(float(pulse.t[-1]))
    summary = (f"pulse {_s(pulse.width)} · sag {_pct(pulse.sag)} "
               f"(est. ω_L·T {_pct(pulse.sag_estimate)})")
    return PulseData(time=pulse.t / scale, time_label=label, exact=pulse.y / pulse.final_value,
                     sag_line=(1.0, 1.0 - pulse.sag_estimate), width=pulse.width / scale, summary=summary)


def time_responses(analysis, pulse_width: float | None = None):
    """(StepResponse, PulseResponse) of an analysis: the step on the high band's time scale,
    the pulse ``pulse_width`` s wide (by default as wide as makes the estimated sag
    :data:`PULSE_SAG_SHOWN`).

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    pulse_width : float, optional
        s, the input pulse's width; None for the default.

    Raises
    ------
    CircuitError
        The stage has no step response (it is unstable).
    """
    step = analysis.step_response()
    return step, analysis.pulse_response(pulse_width or _default_pulse_width(analysis, step))


def time_views(analysis, pulse_width: float | None = None) -> tuple[StepData, PulseData]:
    """Both time plots' data for an analysis (see :func:`time_responses`).

    Parameters
    ----------
    analysis : bandsketch.engine.solve.analysis.Analysis
    pulse_width : float, optional
        s, the input pulse's width; None for the default.
    """
    step, pulse = time_responses(analysis, pulse_width)
    return step_data(step), _pulse_data(pulse)
