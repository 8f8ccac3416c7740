"""Open- and short-circuit time constants against symbolic algebra and handbook closed forms.

All stages are invented scenarios (see bandstages.py).
"""

import math

import numpy as np
import pytest

from bandstages import common_emitter, common_source, denominator, follower, ladder
from bandsketch.engine import Circuit, analyze


def rel(a, b):
    return abs(float(a) - float(b)) / abs(float(b))


def par(*rs):
    return 1 / sum(1 / r for r in rs)


HIGH_ONLY = {
    "common emitter": lambda: common_emitter(load=True),
    "common source": lambda: common_source(),
    "ladder": lambda: ladder(5),
    "follower": lambda: follower(cl=20e-12),
}


# Identity: b1 = Σ open-circuit time constants is the s-coefficient of the normalised
# denominator, and b2 its s² coefficient (Cochrun, Grabel, "A Method for the Determination
# of the Transfer Function of Electronic Circuits", IEEE Trans. Circuit Theory CT-20(1), 1973).
@pytest.mark.parametrize("name", sorted(HIGH_ONLY))
def test_b1_b2_equal_symbolic_denominator(name):
    c = HIGH_ONLY[name]()
    a = analyze(c)
    assert all(r.band == "high" for r in a.capacitors.values())
    coeffs = denominator(c)
    assert rel(a.b1, coeffs[1]) < 1e-12
    assert rel(a.b2, coeffs[2]) < 1e-12
    assert rel(sum(r.time_constant for r in a.capacitors.values()), coeffs[1]) < 1e-12


# Identity: the exact time constants (eigenvalues of D·Z) sum to b1, and the poles are −1/λ
# (Cochrun and Grabel 1973, as above); a loop of capacitors gives λ = 0 and no pole.
# Checked against the engine's generalised eigenvalues of the full pencil.
@pytest.mark.parametrize("name", sorted(HIGH_ONLY))
def test_exact_high_time_constants_are_the_poles(name):
    a = analyze(HIGH_ONLY[name]())
    lam = np.array(a.high_time_constants)
    assert rel(lam.sum().real, a.b1) < 1e-10
    lam = lam[np.abs(lam) > 1e-9 * np.abs(lam).max()]
    mine = np.sort_complex(-1 / lam)
    assert np.allclose(mine, np.sort_complex(a.poles), rtol=1e-8)


# Identity: Σ 1/(C_j R_jˢ) = sum of the low-band pole magnitudes, which for a polynomial
# a_N s^N + … + a_0 with real negative roots is a_{N−1}/a_N (Gray, Searle, Electronic
# Principles, Wiley, 1969, short-circuit time constants; from memory).
def test_short_circuit_sum_equals_low_pole_magnitudes():
    c = common_emitter(load=False, coupling=True)
    device = [n for n in c.elements if n.startswith("Q1.c")]
    a = analyze(c, bands={n: "neutral" for n in device})
    coeffs = denominator(c, skip=device)
    assert [r.band for r in a.capacitors.values() if r.name not in device] == ["low", "low", "low"]
    omega_sum = 2 * math.pi * a.f_low_estimate_sum
    assert rel(omega_sum, coeffs[-2] / coeffs[-1]) < 1e-12
    roots = np.roots([float(x) for x in coeffs[::-1]])
    assert np.all(np.abs(roots.imag) == 0) and rel(omega_sum, np.abs(roots).sum()) < 1e-9


# Closed forms for the common-emitter stage: R_π0 = r_π‖(R_S + r_b),
# R_μ0 = R_π0 + R_L′ + g_m R_π0 R_L′ (Gray, Hurst, Lewis, Meyer, Analysis and Design of
# Analog Integrated Circuits, Wiley; from memory, page not checked).
def test_common_emitter_closed_forms():
    a = analyze(common_emitter(load=False))
    rpi0 = par(2500, 600 + 100)
    rl = par(50e3, 2200)
    assert rel(a.capacitors["Q1.cpi"].resistance, rpi0) < 1e-12
    assert rel(a.capacitors["Q1.cmu"].resistance, rpi0 + rl + 0.08 * rpi0 * rl) < 1e-12


# Closed form for the common-source stage: R_gd0 = R_sig(1 + g_m R_L′) + R_L′, R_gs0 = R_sig
# (Razavi, Design of Analog CMOS Integrated Circuits, McGraw-Hill; from memory, page not checked).
def test_common_source_closed_forms():
    a = analyze(common_source())
    rl = par(40e3, 5000)
    assert rel(a.capacitors["M1.cgd"].resistance, 1000 * (1 + 5e-3 * rl) + rl) < 1e-12
    assert rel(a.capacitors["M1.cgs"].resistance, 1000) < 1e-12
    assert rel(a.capacitors["M1.cdb"].resistance, rl) < 1e-12


# Elmore delay of an RC tree: Σ_k C_k·(resistance from the source to node k); at the far
# end of an unbranched ladder the transfer function has no zeros, so it equals b1
# (Elmore, "The Transient Response of Damped Linear Networks with Particular Regard to
# Wideband Amplifiers", J. Appl. Phys. 19(1), 1948).
def test_ladder_far_end_is_elmore_delay():
    n = 6
    a = analyze(ladder(n))
    elmore = sum((1e-9 / k) * sum(1000.0 * i for i in range(1, k + 1)) for k in range(1, n + 1))
    assert len(a.zeros) == 0
    assert rel(a.b1, elmore) < 1e-12


def test_the_diagonal_alone_gives_the_same_elmore_b1_and_every_resistance():
    # Beyond the full-matrix limit only diag(Z) is formed, taken from the band rounds' own
    # solve of the same network; it must be the full matrix's diagonal (Elmore, as above).
    n = 6
    full, diagonal_only = analyze(ladder(n)), analyze(ladder(n), full_matrix_limit=0)
    elmore = sum((1e-9 / k) * sum(1000.0 * i for i in range(1, k + 1)) for k in range(1, n + 1))
    assert rel(diagonal_only.b1, elmore) < 1e-12 and diagonal_only.b2 is None
    for name, r in full.elements.items():
        assert rel(diagonal_only.elements[name].resistance, r.resistance) < 1e-12


# Emitter follower: R_μ0 = (R_S + r_b)‖(r_π + (1 + β)R_E) and
# R_π0 = r_π‖[(R_S + r_b + R_E)/(1 + g_m R_E)], β = g_m r_π (Gray, Hurst, Lewis, Meyer,
# as above; from memory, and re-derived from the node equations in writing this test).
def test_follower_closed_forms():
    a = analyze(follower(rs=600))
    rs, rpi, gm, re = 600 + 200, 5000, 0.04, 1000
    assert rel(a.capacitors["Q1.cmu"].resistance, par(rs, rpi + (1 + gm * rpi) * re)) < 1e-12
    assert rel(a.capacitors["Q1.cpi"].resistance, par(rpi, (rs + re) / (1 + gm * re))) < 1e-12


# Series peaking: I into R‖C1, then L to C2. Node equations give
# V/I = R / (1 + sR(C1 + C2) + s²LC2 + s³RLC1C2) (derived in writing this test; the
# inductor's zero-value time constant uses the conductance it sees: common practice, no source).
def test_series_peaking_inductor_time_constants():
    c = Circuit("probe amplifier output (invented)")
    c.isource("Iin", "a", "0")
    c.resistor("R", "a", "0", 500)
    c.capacitor("C1", "a", "0", 2e-12)
    c.inductor("Lpk", "a", "out", 100e-9)
    c.capacitor("C2", "out", "0", 3e-12)
    c.output("out")
    a = analyze(c)
    assert a.inductors["Lpk"].band == "high"
    assert a.gain_unit == "V/A" and rel(a.midband_gain, 500) < 1e-12
    assert a.inductors["Lpk"].resistance == math.inf and a.inductors["Lpk"].time_constant == 0
    assert rel(a.b1, 500 * 5e-12) < 1e-12
    assert rel(a.b2, 100e-9 * 3e-12) < 1e-12


# A choke at the output: H = A·sL/(sL + R) with R = R_S‖R_L, one pole at R/L, so the
# short-circuit estimate is exact (single-pole high-pass; common practice, no source).
def test_choke_low_band_time_constant():
    c = Circuit("bias tee (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rs", "sig", "a", 50)
    c.resistor("RL", "a", "0", 200)
    c.inductor("Lch", "a", "0", 10e-6)
    c.output("a")
    a = analyze(c)
    r = par(50, 200)
    assert a.inductors["Lch"].band == "low"
    assert rel(a.inductors["Lch"].resistance, r) < 1e-12
    assert rel(a.omega_low_estimate, r / 10e-6) < 1e-12
    assert rel(a.f_low_exact, r / 10e-6 / (2 * math.pi)) < 1e-9
    assert a.f_high_exact is None and a.f_low_ratio == pytest.approx(1, rel=1e-9)
