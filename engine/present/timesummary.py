"""Step and pulse figures as JSON-ready data, as a readable table, and the waveform as CSV."""

from __future__ import annotations

import csv

from ..core.values import error_text, format_gain, format_value
from ..solve.analysisjson import json_number

ESTIMATE_KEYS = {"first order": "first_order", "second order": "second_order", "from f_H": "from_bandwidth"}


def _figure_dict(f) -> dict:
    out = {"name": f.name, "unit": f.unit, "exact": json_number(f.exact)}
    for label, estimate in f.estimates.items():
        key = ESTIMATE_KEYS[label]
        out[key] = json_number(estimate)
        out[f"{key}_error"] = json_number(f.error(estimate))
    return out


def time_domain_dict(step, pulse=None) -> dict:
    """The step (and pulse) figures of ``step``/``pulse`` as plain data; times in s, the
    overshoot, undershoot and sag as fractions of the final value; each estimate's error
    relative for a time, a difference for a fraction.

    Parameters
    ----------
    step : bandsketch.engine.solve.step.StepResponse
    pulse : bandsketch.engine.solve.step.PulseResponse, optional
    """
    out = {
        "method": step.method, "final_value": json_number(step.final_value), "gain_unit": step.gain_unit,
        "window_s": json_number(step.t[-1]), "points": int(step.t.size),
        "rise_time_s": json_number(step.rise_time), "overshoot": json_number(step.overshoot),
        "undershoot": json_number(step.undershoot), "settling_time_s": json_number(step.settling_time),
        "settling_time_fine_s": json_number(step.settling_time_fine), "delay_s": json_number(step.delay),
        "rise_time_estimate_s": json_number(step.rise_time_estimate),
        "rise_time_estimate_2nd_s": json_number(step.rise_time_estimate_2nd), "damping": json_number(step.damping),
        "figures": [_figure_dict(f) for f in step.figures], "warnings": list(step.warnings),
    }
    if pulse is not None:
        out["pulse"] = {"width_s": json_number(pulse.width), "sag": json_number(pulse.sag),
                        "sag_estimate": json_number(pulse.sag_estimate)}
    return out


def figure_value_text(x, unit) -> str:
    """A figure's value: a time with its prefix, a fraction in %; "—" when missing.

    Parameters
    ----------
    x : float or None
        A time in s, or a fraction of the final value.
    unit : str
        ``"s"`` or ``"fraction"``.
    """
    if x is None:
        return "—"
    return f"{100 * x:.2f} %" if unit == "fraction" else format_value(x, "s")


def figure_error_text(f, estimate) -> str:
    """An estimate's error: "+13.9 %" for a time, "−0.1 pt" for a fraction; empty when missing.

    Parameters
    ----------
    f : bandsketch.engine.solve.step.TimeFigure
        The figure, exact; its ``unit`` is ``"s"`` or ``"fraction"``.
    estimate : float or None
        In the figure's unit (s, or a fraction).
    """
    if f.unit != "fraction":
        return error_text(estimate, f.exact)
    err = f.error(estimate)
    return "" if err is None else f"{100 * err:+.1f} pt".replace("-", "−")


def format_time_table(step, pulse=None) -> str:
    """The time-domain figures as a table: each figure exact, then each estimate with its error.

    Parameters
    ----------
    step : bandsketch.engine.solve.step.StepResponse
    pulse : bandsketch.engine.solve.step.PulseResponse, optional
    """
    lines = [f"Step response ({step.method}; final value {format_gain(step.final_value, step.gain_unit)}, "
             f"window {format_value(float(step.t[-1]), 's')})"]
    figures = list(step.figures) + (list(pulse.figures) if pulse is not None else [])
    for f in figures:
        parts = [f"  {f.name:22s} {figure_value_text(f.exact, f.unit):>10s}"]
        for label, estimate in f.estimates.items():
            if estimate is not None:
                parts.append(f"{label} {figure_value_text(estimate, f.unit)} {figure_error_text(f, estimate)}".rstrip())
        lines.append("   ".join(parts))
    if pulse is not None:
        lines.append(f"  (pulse of {format_value(pulse.width, 's')}; sag estimate ω_L·T)")
    if step.warnings:
        lines += [f"  • {w}" for w in step.warnings]
    return "\n".join(lines) + "\n"


def write_step_csv(step, path) -> None:
    """Write the step waveform to ``path``: time (s), exact output, and the first- and
    second-order estimates (gain unit; empty where not known).

    Parameters
    ----------
    step : bandsketch.engine.solve.step.StepResponse
    path : str or os.PathLike
        Where to write the CSV.
    """
    unit = step.gain_unit.replace("/", "_per_")
    with open(path, "w", newline="", encoding="utf-8") as out:
        w = csv.writer(out)
        w.writerow(["time_s", f"exact_{unit}", f"first_order_{unit}", f"second_order_{unit}"])
        for i, t in enumerate(step.t):
            row = [t, step.y[i],
                   "" if step.y_first_order is None else step.y_first_order[i],
                   "" if step.y_second_order is None else step.y_second_order[i]]
            w.writerow([v if v == "" else f"{v:.9g}" for v in row])
