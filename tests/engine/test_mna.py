"""The nodal equations and the exact response against symbolic nodal analysis done by hand.

Each reference circuit's nodal matrix is written out below in sympy, row by row from
Kirchhoff's current law, with the signal source a known 1 V node (so no engine code is
used to build it). The engine's H(jω), poles and zeros must agree with the symbolic
transfer function, with scipy.signal.freqs on its coefficients, and with sympy's roots.

Source for the method: C.-W. Ho, A. E. Ruehli, P. A. Brennan, "The modified nodal approach
to network analysis", IEEE Trans. Circuits and Systems 22(6), 1975. Source for the
hybrid-π and MOS small-signal models and the right-half-plane zero at +g_m/C_gd:
A. S. Sedra, K. C. Smith, "Microelectronic Circuits", 7th ed., 2015, ch. 10 (from memory).
"""

import math

import numpy as np
import pytest
import scipy.signal
import sympy as sp

from bandsketch.engine.network.circuit import Circuit
from bandsketch.engine.solve.mna import OPEN, SHORT, build_system
from bandsketch.engine.solve.response import frequency_response, poles, zeros
from bandsketch.engine.network.validate import validate

s = sp.symbols("s")
R = sp.Rational
FREQS = np.array([1.0, 37.0, 1e3, 2.2e4, 1e5, 3.3e6, 1e7, 4.7e8, 1e9])


def symbolic_h(Y, rhs, out_index):
    """H(s) = x[out] of Y x = rhs, as a cancelled rational function of s."""
    x = sp.Matrix(Y).LUsolve(sp.Matrix(rhs))
    return sp.cancel(sp.together(x[out_index]))


def coefficients(h):
    """Numerator and denominator coefficients (highest power first) as floats."""
    num, den = sp.fraction(sp.cancel(h))
    b = [float(c) for c in sp.Poly(num, s).all_coeffs()]
    a = [float(c) for c in sp.Poly(den, s).all_coeffs()]
    return b, a


def evaluate(h, freqs):
    f = sp.lambdify(s, h, "mpmath")
    return np.array([complex(f(sp.I * 2 * sp.pi * sp.Float(fr, 30))) for fr in freqs])


def roots(poly_expr):
    p = sp.Poly(poly_expr, s)
    if p.degree() < 1:
        return np.zeros(0, complex)
    # Exact algebraic roots (CRootOf), evaluated to 30 digits.
    return np.sort_complex(np.array([complex(r.evalf(30)) for r in p.all_roots()]))


def assert_close(actual, expected, rtol):
    actual, expected = np.asarray(actual), np.asarray(expected)
    assert actual.shape == expected.shape, (actual, expected)
    err = np.abs(actual - expected) / np.maximum(np.abs(expected), 1e-300)
    assert np.all(err <= rtol), f"max relative error {err.max():.3g}\n{actual}\n{expected}"


def check_against_symbolic(circuit, h, *, pole_rtol=1e-8, zero_rtol=1e-8):
    validate(circuit)
    system = build_system(circuit)
    ours = frequency_response(system, FREQS)
    # 1. The symbolic transfer function evaluated exactly.
    assert_close(ours, evaluate(h, FREQS), 1e-9)
    # 2. scipy.signal.freqs on the symbolic coefficients (an independent evaluator).
    b, a = coefficients(h)
    _, h_freqs = scipy.signal.freqs(b, a, worN=2 * np.pi * FREQS)
    assert_close(ours, h_freqs, 1e-9)
    # 3. Poles and zeros against sympy's roots of the denominator and numerator.
    num, den = sp.fraction(sp.cancel(h))
    assert_close(poles(system), roots(den), pole_rtol)
    assert_close(zeros(system), roots(num), zero_rtol)
    return system


# -- RC low-pass ---------------------------------------------------------------------------
def test_rc_lowpass_matches_hand_nodal_analysis():
    # KCL at out: (v_out − 1)/R + sC v_out = 0. Common practice, no source.
    r, c = R(4700), R(22, 10**9)
    h = symbolic_h([[1 / r + s * c]], [1 / r], 0)
    assert sp.simplify(h - 1 / (1 + s * r * c)) == 0
    circ = Circuit("RC low-pass")
    circ.vsource("Vin", "in", "0")
    circ.resistor("R1", "in", "out", "4k7")
    circ.capacitor("C1", "out", "0", "22n")
    circ.output("out")
    check_against_symbolic(circ, h)


# -- three-section RC ladder --------------------------------------------------------------
def test_three_section_rc_ladder():
    # Nodes n1, n2, n3; R1 in–n1, R2 n1–n2, R3 n2–n3; C_k from n_k to ground.
    # Common practice, no source.
    r1, r2, r3 = R(1000), R(2200), R(4700)
    c1, c2, c3 = R(10, 10**9), R(4700, 10**12), R(1, 10**9)
    Y = [[1 / r1 + 1 / r2 + s * c1, -1 / r2, 0],
         [-1 / r2, 1 / r2 + 1 / r3 + s * c2, -1 / r3],
         [0, -1 / r3, 1 / r3 + s * c3]]
    h = symbolic_h(Y, [1 / r1, 0, 0], 2)
    circ = Circuit("ladder")
    circ.vsource("Vin", "in", "0")
    circ.resistor("R1", "in", "n1", "1k")
    circ.resistor("R2", "n1", "n2", "2k2")
    circ.resistor("R3", "n2", "n3", "4k7")
    circ.capacitor("C1", "n1", "0", "10n")
    circ.capacitor("C2", "n2", "0", "4n7")
    circ.capacitor("C3", "n3", "0", "1n")
    circ.output("n3")
    system = check_against_symbolic(circ, h)
    # An RC ladder has only real, negative, distinct poles and no finite zeros
    # (common practice, no source).
    p = poles(system)
    assert len(p) == 3 and np.all(np.abs(p.imag) <= 1e-9 * np.abs(p)) and np.all(p.real < 0)
    assert zeros(system).size == 0


# -- hybrid-π common emitter --------------------------------------------------------------
CE = dict(rs=R(600), rb=R(100), rpi=R(2500), gm=R(80, 1000), ro=R(50000), rl=R(2200),
          cpi=R(20, 10**12), cmu=R(2, 10**12))


def test_hybrid_pi_common_emitter():
    # Nodes b (base pin), b′ (internal base), c; emitter grounded. KCL, currents leaving:
    #   b : (v_b − 1)/R_s + (v_b − v_b′)/r_b = 0
    #   b′: (v_b′ − v_b)/r_b + v_b′ (1/r_π + sC_π) + (v_b′ − v_c) sC_μ = 0
    #   c : (v_c − v_b′) sC_μ + g_m v_b′ + v_c (1/r_o + 1/R_L) = 0
    # Sedra & Smith, Microelectronic Circuits, 7th ed., 2015, §10.3 (from memory).
    p = CE
    Y = [[1 / p["rs"] + 1 / p["rb"], -1 / p["rb"], 0],
         [-1 / p["rb"], 1 / p["rb"] + 1 / p["rpi"] + s * (p["cpi"] + p["cmu"]), -s * p["cmu"]],
         [0, p["gm"] - s * p["cmu"], s * p["cmu"] + 1 / p["ro"] + 1 / p["rl"]]]
    h = symbolic_h(Y, [1 / p["rs"], 0, 0], 2)
    circ = Circuit("common emitter")
    circ.vsource("Vsig", "sig", "0")
    circ.resistor("Rs", "sig", "b", "600")
    circ.bjt("Q1", collector="c", base="b", emitter="0", gm="80m", rpi="2k5", ro="50k", rb="100",
             cpi="20p", cmu="2p")
    circ.resistor("RL", "c", "0", "2k2")
    circ.output("c")
    system = check_against_symbolic(circ, h)
    # The right-half-plane zero at +g_m/C_μ (same source).
    z = zeros(system)
    assert z.size == 1
    assert z[0].real > 0 and abs(z[0] - float(p["gm"] / p["cmu"])) <= 1e-9 * float(p["gm"] / p["cmu"])
    # Mid-band gain −g_m (r_o ∥ R_L) r_π/(R_s + r_b + r_π) (same source).
    r_load = 1 / (1 / p["ro"] + 1 / p["rl"])
    a_mid = -p["gm"] * r_load * p["rpi"] / (p["rs"] + p["rb"] + p["rpi"])
    assert frequency_response(system, [1e-6])[0] == pytest.approx(float(a_mid), rel=1e-9)


# -- common source with its right-half-plane zero ----------------------------------------
def test_common_source_rhp_zero():
    # Nodes g, d; KCL, currents leaving:
    #   g: (v_g − 1)/R_s + sC_gs v_g + sC_gd (v_g − v_d) = 0
    #   d: sC_gd (v_d − v_g) + g_m v_g + v_d (1/r_o + 1/R_L) = 0
    # The numerator is ∝ (sC_gd − g_m): a zero at s = +g_m/C_gd.
    # Sedra & Smith, Microelectronic Circuits, 7th ed., 2015, §10.3 (from memory).
    rs, gm, ro, rl = R(10000), R(5, 1000), R(20000), R(10000)
    cgs, cgd = R(1, 10**12), R(200, 10**15)
    Y = [[1 / rs + s * (cgs + cgd), -s * cgd],
         [gm - s * cgd, s * cgd + 1 / ro + 1 / rl]]
    h = symbolic_h(Y, [1 / rs, 0], 1)
    num, _ = sp.fraction(h)
    assert sp.solve(num, s) == [gm / cgd]
    circ = Circuit("common source")
    circ.vsource("Vsig", "sig", "0")
    circ.resistor("Rs", "sig", "g", "10k")
    circ.mosfet("M1", drain="d", gate="g", source="0", gm="5m", ro="20k", cgs="1p", cgd="200f")
    circ.resistor("RL", "d", "0", "10k")
    circ.output("d")
    system = check_against_symbolic(circ, h)
    z = zeros(system)
    assert z.size == 1 and z[0].real > 0
    assert z[0] == pytest.approx(float(gm / cgd), rel=1e-9)
    assert np.all(poles(system).real < 0)


# -- stamps of the other elements against closed forms -----------------------------------
def test_rl_highpass_inductor_branch():
    # H = sL/(R + sL) for R in series, L to ground. Common practice, no source.
    circ = Circuit("RL")
    circ.vsource("V1", "in", "0")
    circ.resistor("R1", "in", "out", "1k")
    circ.inductor("L1", "out", "0", "10m")
    circ.output("out")
    validate(circ)
    system = build_system(circ)
    w = 2 * np.pi * FREQS
    assert_close(frequency_response(system, FREQS), 1j * w * 0.01 / (1000 + 1j * w * 0.01), 1e-9)
    assert_close(poles(system), np.array([-1000 / 0.01 + 0j]), 1e-9)
    z = zeros(system)
    assert z.size == 1 and abs(z[0]) <= 1e-9 * 1e5  # the zero of sL at s = 0


def test_controlled_sources_follow_their_definitions():
    # VCVS: v(p) − v(n) = gain·v(ctl); CCCS: gain·i(sensed) from p through it to n;
    # CCVS: v = r·i(sensed); the sensed current flows from the source's p through it to n.
    # Definitions as the engine documents them (engine/elements.py); values by hand.
    c = Circuit("vcvs")
    c.vsource("V1", "in", "0")
    c.resistor("R1", "in", "0", "1k")
    c.vcvs("E1", "out", "0", "in", "0", "-3.5")
    c.resistor("RL", "out", "0", "1k")
    c.output("out")
    validate(c)
    assert frequency_response(build_system(c), [1e3])[0] == pytest.approx(-3.5, rel=1e-12)

    # V1 drives 1 V across R1 = 1 kΩ through a 0-V ammeter Vam: i(Vam) = 1 mA flowing from
    # its p (node m) to its n (ground). F1 = 10·i(Vam) flows from out through F1 to ground,
    # so it pulls 10 mA out of node out: v(out) = −10 mA · 2 kΩ = −20 V.
    c = Circuit("cccs")
    c.vsource("V1", "in", "0")
    c.resistor("R1", "in", "m", "1k")
    c.vsource("Vam", "m", "0")
    c.cccs("F1", "out", "0", "Vam", "10")
    c.resistor("RL", "out", "0", "2k")
    c.output("out")
    validate(c)
    assert frequency_response(build_system(c), [1e3])[0] == pytest.approx(-20.0, rel=1e-12)

    c = Circuit("ccvs")
    c.vsource("V1", "in", "0")
    c.resistor("R1", "in", "m", "1k")
    c.vsource("Vam", "m", "0")
    c.ccvs("H1", "out", "0", "Vam", "5k")
    c.resistor("RL", "out", "0", "2k")
    c.output("out")
    validate(c)
    assert frequency_response(build_system(c), [1e3])[0] == pytest.approx(5.0, rel=1e-12)


def test_current_source_input_gives_transimpedance():
    # 1 A into R ∥ C: Z = R/(1 + sRC). Common practice, no source.
    c = Circuit("transimpedance")
    c.isource("I1", "x", "0")
    c.resistor("R1", "x", "0", "10k")
    c.capacitor("C1", "x", "0", "1n")
    c.output("x")
    validate(c)
    w = 2 * np.pi * FREQS
    assert_close(frequency_response(build_system(c), FREQS), 1e4 / (1 + 1j * w * 1e4 * 1e-9), 1e-9)


def test_short_and_open_states_are_exact():
    # Shorting C1 of the ladder joins n1 to ground (H = 0); opening C3 removes it. The short
    # is a 0-V branch, not a big capacitor, so the result is exactly zero. Common practice.
    c = Circuit("states")
    c.vsource("Vin", "in", "0")
    c.resistor("R1", "in", "n1", "1k")
    c.capacitor("C1", "n1", "0", "10n")
    c.resistor("R2", "n1", "out", "1k")
    c.capacitor("C2", "out", "0", "1n")
    c.output("out")
    validate(c)
    shorted = build_system(c, {"C1": SHORT})
    assert np.all(frequency_response(shorted, FREQS) == 0)
    opened = build_system(c, {"C1": OPEN, "C2": OPEN})
    assert_close(frequency_response(opened, FREQS), np.ones(FREQS.size, complex), 1e-12)
    assert poles(opened).size == 0


def test_unexcited_sources_are_zeroed():
    # A second voltage source that is not the input is a short; a current source an open.
    # Common practice (superposition), no source.
    c = Circuit("two sources")
    c.vsource("Va", "a", "0")
    c.resistor("R1", "a", "out", "1k")
    c.resistor("R2", "out", "b", "1k")
    c.vsource("Vb", "b", "0")
    c.isource("Ix", "out", "0")
    c.output("out")
    c.input("Va")
    validate(c)
    assert frequency_response(build_system(c), [1.0])[0] == pytest.approx(0.5, rel=1e-12)
    c.input("Ix")
    assert frequency_response(build_system(c), [1.0])[0] == pytest.approx(500.0, rel=1e-12)


def test_differential_output():
    # Output v(p) − v(n) of a divider pair: 1·(2/3) − 1·(1/3). Common practice, no source.
    c = Circuit("bridge")
    c.vsource("V1", "in", "0")
    c.resistor("R1", "in", "p", "1k")
    c.resistor("R2", "p", "0", "2k")
    c.resistor("R3", "in", "n", "2k")
    c.resistor("R4", "n", "0", "1k")
    c.output("p", "n")
    validate(c)
    assert frequency_response(build_system(c), [1.0])[0] == pytest.approx(1 / 3, rel=1e-12)


def test_internal_capacitors_are_named_after_the_block():
    # Naming rule of issue 2: <block>.<param>.
    c = Circuit("names")
    c.bjt("Q1", collector="c", base="b", emitter="e", gm="40m", rpi="2k5", cpi="10p", cmu="1p",
          ccs="0.5p", rb="50")
    c.mosfet("M1", drain="d", gate="g", source="s", bulk="0", gm="1m", cgs="1p", cgd="0.1p",
             cdb="0.2p", csb="0.3p", gmb="0.1m")
    names = set(c.elements)
    assert {"Q1.cpi", "Q1.cmu", "Q1.ccs", "M1.cgs", "M1.cgd", "M1.cdb", "M1.csb"} <= names
    assert math.isclose(c.elements["Q1.cmu"].value, 1e-12)
