"""Exact corners found wherever they exist, and no estimate far off without a warning saying why.

All stages are invented scenarios (see bandstages.py).
"""

import math

import pytest

from bandstages import rc_coupled, tuned_tank
from bandsketch.engine import analyze


# A narrow tuned stage: its corners may fall between two sweep points, or both between the
# same two. The corners of a parallel tank are f0·(√(1 + 1/(4Q²)) ∓ 1/(2Q)) (the resonance
# curve; from memory).
@pytest.mark.parametrize("q", [2, 5, 20, 30, 50, 100, 300, 1000])
def test_tuned_tank_corners_are_found_for_any_q(q):
    a = analyze(tuned_tank(q))
    f0 = 10.7e6
    root = math.sqrt(1 + 1 / (4 * q * q))
    assert a.midband_gain == pytest.approx(1.0, rel=1e-12)
    assert a.f_low_exact == pytest.approx(f0 * (root - 1 / (2 * q)), rel=1e-9)
    assert a.f_high_exact == pytest.approx(f0 * (root + 1 / (2 * q)), rel=1e-9)


# Two and three RC-coupled stages whose coupling capacitors see about the same resistance:
# no low-band pole dominates, and the dominance test says so; the estimate takes each
# coupling network as its own section, which the transconductances make exact here (the
# corner itself is checked against sympy in test_lowcorner.py), so it needs no warning.
# Σ1/τ would be 52–73 % high (n equal poles fall 3 dB at p/√(2^(1/n) − 1), not n·p; from memory).
@pytest.mark.parametrize("stages", [2, 3])
def test_rc_coupled_stages_without_a_dominant_low_pole(stages):
    a = analyze(rc_coupled(stages))
    assert a.f_low_ratio == pytest.approx(1, abs=0.01)
    assert a.f_low_estimate_sum / a.f_low_exact > 1.5
    assert not any(w.startswith("The f_L estimate") for w in a.warnings)
    assert any(w.startswith("No pole dominates the low band") for w in a.warnings)


# The coupling capacitors scaled down until the bands approach each other: the closeness is
# said in words, with f_H/f_L (common practice, no source).
def test_bands_close_together_are_said():
    a = analyze(rc_coupled(2, coupling=200e-12))
    ratio = a.f_high_exact / a.f_low_exact
    assert ratio < 10
    assert any(f"only {ratio:.1f}× apart" in w for w in a.warnings)


# The exact corners against an mpmath reference, and the no-silent-miss rule, on random
# stages: tests/fuzz/test_band_properties.py (with the fuzz budget).
