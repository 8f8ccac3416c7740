"""The bias follows every variant: the spread, the search and the advisor solve it again.

A bias resistor's tolerance or a candidate value moves the operating point, and with it
g_m, r_π and the capacitances that depend on it. These tests hold the batched bias solve
to the engine's one-design solver (itself checked against closed-form bias in test_bias.py),
and the "no −3 dB band" judgement to the closed form of a capacitive divider.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from bandsketch.engine import Circuit, analyze
from bandsketch.engine.advise.biasbatch import BiasBatch
from bandsketch.engine.core.errors import BadValueError
from bandsketch.engine.advise.effect import effect_of
from bandsketch.engine.advise.partvalues import part_values, value_of, with_value
from bandsketch.engine.advise.suggest import suggest, verdict_line
from bandsketch.engine.advise.targets import check_targets, parse_targets
from bandsketch.engine.advise.tolerance import default_tolerances, monte_carlo
from bandsketch.engine.design.designfile import load_design
from bandsketch.engine.design.netlist import design_to_circuit
from bandsketch.engine.solve.dcop import operating_point

SAMPLES = Path(__file__).resolve().parents[2] / "sample_designs"


def _biased(name):
    doc = load_design(SAMPLES / f"{name}.json")
    c = design_to_circuit(doc)
    return doc, c, analyze(c, bands=dict(doc.band_pins))


def _resolved(c, scaled: dict):
    """The circuit with some values scaled and its bias solved again, one design at a time."""
    other = c.with_elements({n: with_value(c.elements[n], value_of(c.elements[n]) * f) for n, f in scaled.items()},
                            rebias=True)
    operating_point(other)
    return other


@pytest.mark.parametrize("name", ["ce_hydrophone_preamp", "two_stage_miller", "cs_partly_bypassed"])
def test_batched_bias_equals_one_solve_per_variant(name):
    # Source of truth: dcop.operating_point on each variant (Newton with homotopies, held to
    # closed-form bias in test_bias.py); the batch must give the same small-signal values.
    _, c, _ = _biased(name)
    in_dc = {el.name for el in c.dc_elements()}
    dc = [p.element for p in part_values(c) if p.element in in_dc]
    batch = BiasBatch(c, dc)
    names = dc + list(batch.derived)
    rng = np.random.default_rng(7)
    rows = np.hstack([1 + 0.2 * rng.uniform(-1, 1, (12, len(dc))), np.ones((12, len(batch.derived)))])
    factors, ok = batch.apply(rows, {n: k for k, n in enumerate(names)})
    for r in range(len(rows)):
        try:
            other = _resolved(c, dict(zip(dc, rows[r, :len(dc)])))
        except BadValueError:
            # A variant so starved of current that f_T leaves no room for C_π: refused by name
            # in one design, a failed row in the batch.
            assert not ok[r]
            continue
        good = all(d.region in ("forward active", "saturation") for d in other.operating_point.devices.values())
        assert ok[r] == good
        if not good:
            continue
        for j, d in enumerate(batch.derived):
            want = value_of(other.elements[d])
            got = factors[r, len(dc) + j] * value_of(c.elements[d])
            # Both solvers stop once every current sum is met to 1e-9 of its largest current
            # (dcop.REL_TOL); g_m = I_C/V_T then agrees to about 1e-8.
            assert got == pytest.approx(want, rel=1e-7), (r, d)


def test_the_spread_solves_each_samples_bias():
    # Only RE spreads (±20 %); each sample's gain must equal a full analysis of that sample with
    # its bias solved again (the engine's one-design path), not the nominal g_m's gain.
    _, c, a = _biased("ce_hydrophone_preamp")
    tols = [t if t.value.element == "RE" else type(t)(t.value, 0.0, t.source) for t in default_tolerances(c)]
    tols = [type(t)(t.value, 0.2, t.source) if t.value.element == "RE" else t for t in tols]
    spread = monte_carlo(c, a, tols, samples=8, seed=3)
    u = np.random.default_rng(3).uniform(-1.0, 1.0, size=(8, len(tols)))
    k = [t.value.element for t in tols].index("RE")
    for s in range(8):
        want = analyze(_resolved(c, {"RE": 1 + 0.2 * u[s, k]})).midband_gain
        assert spread.gain[s] == pytest.approx(want, rel=1e-7)
    assert np.ptp(spread.gain) > 0.05 * abs(a.midband_gain), "RE's spread moves the gain through I_C"


def test_biased_gm_has_no_spread_of_its_own():
    _, c, _ = _biased("ce_hydrophone_preamp")
    gm = next(t for t in default_tolerances(c) if t.value.element == "Q1.gm")
    assert gm.tolerance == 0 and "solved again for every sample" in gm.source


def test_a_suggestion_that_saturates_is_marked_and_never_meets():
    # Common practice, no source: a saturated BJT does not amplify as its small-signal values say.
    doc = load_design(SAMPLES / "two_stage_miller.json")
    doc.set_target("f_high_min", "150k")
    advice = suggest(doc, parse_targets(doc.targets), with_yield=False)
    marked = [s for s in advice.suggestions if s.effect.out_of_region]
    assert marked, "RC2 raised far enough saturates Q2; the advisor must show that it does"
    for s in marked:
        assert not s.meets_all
        assert "out of its amplifying region" in verdict_line(s.effect)
    for s in advice.suggestions:
        if s.meets_all:
            assert effect_of(_applied(doc, s), parse_targets(doc.targets)).meets_all


def _applied(doc, s):
    from bandsketch.engine.advise.suggest import apply_changes
    return apply_changes(doc, s.changes)


def test_samples_carry_targets_the_advisor_can_meet_with_the_bias_solved():
    from bandsketch.engine.advise.search import search

    # One sample fails its f_H target, one its f_L target; the search meets each with the bias
    # of every candidate solved again.
    for name, failing in (("ce_hydrophone_preamp", "f_high_min"), ("two_stage_miller", "f_low_max")):
        doc = load_design(SAMPLES / f"{name}.json")
        targets = parse_targets(doc.targets)
        assert effect_of(doc, targets).failing == (failing,), name
        result = search(doc, targets, with_yield=False)
        assert result.found and result.best.meets_all, (name, result.text)
        # A source resistance and a load are the stage's given: the advisor leaves them alone.
        assert not {"Rsig", "RL"} & {k.part for k in result.knobs}


@pytest.mark.parametrize("c_in, c_g", [(10e-12, 10e-12), (10e-12, 30e-12), (1e-12, 4e-12)])
def test_a_capacitive_divider_has_no_band(c_in, c_g):
    # Closed form (common practice, no source): a series C_in into C_g with a large R to ground
    # has the plateau C_in/(C_in + C_g) while the resistive mid-band gain (C_in short, C_g open)
    # is 1, so the gain never comes within 3 dB of |A_m| when C_g ≥ C_in·(√2 − 1).
    c = Circuit("divider")
    c.vsource("V1", "in", "0")
    c.capacitor("Cin", "in", "g", c_in)
    c.capacitor("Cg", "g", "0", c_g)
    c.resistor("R", "g", "0", "1G")
    c.output("g")
    a = analyze(c)
    # The 1 GΩ lifts the plateau only near the sweep's top end: within 0.001 dB of the closed form.
    assert a.shortfall_db == pytest.approx(20 * math.log10((c_in + c_g) / c_in), abs=1e-3)
    assert a.f_high_exact is None and a.f_low_exact is None
    assert any("never comes within 3 dB" in w for w in a.warnings)
    checks = check_targets(parse_targets({"f_high_min": "1k", "f_low_max": "1M", "gain": "1"}), a)
    assert checks and not any(ch.passed for ch in checks)
