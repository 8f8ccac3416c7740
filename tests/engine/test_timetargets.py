"""Rise-time, overshoot and settling targets, their sensitivities and the value that meets them."""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from bandsketch.engine import BadValueError, analyze, load_design
from bandsketch.engine.advise.sensitivity import sensitivities
from bandsketch.engine.advise.timetargets import (TimeTargets, check_time_targets, parse_time_targets,
                                                  rise_time_sensitivities, value_that_meets_time_target)
from bandsketch.engine.design.netlist import design_to_circuit

SAMPLES = Path(__file__).resolve().parents[2] / "sample_designs"


def _analysis(name):
    doc = load_design(SAMPLES / f"{name}.json")
    circuit = design_to_circuit(doc)
    return doc, circuit, analyze(circuit, bands=dict(doc.band_pins))


def test_targets_parse_times_and_percentages():
    t = parse_time_targets({"rise_time_max": "20n", "overshoot_max": "5 %", "settling_time_max": ""})
    assert t == TimeTargets(rise_time_max=pytest.approx(20e-9), overshoot_max=pytest.approx(0.05))
    for bad in ({"rise_time_max": "soon"}, {"overshoot_max": "-5 %"}, {"rise": "1n"}):
        with pytest.raises(BadValueError):
            parse_time_targets(bad)


def test_checks_judge_the_exact_figures_with_the_estimate_beside():
    _, _, a = _analysis("follower_cable_driver")
    step = a.step_response()
    checks = check_time_targets(TimeTargets(rise_time_max=2 * step.rise_time, overshoot_max=0.05), step)
    rise, over = checks
    assert rise.passed and rise.margin == pytest.approx(0.5)
    assert not over.passed and f"{100 * step.overshoot:.1f} %" in over.text
    # The pair from b1 and b2 predicts the overshoot, so the estimate agrees it fails.
    assert over.estimate_passed is False and "agrees" in over.text


def test_rise_time_sensitivity_is_minus_the_upper_corner_estimates():
    # t_r,est = ln 9·b1 = ln 9/(2π f_H,est): d ln t_r = −d ln f_H,est, exactly (from memory).
    _, circuit, a = _analysis("ce_hydrophone_preamp")
    sens = sensitivities(circuit, a)
    rise = rise_time_sensitivities(sens)
    rows = [r for r in sens.rows if r.high_estimate is not None]
    assert rows and set(rise) == {r.value.label for r in rows}
    for r in rows:
        assert rise[r.value.label] == pytest.approx(-r.high_estimate)


def test_value_that_meets_a_rise_time_target():
    doc, _, a = _analysis("two_stage_miller")
    step = a.step_response()
    goal = 0.8 * step.rise_time
    value = value_that_meets_time_target(doc, "CC", "value", "rise_time_max", goal)
    assert value is not None
    from bandsketch.engine.advise.targets import field_text, with_field

    trial = with_field(doc, "CC", "value", field_text(value))
    met = analyze(design_to_circuit(trial), bands=dict(trial.band_pins)).step_response().rise_time
    assert met == pytest.approx(goal, rel=1e-3)
    assert math.isfinite(value) and value > 0


def test_rise_time_sensitivity_matches_a_central_difference():
    # Central difference of the full analysis, error O(h²) (common practice, no source).
    from bandsketch.engine.advise.targets import field_text, with_field

    doc, circuit, a = _analysis("ce_hydrophone_preamp")
    rise = rise_time_sensitivities(sensitivities(circuit, a))
    row = max((r for r in sensitivities(circuit, a).rows if r.high_estimate is not None and r.value.key == "value"),
              key=lambda r: abs(r.high_estimate))
    h = 1e-4
    logs = []
    for sign in (1, -1):
        trial = with_field(doc, row.value.part, "value", field_text(row.value.nominal * math.exp(sign * h)))
        logs.append(math.log(analyze(design_to_circuit(trial), bands=dict(trial.band_pins))
                             .step_response().rise_time_estimate))
    assert rise[row.value.label] == pytest.approx((logs[0] - logs[1]) / (2 * h), rel=1e-4)
