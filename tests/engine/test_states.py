"""Every element in its physical mid-band state, even where the gain test is inconclusive.

All stages are invented scenarios (see bandstages.py); the figures beside them are worked
by hand from the element values.
"""

import math

import pytest
from scipy.optimize import brentq

from bandstages import cascode, common_gate, lower_corner, partly_bypassed_ce
from bandsketch.engine import Circuit, analyze


def _two_pole_corner(t1, t2):
    """Hz where 1/((1 + jωτ1)(1 + jωτ2)) falls 3 dB: (1 + ω²τ1²)(1 + ω²τ2²) = 2, solved for ω²."""
    a, b = t1 * t1 * t2 * t2, t1 * t1 + t2 * t2
    u = (-b + math.sqrt(b * b + 4 * a)) / (2 * a)
    return math.sqrt(u) / (2 * math.pi)


# A bypassed common-gate gate is a short at mid band whatever the gain test says, so C_gs
# sees R_sig ‖ R_s ‖ 1/g_m and C_gd + C_L see R_d: b1 = 64.5 ps + 3 ns (worked by hand, see
# common_gate). Left open, the gate capacitances would see kilo-ohms and f_H would be 12×
# too low. The exact corner of the two non-interacting poles is the closed form above.
@pytest.mark.parametrize("rg", [1e3, 4.7e3, 10e3])
@pytest.mark.parametrize("cg", [10e-9, 1e-6, 10e-6])
def test_common_gate_bypass_is_shorted_and_f_high_holds(rg, cg):
    a = analyze(common_gate(rg, cg))
    cap = a.capacitors["Cg"]
    assert cap.state == "short"
    t_s = 2e-12 / (1 / 50 + 1 / 1000 + 10e-3)
    t_d = 1.5e-12 * 2000
    assert a.f_high_estimate == pytest.approx(1 / (2 * math.pi * (t_s + t_d)), rel=1e-9)
    assert a.f_high_exact == pytest.approx(_two_pole_corner(t_s, t_d), rel=5e-3)
    assert abs(a.f_high_ratio - 1) < 0.03
    assert cap.midband_reactance < cap.midband_resistance


# The 1 kΩ gate: opening the bypass changes the gain by far less than 0.01 dB (the gate
# takes no current), so the test is inconclusive and the impedance decides, in words.
def test_the_reason_says_why_the_impedance_decides():
    cap = analyze(common_gate(1e3, 1e-6)).capacitors["Cg"]
    assert cap.band == "neutral" and cap.state == "short"
    assert "so its impedance decides: shorted at mid band: 1/(2π·f_m·C) = " in cap.reason
    assert cap.state_reason.endswith("beside the 1 kΩ it sees")


# A stray capacitance on a branch that only loads the ideal source stays open: at mid band its
# impedance is far above the resistance it sees (common practice, no source).
def test_a_stray_across_a_quiet_branch_is_open():
    c = common_gate()
    c.resistor("Rmon", "sig", "mon", 10e3)
    c.resistor("Rmon2", "mon", "0", 10e3)
    c.capacitor("Cmon", "mon", "0", 1e-12)
    r = analyze(c).capacitors["Cmon"]
    assert r.band == "neutral" and r.state == "open" and r.midband_reactance > r.midband_resistance


# Three coupling capacitors in a triangle: any one can be opened while the other two carry
# the signal, so each tests neutral. By impedance they are shorts (two shorted, the third's
# ends then already joined), and the mid-band gain is the divider (R_b ‖ R_L)/(R_sig + R_b ‖ R_L)
# = 1 kΩ / 1.3 kΩ = 0.769 (worked by hand). Tested together, opening all three cuts the signal
# off: they are a coupling as a group, the estimate cannot take the loop apart, and the
# analysis says so beside the exact corner, which is checked against the sympy/scipy
# reference (bandstages.lower_corner).
def _triangle():
    c = Circuit("sensor coupling triangle (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rsig", "sig", "a", 300)
    c.capacitor("Ca", "a", "b", 10e-6)
    c.capacitor("Cb", "b", "c", 10e-6)
    c.capacitor("Cc", "c", "a", 10e-6)
    c.resistor("Rb", "b", "0", 2000)
    c.resistor("RL", "c", "0", 2000)
    c.output("c")
    return c


def test_capacitor_triangle_carries_the_signal():
    a = analyze(_triangle())
    assert a.midband_gain == pytest.approx(1000 / 1300, rel=1e-9)
    states = sorted(r.state for r in a.capacitors.values())
    assert states == ["open", "short", "short"]
    assert any("other shorts already join its ends" in r.state_reason for r in a.capacitors.values())
    assert abs(a.response([a.midband_frequency])[0]) == pytest.approx(1000 / 1300, rel=1e-3)


def test_capacitor_triangle_is_judged_as_a_group():
    a = analyze(_triangle())
    for r in a.capacitors.values():
        assert r.band == "neutral" and "together they are low band" in r.reason
    assert a.f_low_exact == pytest.approx(lower_corner(_triangle(), a.midband_frequency, a.midband_gain), rel=1e-6)
    assert a.f_low_estimate is None
    group = next(w for w in a.warnings if w.startswith("Ca, Cb and Cc act only together"))
    assert "opening them all changes the gain to nothing" in group and "trust the exact lower corner" in group
    assert any(w.startswith("The f_L estimate finds no lower corner (no element tests as low band)")
               for w in a.warnings)


# A coupling capacitor made of two in parallel: shorting or opening one leaves the other, so
# they are tested as one port; capacitances in parallel add (common practice, no source), so
# the stage's figures equal those of one 4.7 µF capacitor, and each shares its port's part
# of the 3 dB in proportion to its capacitance.
def test_parallel_coupling_capacitors_act_as_one():
    single = analyze(partly_bypassed_ce(100, 470, 100e-6))
    a = analyze(partly_bypassed_ce(100, 470, 100e-6, cin=(1e-6, 3.7e-6)))
    one = single.capacitors["Cin"]
    for name, cap in (("Cin1", 1e-6), ("Cin2", 3.7e-6)):
        r = a.capacitors[name]
        assert r.band == "low" and r.state == "short"
        assert r.resistance == pytest.approx(one.resistance, rel=1e-9)
        assert r.time_constant == pytest.approx(one.time_constant, rel=1e-9)
        assert r.share == pytest.approx(one.share * cap / 4.7e-6, rel=1e-9)
    assert a.f_low_estimate == pytest.approx(single.f_low_estimate, rel=1e-9)
    assert a.f_low_exact == pytest.approx(single.f_low_exact, rel=1e-9)
    assert a.capacitors["Cin2"].state_reason.startswith("shorted at mid band, in parallel with Cin1")
    assert a.midband_states()["Cin2"] == "open"  # the network joins the nodes once


# A choke from a quiet monitor node to ground (the node hangs off the ideal source, so no
# state of the choke moves the gain): its state is what 2π·f_m·L is beside the R_mon ‖ R_mon2
# = 5 kΩ it sees (worked by hand), shorted for a small choke and open for a large one
# (common practice, no source).
@pytest.mark.parametrize("inductance, state", [(10e-6, "short"), (0.1, "open")])
def test_an_inconclusive_inductor_takes_the_state_of_its_impedance(inductance, state):
    c = common_gate()
    c.resistor("Rmon", "sig", "mon", 10e3)
    c.resistor("Rmon2", "mon", "0", 10e3)
    c.inductor("Lmon", "mon", "0", inductance)
    r = analyze(c).inductors["Lmon"]
    assert r.band == "neutral" and r.state == state
    assert r.midband_resistance == pytest.approx(5e3, rel=1e-9)
    assert (r.midband_reactance < 5e3) == (state == "short")
    assert r.state_reason.startswith(f"{'shorted' if state == 'short' else 'open'} at mid band: 2π·f_m·L = ")


# Shunt peaking: g_m into C_L ‖ (R + L), so Z = (R + sL)/(1 + sRC + s²LC) (derived in writing
# this test). The inductor is a short at mid band (high band: opening it removes R); with
# the capacitor open it sees an open circuit, so its zero-value time constant is 0 and
# b1 = RC, b2 = LC. With m = L/(R²C) = 0.41 and 0.71 the bandwidth grows to 1.72 and 1.85
# times 1/(2πRC) (T. H. Lee, The Design of CMOS Radio-Frequency Integrated Circuits; from
# memory), which the first-order estimate misses and the analysis says, with why.
@pytest.mark.parametrize("m, extension", [(0.41, 1.72), (0.71, 1.85)])
def test_shunt_peaking(m, extension):
    R, C = 1000.0, 1e-12
    c = Circuit("video output stage, shunt peaked (invented)")
    c.vsource("Vsig", "sig", "0")
    c.vccs("Gm", "d", "0", "sig", "0", 1e-3)
    c.capacitor("CL", "d", "0", C)
    c.resistor("RD", "d", "x", R)
    c.inductor("Lp", "x", "0", m * R * R * C)
    c.output("d")
    a = analyze(c)
    r = a.inductors["Lp"]
    assert r.band == "high" and r.state == "short" and r.time_constant == 0 and r.resistance == math.inf
    assert a.b1 == pytest.approx(R * C, rel=1e-12) and a.b2 == pytest.approx(m * R * R * C * C, rel=1e-12)

    def excess(w):
        z = (R + 1j * w * m * R * R * C) / (1 + 1j * w * R * C - w * w * m * R * R * C * C)
        return abs(z) - R / math.sqrt(2)

    exact = brentq(excess, 1 / (R * C), 3 / (R * C)) / (2 * math.pi)
    assert a.f_high_exact == pytest.approx(exact, rel=1e-9)
    assert a.f_high_exact * 2 * math.pi * R * C == pytest.approx(extension, abs=0.01)
    note = next(w for w in a.warnings if w.startswith("The f_H estimate"))
    assert f"{100 * (1 - a.f_high_ratio):.0f} % below the exact corner" in note
    assert "complex poles" in note and "zero" in note


# Whatever the gain test makes of the bypass, it is a short at mid band, so the upper-corner
# estimate equals the one with the bypass pinned low (the bypass shorted by the user; common
# practice, no source), with the same high-band warnings.
@pytest.mark.parametrize("rb", [5e3, 50e3])
@pytest.mark.parametrize("cb", [100e-9, 10e-6])
def test_bipolar_cascode_base_bypass_is_shorted(rb, cb):
    a = analyze(cascode(rb, cb))
    pinned = analyze(cascode(rb, cb), bands={"Cb": "low"})
    assert a.capacitors["Cb"].state == "short"
    assert a.f_high_estimate == pytest.approx(pinned.f_high_estimate, rel=1e-9)
    assert [w for w in a.warnings if "complex" in w] == [w for w in pinned.warnings if "complex" in w]


# The MOS cascode the same way (common practice, no source).
@pytest.mark.parametrize("rb", [10e3, 1e6])
def test_mos_cascode_gate_bypass_is_shorted(rb):
    c = Circuit("photodiode cascode (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rsig", "sig", "g1", 1000)
    c.mosfet("M1", drain="m", gate="g1", source="0", gm=5e-3, ro=40e3, cgs=1e-12, cgd=0.2e-12, cdb=0.3e-12)
    c.mosfet("M2", drain="out", gate="g2", source="m", gm=5e-3, ro=40e3, cgs=1e-12, cgd=0.2e-12, cdb=0.3e-12)
    c.resistor("Rg2", "g2", "0", rb)
    c.capacitor("Cg2", "g2", "0", 1e-6)
    c.resistor("Rd", "out", "0", 10e3)
    c.output("out")
    a = analyze(c)
    assert a.capacitors["Cg2"].state == "short"
    assert a.f_high_estimate == pytest.approx(analyze(c, bands={"Cg2": "low"}).f_high_estimate, rel=1e-9)


def _differential_pair(ct):
    """Invented "strain-gauge amplifier": a bipolar differential pair, output across the collectors."""
    c = Circuit("strain-gauge differential pair (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rs1", "sig", "b1", 1000)
    c.resistor("Rs2", "b2", "0", 1000)
    for k in (1, 2):
        c.bjt(f"Q{k}", collector=f"c{k}", base=f"b{k}", emitter="t", gm=0.04, rpi=2500, ro=100e3, rb=100,
              cpi=10e-12, cmu=1e-12)
        c.resistor(f"Rc{k}", f"c{k}", "0", 5000)
    c.resistor("Rt", "t", "0", 10e3)
    c.capacitor("Ct", "t", "0", ct)
    c.output("c1", "c2")
    return c


# A differential pair whose tail is bypassed: the differential output does not see the tail
# (the test is inconclusive), but at mid band the bypass is a short, so each half is a common
# emitter stage: C_π sees R_π = (R_s + r_b) ‖ r_π = 763.9 Ω and C_μ sees R_π + R_L' + g_m·R_π·R_L'
# with R_L' = R_c ‖ r_o = 4.762 kΩ, 151.0 kΩ (open-circuit time constants of a common emitter:
# Gray, Hurst, Lewis, Meyer, Analysis and Design of Analog Integrated Circuits; from memory).
# The half's b1 = 158.7 ns puts its corner at 1.003 MHz, and the differential output has the
# poles of one half only; Σ τ over both halves counts each pole twice, so the estimate is half
# the exact corner, and the analysis must say so and why.
def test_differential_pair_with_bypassed_tail():
    a = analyze(_differential_pair(1e-6))
    assert a.capacitors["Ct"].band == "neutral" and a.capacitors["Ct"].state == "short"
    r_pi = 1 / (1 / 1100 + 1 / 2500)
    r_load = 1 / (1 / 5000 + 1 / 100e3)
    for k in (1, 2):
        assert a.capacitors[f"Q{k}.cpi"].resistance == pytest.approx(r_pi, rel=1e-9)
        assert a.capacitors[f"Q{k}.cmu"].resistance == pytest.approx(r_pi + r_load + 0.04 * r_pi * r_load, rel=1e-9)
    half_b1 = 10e-12 * r_pi + 1e-12 * (r_pi + r_load + 0.04 * r_pi * r_load)
    assert a.f_high_exact == pytest.approx(1 / (2 * math.pi * half_b1), rel=0.01)
    assert a.f_high_ratio == pytest.approx(0.5, rel=0.01)
    note = next(w for w in a.warnings if w.startswith("The f_H estimate"))
    assert "50 % below the exact corner" in note and "zero" in note
