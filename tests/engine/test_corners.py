"""Exact corners found wherever they exist, and no estimate far off without a warning saying why.

All stages are invented scenarios (see bandstages.py).
"""

import math

import mpmath as mp
import numpy as np
import pytest
from hypothesis import given, settings

from bandstages import rc_coupled, tuned_tank
from bandsketch.engine import analyze
from bandsketch.engine.solve.mna import build_system
from test_analysis import networks


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


def _mp_magnitude(G, C, b, c, f):
    x = mp.lu_solve(G + 2j * mp.pi * mp.mpf(f) * C, b)
    return abs((c.T * x)[0])


# The exact corners against a dense high-precision reference: at each corner mpmath's |H|
# (30 digits, the engine's matrices rounded to binary64) is at the −3 dB level, and on a
# dense grid from the mid band to the corner it is above it, so no nearer crossing was
# missed (mpmath, F. Johansson et al., mpmath 1.3, 2023).
@settings(max_examples=8, deadline=None)
@given(networks())
def test_exact_corners_agree_with_an_mpmath_reference(c):
    a = analyze(c)
    system = build_system(c)
    with mp.workdps(30):
        G, C = mp.matrix(system.G.toarray().tolist()), mp.matrix(system.C.toarray().tolist())
        b, sel = mp.matrix(system.b.tolist()), mp.matrix(system.c.tolist())
        level = abs(mp.mpf(a.midband_gain)) / mp.sqrt(2)
        f_m = a.midband_frequency
        # Where the bands overlap the exact gain can stay below A_m's −3 dB level at f_m itself;
        # the corners are then taken from the nearest sweep points above it (checked below).
        outward = _mp_magnitude(G, C, b, sel, f_m) >= level
        for corner, end in ((a.f_low_exact, a.sweep_frequencies[0]), (a.f_high_exact, a.sweep_frequencies[-1])):
            stop = corner if corner is not None else end
            for f in np.geomspace(f_m, stop, 24)[1:-1] if outward else ():
                assert _mp_magnitude(G, C, b, sel, f) > level * (1 - 1e-9), (f, corner)
            if corner is not None:
                assert abs(_mp_magnitude(G, C, b, sel, corner) / level - 1) < 1e-9


# No silent miss: an estimate more than 25 % from its exact corner always comes with a
# warning that says so (the rule of issue 11; common practice, no source).
@settings(max_examples=40, deadline=None)
@given(networks())
def test_an_estimate_far_off_always_warns(c):
    a = analyze(c)
    for sym, ratio in (("f_H", a.f_high_ratio), ("f_L", a.f_low_ratio)):
        if ratio is not None and abs(ratio - 1) > 0.25:
            assert any(w.startswith(f"The {sym} estimate") for w in a.warnings), (sym, ratio, a.warnings)
