"""Adjoint sensitivities against central finite differences of the full analysis.

Source of truth: analyze() itself, run with one part value scaled by e^(±h); the central
difference (ln f(+h) − ln f(−h)) / 2h agrees with d ln f / d ln x to O(h²) (the central
difference's error order: common practice, no source).
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from bandsketch.engine import Circuit, analyze
from bandsketch.engine.design.designfile import load_design
from bandsketch.engine.design.netlist import design_to_circuit
from bandsketch.engine.advise.partvalues import with_value
from bandsketch.engine.advise.sensitivity import FIGURES, sensitivities

SAMPLES = sorted((Path(__file__).resolve().parents[2] / "sample_designs").glob("*.json"))
H = 1e-4
ATTR = {"high_exact": "f_high_exact", "high_estimate": "f_high_estimate", "low_exact": "f_low_exact",
        "low_estimate": "f_low_estimate", "gain": "midband_gain"}


def _central(c, bands, element, nominal, attr):
    el = c.elements[element]
    # A part value in the DC network moves the bias: the copy solves it again. A value the bias
    # derives (g_m, r_π ...) is varied with the operating point held, as its row says.
    rebias = element in {e.name for e in c.dc_elements()}
    up = getattr(analyze(c.with_elements({element: with_value(el, nominal * math.exp(H))}, rebias=rebias),
                         bands=bands), attr)
    down = getattr(analyze(c.with_elements({element: with_value(el, nominal * math.exp(-H))}, rebias=rebias),
                           bands=bands), attr)
    if up is None or down is None:
        return None
    return (math.log(abs(up)) - math.log(abs(down))) / (2 * H)


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.stem)
def test_every_sensitivity_matches_a_central_difference(path):
    doc = load_design(path)
    bands = dict(doc.band_pins)
    c = design_to_circuit(doc)
    s = sensitivities(c, analyze(c, bands=bands))
    for row in s.rows:
        for fig in FIGURES:
            want = _central(c, bands, row.value.element, row.value.nominal, ATTR[fig])
            got = getattr(row, fig)
            assert (got is None) == (want is None), (row.value.label, fig)
            if got is not None:
                assert got == pytest.approx(want, abs=2e-6), (row.value.label, fig)


def test_single_rc_closed_form():
    # Source: f = 1/(2πRC) for a source resistance R driving C, so d ln f / d ln R = d ln f / d ln C = −1,
    # and the gain (1 V/V) does not depend on either.
    c = Circuit("rc")
    c.vsource("V1", "in", "0")
    c.resistor("R", "in", "out", "1k")
    c.capacitor("C", "out", "0", "1n")
    c.output("out")
    rows = {r.value.label: r for r in sensitivities(c, analyze(c)).rows}
    for name in ("R", "C"):
        assert rows[name].high_exact == pytest.approx(-1, abs=1e-9)
        assert rows[name].high_estimate == pytest.approx(-1, abs=1e-12)
        assert rows[name].gain == pytest.approx(0, abs=1e-12)
        assert rows[name].low_exact is None and rows[name].low_estimate is None


def test_shares_are_the_capacitor_sensitivities_of_b1():
    # Source: method notes §7, ∂b1/∂C_j = Z_jj, so −d ln f_H,est / d ln C_j = τ_j / b1 = share_j.
    doc = load_design(next(p for p in SAMPLES if p.stem == "ce_hydrophone_preamp"))
    c = design_to_circuit(doc)
    a = analyze(c, bands=dict(doc.band_pins))
    rows = {r.value.element: r for r in sensitivities(c, a).rows}
    for name, r in a.capacitors.items():
        if r.band == "high":
            assert -rows[name].high_estimate == pytest.approx(r.share, rel=1e-12)


def test_ranked_and_grouped():
    doc = load_design(next(p for p in SAMPLES if p.stem == "ce_hydrophone_preamp"))
    c = design_to_circuit(doc)
    s = sensitivities(c, analyze(c, bands=dict(doc.band_pins)))
    ranked = s.ranked("high_exact")
    assert [abs(r.high_exact) for r in ranked] == sorted((abs(r.high_exact) for r in ranked), reverse=True)
    assert ranked[0].value.label == "Q1 C_μ"
    assert [r.value.key for r in s.by_part()["Q1"]] == ["rb", "rpi", "cpi", "cmu", "gm", "ro"]
    with pytest.raises(ValueError, match="f_H"):
        s.ranked("f_H")
