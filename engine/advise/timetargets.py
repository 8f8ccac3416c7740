"""Time-domain targets: a longest rise time, a largest overshoot, a longest settling time.

:func:`check_time_targets` judges a step response's exact figures against them and says
beside each what the estimate would have said (2.2·b1 for the rise and the settling, the pair
from b1 and b2 for the overshoot). :func:`rise_time_sensitivities` turns the adjoint
sensitivities of the estimated upper corner into those of the estimated rise time
(t_r = ln 9·b1 = ln 9/(2π·f_H,est), so d ln t_r/d ln x = −d ln f_H,est/d ln x, exactly).
:func:`value_that_meets_time_target` finds, for one part field, the single value whose exact
step meets a failing target, by a root find on the full analysis.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from scipy.optimize import brentq

from ..core.errors import BadValueError, CircuitError
from ..core.values import format_value, parse_value
from ..design.netlist import design_to_circuit
from ..solve.analysis import analyze
from .targets import SEARCH_DECADES, TargetCheck, field_text, with_field

TIME_TARGETS = {
    "rise_time_max": ("t_r", "rise_time", "s"),
    "overshoot_max": ("overshoot", "overshoot", "fraction"),
    "settling_time_max": ("t_s(1 %)", "settling_time", "s"),
}
"""Target key -> (symbol, StepResponse attribute, unit). Every one is a maximum."""
_ROOT_XTOL = 1e-5


@dataclass(frozen=True)
class TimeTargets:
    """The time-domain targets in SI units; None where not set.

    Attributes
    ----------
    rise_time_max : float or None
        s, the 10–90 % rise time must be at most this.
    overshoot_max : float or None
        Fraction of the final value the overshoot must stay below (``"5 %"`` is 0.05).
    settling_time_max : float or None
        s, the response must stay within 1 % after at most this.
    """

    rise_time_max: float | None = None
    overshoot_max: float | None = None
    settling_time_max: float | None = None


def parse_time_targets(texts) -> TimeTargets:
    """Read ``{"rise_time_max": "20n", "overshoot_max": "5 %", ...}``; a bad text is a
    :class:`BadValueError` naming the target.

    Parameters
    ----------
    texts : Mapping[str, str]
        Target key -> text: times in s (``"20n"``), overshoot as a per cent (``"5 %"``).
    """
    values = {}
    for key, text in dict(texts).items():
        if key not in TIME_TARGETS:
            raise BadValueError(f"Unknown time target {key!r}: use {', '.join(TIME_TARGETS)}.")
        if text is None or not str(text).strip():
            continue
        raw = str(text).strip()
        try:
            value = float(raw[:-1]) / 100 if raw.endswith("%") else parse_value(raw)
        except ValueError:
            raise BadValueError(f"The {key} target {raw!r} is not a value: write 20n (s) or 5 %.") from None
        if not (value > 0 and math.isfinite(value)):
            raise BadValueError(f"The {key} target {raw!r} must be above zero.")
        values[key] = value
    return TimeTargets(**values)


def _text(value, unit):
    return f"{100 * value:.1f} %" if unit == "fraction" else format_value(value, "s")


def _estimate(step, attr):
    if attr == "rise_time":
        return step.rise_time_estimate
    if attr == "overshoot":
        return step.overshoot_estimate
    settle = next(f for f in step.figures if f.name == "settling to 1 %")
    return settle.second_order if settle.second_order is not None else settle.first_order


def check_time_targets(targets: TimeTargets, step) -> tuple[TargetCheck, ...]:
    """Each set target judged on the exact figures of ``step`` (a StepResponse).

    Parameters
    ----------
    targets : TimeTargets
        Times in s, the overshoot a fraction of the final value.
    step : bandsketch.engine.solve.step.StepResponse
    """
    out = []
    for key, (sym, attr, unit) in TIME_TARGETS.items():
        target = getattr(targets, key)
        if target is None:
            continue
        exact = getattr(step, attr)
        target_text = f"{sym} ≤ {_text(target, unit)}"
        if exact is None:
            passed, margin = False, None
            head = f"{sym} not reached in the window: {target_text} not shown to be met"
        else:
            passed = exact <= target
            margin = (target - exact) / target
            head = (f"{sym} = {_text(exact, unit)} ≤ {_text(target, unit)}, {abs(margin) * 100:.0f} % to spare"
                    if passed else f"{sym} = {_text(exact, unit)}, not ≤ {_text(target, unit)}: "
                                   f"{abs(margin) * 100:.0f} % over")
        est = _estimate(step, attr)
        est_ok = None if est is None else est <= target
        tail = " (no estimate)" if est is None else (
            f" (the estimate, {_text(est, unit)}, " + ("agrees)" if est_ok == passed else
                                                     "would have said " + ("pass)" if est_ok else "fail)")))
        out.append(TargetCheck(key, target_text, exact, est, passed, margin, est_ok, head + tail))
    return tuple(out)


def rise_time_sensitivities(sens) -> dict[str, float]:
    """Part value label -> d ln t_r,est / d ln x (per cent per per cent) from the adjoint
    sensitivities (:func:`bandsketch.engine.advise.sensitivity.sensitivities`).

    Parameters
    ----------
    sens : bandsketch.engine.advise.sensitivity.Sensitivities
        Normalised sensitivities (d ln f / d ln x, dimensionless).
    """
    return {row.value.label: -row.high_estimate for row in sens.rows if row.high_estimate is not None}


def value_that_meets_time_target(doc, part: str, key: str, target_key: str, target: float) -> float | None:
    """The value of ``part``'s field ``key`` (SI) whose exact step figure equals ``target``
    (``target_key`` one of :data:`TIME_TARGETS`), searched from 1/100 to 100 times the present
    value; None when no value in that range reaches it.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    part : str
        The part's name.
    key : str
        The field's key.
    target_key : str
        One of :data:`TIME_TARGETS`.
    target : float
        The figure wanted: a time in s, or a fraction of the final value.

    Raises
    ------
    CircuitError
        The design as it is cannot be analysed.
    """
    attr = TIME_TARGETS[target_key][1]
    nominal = parse_value(doc.parts[part].params[key])

    def g(log_x):
        trial = with_field(doc, part, key, field_text(math.copysign(math.exp(log_x), nominal)))
        try:
            value = getattr(analyze(design_to_circuit(trial), bands=dict(trial.band_pins)).step_response(), attr)
        except CircuitError:
            return math.nan
        return math.inf if value is None else math.log(max(value, 1e-300) / target)

    center = math.log(abs(nominal))
    span = SEARCH_DECADES * math.log(10)
    grid = [center + span * k / 8 for k in range(-8, 9)]
    values = [g(v) for v in grid]
    for (a, ga), (b, gb) in zip(zip(grid, values), zip(grid[1:], values[1:])):
        if math.isfinite(ga) and math.isfinite(gb) and ga * gb <= 0:
            return math.copysign(math.exp(brentq(g, a, b, xtol=_ROOT_XTOL)), nominal)
    return None
