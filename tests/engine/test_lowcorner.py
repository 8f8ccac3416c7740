"""The lower-corner estimate with pole–zero pairs: each low-band element a section of its own.

All stages are invented scenarios (see bandstages.py). The exact lower corners here come
from an independent symbolic nodal analysis (sympy, Cramer's rule on the nodal equations:
Ho, Ruehli, Brennan, IEEE Trans. CAS-22(6), 1975) evaluated by scipy.signal.freqs, not
from the engine; the level they fall 3 dB from is the engine's resistive mid-band gain A_m
(checked against hand dividers in test_states.py and test_timeconstants.py).
"""

import math

import pytest

from bandstages import common_base, lower_corner, partly_bypassed_ce, rc_coupled
from bandsketch.engine import analyze
from bandsketch.engine.solve.lowcorner import section_corner, squares_corner


def par(*rs):
    return 1 / sum(1 / r for r in rs)


# A common emitter with R_E1 unbypassed and R_E2 bypassed. With Cin and Cout shorted the bypass
# sees R_E2 ‖ (R_E1 + (R_sig‖R_bias + r_b + r_π)/(1 + β)) (the resistance looking into an
# emitter; Gray, Hurst, Lewis, Meyer, Analysis and Design of Analog Integrated Circuits; from
# memory), and without r_o its zero is 1/(R_E2·C_E) (the emitter branch is an open circuit
# there; worked by hand). The estimate is checked against the sympy/scipy corner: within 5 %
# (3 % in fact), where Σ1/τ is 14 % to 9× high.
@pytest.mark.parametrize("re1, re2", [(100, 470), (200, 200), (470, 100)])
@pytest.mark.parametrize("ce", [10e-6, 100e-6, 1e-3])
def test_partly_bypassed_emitter(re1, re2, ce):
    a = analyze(partly_bypassed_ce(re1, re2, ce))
    r = a.capacitors["Ce"]
    beta = 0.08 * 2500
    seen = par(re2, re1 + (par(600, 8200) + 100 + 2500) / (1 + beta))
    assert r.band == "low"
    assert r.time_constant == pytest.approx(ce * seen, rel=1e-9)
    assert r.f_zero == pytest.approx(1 / (2 * math.pi * re2 * ce), rel=1e-9)
    # Opening the bypass alone costs (R_E1 + r_e′)/(R_E1 + R_E2 + r_e′) of the gain; a pair when above 1/√2.
    assert r.pole_zero_pair == (r.f_zero * 2 * math.pi * r.time_constant > 1 / math.sqrt(2))
    exact = lower_corner(partly_bypassed_ce(re1, re2, ce), a.midband_frequency, a.midband_gain)
    assert a.f_low_exact == pytest.approx(exact, rel=1e-6)
    assert a.f_low_estimate == pytest.approx(exact, rel=0.05)
    assert a.f_low_estimate_sum > 1.1 * exact
    assert not any(w.startswith("The f_L estimate") for w in a.warnings)


# The sections' first-order expansion, √(Σω_p² − 2Σω_z²) (Sedra & Smith, Microelectronic
# Circuits, low-frequency response; from memory), from the same poles and zeros: close where
# the bypass sets the corner, far too low (or not real) where a pair sits above the coupling
# poles, which is why the headline estimate solves the sections' product instead.
def test_the_squares_form_and_where_it_fails():
    good = analyze(partly_bypassed_ce(100, 470, 100e-6))
    poles = [1 / r.time_constant for r in good.elements.values() if r.band == "low"]
    zeros = [2 * math.pi * r.f_zero for r in good.elements.values() if r.band == "low"]
    root = math.sqrt(sum(p * p for p in poles) - 2 * sum(z * z for z in zeros))
    assert good.f_low_estimate_squares == pytest.approx(root / (2 * math.pi), rel=1e-12)
    assert good.f_low_estimate_squares == pytest.approx(good.f_low_exact, rel=0.15)
    pair = analyze(partly_bypassed_ce(470, 100, 10e-6))
    assert pair.capacitors["Ce"].pole_zero_pair
    assert pair.f_low_estimate_squares is None
    assert pair.f_low_estimate == pytest.approx(pair.f_low_exact, rel=0.02)


# A common-base stage whose base resistor is bypassed: the bypass is a corner (R_b = 20 kΩ
# costs more than 3 dB open) or only a pair (1 kΩ, 5 kΩ); the estimate stays within 5 % of the
# sympy/scipy corner over the grid, while Σ1/τ reaches +75 % (common practice, no source).
@pytest.mark.parametrize("rb", [1e3, 5e3, 20e3])
@pytest.mark.parametrize("cb", [1e-6, 10e-6, 100e-6])
def test_bypassed_common_base(rb, cb):
    a = analyze(common_base(rb, cb))
    assert a.capacitors["Cb"].band == "low" and a.capacitors["Cb"].state == "short"
    exact = lower_corner(common_base(rb, cb), a.midband_frequency, a.midband_gain)
    assert a.f_low_exact == pytest.approx(exact, rel=1e-6)
    assert a.f_low_estimate == pytest.approx(exact, rel=0.05)
    assert abs(a.f_low_estimate / exact - 1) <= abs(a.f_low_estimate_sum / exact - 1) + 1e-9


# Two and three RC-coupled stages: the transconductances isolate the coupling networks, so
# the low band is a product of single-pole high-pass sections ω²/(ω² + p_k²) with p_k the
# coupling capacitor's 1/(C·R) (R_sig + R_b for the first, R_c + R_b, R_c + R_L after; worked
# by hand), and the estimate is that product's corner. Σ p_k is 52–73 % high (n equal poles
# fall 3 dB at p/√(2^(1/n) − 1), not n·p; from memory).
@pytest.mark.parametrize("stages", [2, 3])
def test_rc_coupled_sections_are_exact(stages):
    a = analyze(rc_coupled(stages))
    seen = [11e3] + [15e3] * stages
    poles = [1 / (1e-6 * r) for r in seen]
    hand = section_corner(poles, [0.0] * len(poles)) / (2 * math.pi)
    assert a.f_low_estimate == pytest.approx(hand, rel=1e-6)
    assert a.f_low_estimate == pytest.approx(lower_corner(rc_coupled(stages), a.midband_frequency, a.midband_gain), rel=1e-3)
    assert a.f_low_estimate_sum > 1.5 * a.f_low_exact
    assert squares_corner(poles, [0.0] * len(poles)) < a.f_low_exact * 2 * math.pi


# A single section is exact: a pole alone falls 3 dB at ω_p, a pair (s + z)/(s + p) at
# √(p² − 2z²) and not at all when z > p/√2 (|H|² = (ω² + z²)/(ω² + p²); worked by hand).
def test_single_sections():
    assert section_corner([100.0], [0.0]) == pytest.approx(100.0, rel=1e-12)
    assert section_corner([100.0], [50.0]) == pytest.approx(math.sqrt(100.0 ** 2 - 2 * 50.0 ** 2), rel=1e-12)
    assert section_corner([100.0], [80.0]) is None
    assert squares_corner([100.0], [50.0]) == pytest.approx(section_corner([100.0], [50.0]), rel=1e-12)
