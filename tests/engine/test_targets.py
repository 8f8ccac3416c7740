"""Targets: reading them, judging an analysis, and the value that meets a failing one.

The check for every suggested value is the one a designer makes: write it into the field,
run the full analysis, and see the target met.
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from bandsketch.engine import analyze
from bandsketch.engine.design.designfile import load_design
from bandsketch.engine.core.errors import BadValueError
from bandsketch.engine.advise.eseries import E24
from bandsketch.engine.design.netlist import design_to_circuit
from bandsketch.engine.advise.targets import (Targets, check_targets, knobs, meets, parse_targets, values_that_meet,
                            with_field)

SAMPLES = Path(__file__).resolve().parents[2] / "sample_designs"


def _doc(name, **targets):
    doc = load_design(SAMPLES / f"{name}.json")
    for key in list(doc.targets):  # the sample's own targets; each test sets its own
        doc.set_target(key, None)
    for key, text in targets.items():
        doc.set_target(key, text)
    return doc


def _analysis(doc):
    return analyze(design_to_circuit(doc), bands=dict(doc.band_pins))


def test_parse_corners_and_gain():
    t = parse_targets({"f_high_min": "1M", "f_low_max": "20 Hz", "gain": "-100", "gain_tolerance": "10 %"})
    assert (t.f_high_min, t.f_low_max, t.gain) == (1e6, 20.0, 100.0)
    assert (t.gain_min, t.gain_max) == pytest.approx((90.0, 110.0))
    # 40 dB is 100 V/V; a 1 dB window is ×10^(±1/20) (the decibel's definition).
    t = parse_targets({"gain": "40 dB", "gain_tolerance": "1 dB"})
    assert t.gain == pytest.approx(100.0)
    assert t.gain_max == pytest.approx(100 * 10 ** 0.05)
    t = parse_targets({"gain": "100"})
    assert "default" in t.gain_window_text
    assert parse_targets({}).is_empty()


@pytest.mark.parametrize("targets, words", [
    ({"f_high_min": "fast"}, "minimum f_H"),
    ({"gain": "100", "gain_tolerance": "0.1"}, "percentage"),
    ({"gain": "100", "gain_tolerance": "150 %"}, "100 %"),
    ({"gain_tolerance": "10 %"}, "set the gain target"),
    ({"gain": "0"}, "zero"),
])
def test_bad_targets_are_named(targets, words):
    with pytest.raises(BadValueError, match=words):
        parse_targets(targets)


def test_meets_treats_a_missing_corner_as_met():
    t = Targets(f_high_min=1e6, f_low_max=10.0)
    assert meets(t, None, None, 1.0) == {"f_high_min": True, "f_low_max": True}
    assert meets(t, 9e5, 11.0, 1.0) == {"f_high_min": False, "f_low_max": False}


def test_check_on_the_exact_figures_with_the_estimate_beside():
    doc = _doc("ce_hydrophone_preamp")
    a = _analysis(doc)
    # A target between the estimate and the exact corner: the two verdicts disagree.
    between = math.sqrt(a.f_low_estimate * a.f_low_exact)
    (check,) = check_targets(Targets(f_low_max=between), a)
    assert check.passed == (a.f_low_exact <= between)
    assert check.estimate_passed != check.passed
    assert "would have said" in check.text
    (check,) = check_targets(Targets(f_high_min=a.f_high_exact * 0.8), a)
    assert check.passed and check.margin == pytest.approx(0.25)
    assert "25 % to spare" in check.text


@pytest.mark.parametrize("name, key, text", [
    ("ce_hydrophone_preamp", "f_high_min", "1M"),
    ("ce_hydrophone_preamp", "f_low_max", "40"),
    ("ce_hydrophone_preamp", "gain", "37 dB"),
    ("two_stage_miller", "f_high_min", "300k"),
])
def test_every_suggested_value_meets_the_target_when_applied(name, key, text):
    doc = _doc(name, **{key: text})
    targets = parse_targets(doc.targets)
    assert not meets(targets, *(lambda a: (a.f_high_exact, a.f_low_exact, a.midband_gain))(_analysis(doc)))[key]
    remedies = values_that_meet(doc, key, targets, "E24")
    assert len(remedies) == len(knobs(doc))
    usable = [r for r in remedies if r.apply_text]
    assert usable, "some part can meet it"
    for r in usable:
        a = _analysis(with_field(doc, r.knob.part, r.knob.key, r.apply_text))
        assert meets(targets, a.f_high_exact, a.f_low_exact, a.midband_gain)[key], r.text
        if r.standard_value is not None:
            # IEC 60063 E24 mantissas (see test_eseries).
            m = r.standard_value / 10 ** math.floor(math.log10(r.standard_value))
            assert any(abs(m - v) < 1e-9 for v in E24)


def test_the_exact_root_is_where_the_figure_meets_the_goal():
    doc = _doc("ce_hydrophone_preamp", f_high_min="1M")
    targets = parse_targets(doc.targets)
    r = next(r for r in values_that_meet(doc, "f_high_min", targets) if r.knob.label == "RC")
    a = _analysis(with_field(doc, "RC", "value", f"{r.exact_value:.12g}"))
    assert a.f_high_exact == pytest.approx(1e6, rel=1e-4)
    b = _analysis(with_field(doc, "RC", "value", f"{r.estimate_value:.12g}"))
    assert b.f_high_estimate == pytest.approx(1e6, rel=1e-4)


def test_no_single_value_is_said_only_where_true():
    doc = _doc("ce_hydrophone_preamp", f_high_min="1M")
    targets = parse_targets(doc.targets)
    r = next(r for r in values_that_meet(doc, "f_high_min", targets) if r.knob.label == "CE")
    assert r.exact_value is None and "no single value of CE" in r.text
    for factor in (1e-2, 1e-1, 10, 100):
        a = _analysis(with_field(doc, "CE", "value", f"{47e-6 * factor:g}"))
        assert not meets(targets, a.f_high_exact, a.f_low_exact, a.midband_gain)["f_high_min"]
