"""Time-domain targets: a longest rise time, a largest overshoot, a longest settling time.

They are targets of the design like its corners and gain (:class:`~.targets.Targets` holds
them, :func:`~.targets.check_targets` judges them, the advisor searches for them).
:func:`parse_time_target` reads one text; :func:`check_time_targets` judges a step response's
exact figures and says beside each what the estimate would have said (2.2·b1 for the rise and
the settling, the pair from b1 and b2 for the overshoot); :func:`time_figure` is the figure a
target reads, exact or estimated; :func:`rise_time_sensitivities` turns the adjoint
sensitivities of the estimated upper corner into those of the estimated rise time
(t_r = ln 9·b1 = ln 9/(2π·f_H,est), so d ln t_r/d ln x = −d ln f_H,est/d ln x, exactly).
"""

from __future__ import annotations

import math

from ..core.errors import BadValueError
from ..core.values import format_value, parse_value
from .targetcheck import TargetCheck

TIME_TARGETS = {
    "rise_time_max": ("t_r", "rise_time", "s"),
    "overshoot_max": ("overshoot", "overshoot", "fraction"),
    "settling_time_max": ("t_s(1 %)", "settling_time", "s"),
}
"""Target key -> (symbol, StepResponse attribute, unit). Every one is a maximum."""


def parse_time_target(key: str, text: str) -> float | None:
    """Read one time target's text; None when it is blank.

    Parameters
    ----------
    key : str
        One of :data:`TIME_TARGETS`.
    text : str
        A time in s (``"20n"``, ``"1.5 us"``), or for the overshoot a per cent (``"5 %"``)
        or a fraction (``"0.05"``).

    Returns
    -------
    float or None
        s, or the overshoot as a fraction of the final value.

    Raises
    ------
    BadValueError
        The text is not a value above zero; the message names the target and what to write.
    """
    raw = (text or "").strip()
    if not raw:
        return None
    what = {"rise_time_max": "longest rise time", "overshoot_max": "largest overshoot",
            "settling_time_max": "longest settling time"}[key]
    hint = "a per cent (5 %)" if key == "overshoot_max" else "a time (20n, 1.5 us)"
    try:
        value = float(raw[:-1]) / 100 if raw.endswith("%") else parse_value(raw, field=f"target {what}")
    except (ValueError, BadValueError):
        raise BadValueError(f"Target {what}: '{raw}' is not a value: write {hint}.",
                            part=None, field=key, text=raw) from None
    if not (value > 0 and math.isfinite(value)):
        raise BadValueError(f"Target {what}: '{raw}' must be above zero: write {hint}.",
                            part=None, field=key, text=raw)
    return value


def _text(value, unit):
    return f"{100 * value:.1f} %" if unit == "fraction" else format_value(value, "s")


def time_figure(step, key: str, estimate: bool = False) -> float | None:
    """The figure a time target reads off a step response, exact or estimated.

    Parameters
    ----------
    step : bandsketch.engine.solve.step.StepResponse
        Times in s.
    key : str
        One of :data:`TIME_TARGETS`.
    estimate : bool
        The estimate's figure (2.2·b1 for the rise and the settling, the pair from b1 and b2
        for the overshoot) instead of the exact one.

    Returns
    -------
    float or None
        s, or a fraction of the final value for the overshoot; None where the response does
        not show it (a rise not complete in the window, no estimate).
    """
    attr = TIME_TARGETS[key][1]
    if not estimate:
        return getattr(step, attr)
    if attr == "rise_time":
        return step.rise_time_estimate
    if attr == "overshoot":
        return step.overshoot_estimate
    settle = next(f for f in step.figures if f.name == "settling to 1 %")
    return settle.second_order if settle.second_order is not None else settle.first_order


def check_time_targets(targets, step) -> tuple[TargetCheck, ...]:
    """Each time target that is set, judged on the exact figures of ``step``.

    Parameters
    ----------
    targets : bandsketch.engine.advise.targets.Targets
        Its ``rise_time_max`` and ``settling_time_max`` in s, ``overshoot_max`` a fraction of
        the final value; those that are None are not judged.
    step : bandsketch.engine.solve.step.StepResponse
        The exact step response of the design.

    Returns
    -------
    tuple of TargetCheck
        In the order rise, overshoot, settling. The margin is ``target / exact − 1`` (as
        for a maximum f_L); None for a response with no overshoot at all.
    """
    out = []
    for key, (sym, _attr, unit) in TIME_TARGETS.items():
        target = getattr(targets, key)
        if target is None:
            continue
        exact = time_figure(step, key)
        target_text = f"{sym} ≤ {_text(target, unit)}"
        if exact is None:
            passed, margin = False, -1.0
            head = f"{sym} not reached in the window: {target_text} not shown to be met"
        elif exact <= 0:
            passed, margin = True, None
            head = f"no {sym}: {target_text} met"
        else:
            passed = exact <= target
            margin = target / exact - 1
            # Said as a share of the limit, which reads plainly either side of it.
            head = (f"{sym} = {_text(exact, unit)} ≤ {_text(target, unit)}, {(1 - exact / target) * 100:.0f} % "
                    "under the limit" if passed else f"{sym} = {_text(exact, unit)}, not ≤ {_text(target, unit)}: "
                                                   f"{(exact / target - 1) * 100:.0f} % over")
        est = time_figure(step, key, estimate=True)
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
