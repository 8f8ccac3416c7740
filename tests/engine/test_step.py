"""Step and pulse responses against closed forms, scipy.signal, and each other.

Every circuit here is an invented test scenario.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
import scipy.signal
from hypothesis import given
from hypothesis import strategies as st

from bandstages import capacitive_node
from bandsketch.engine import Circuit, CircuitError, analyze, load_design
from bandsketch.engine.design.netlist import design_to_circuit
from bandsketch.engine.solve.step import StepResponse, pair_step

SAMPLES = sorted((Path(__file__).resolve().parents[2] / "sample_designs").glob("*.json"))
AGREE = 1e-6
"""The modal and the integrated responses agree to this fraction of the final value (issue 17)."""


def rc(r=1e3, c=1e-9):
    """A source driving R into a grounded C (an invented line-filter stage)."""
    circuit = Circuit("RC low-pass (invented)")
    circuit.vsource("V", "in", "0")
    circuit.resistor("R", "in", "o", r)
    circuit.capacitor("C", "o", "0", c)
    circuit.output("o")
    return circuit


def rlc(zeta, wn=2 * math.pi * 1e6, c=1e-9):
    """Series R-L into a grounded C: H = 1/(1 + sRC + s²LC), ω_n = 1/√(LC), ζ = (R/2)√(C/L)."""
    inductance = 1 / (wn * wn * c)
    circuit = Circuit("RLC pair (invented)")
    circuit.vsource("V", "in", "0")
    circuit.resistor("R", "in", "m", 2 * zeta * math.sqrt(inductance / c))
    circuit.inductor("L", "m", "o", inductance)
    circuit.capacitor("C", "o", "0", c)
    circuit.output("o")
    return circuit


def both(circuit, **kw):
    a = analyze(circuit)
    return a, a.step_response(method="modal", **kw), a.step_response(method="integrated", **kw)


def test_first_order_rc_matches_closed_form():
    # y = 1 − e^(−t/τ); t_r(10–90 %) = ln 9·τ = 2.197 τ, t_50 = ln 2·τ, t_s(1 %) = ln 100·τ
    # (any circuits textbook, from memory).
    tau = 1e-6
    a, modal, integrated = both(rc())
    for r in (modal, integrated):
        assert isinstance(r, StepResponse)
        assert np.allclose(r.y[1:], 1 - np.exp(-r.t[1:] / tau), rtol=0, atol=1e-9)
        assert r.final_value == pytest.approx(1.0, rel=1e-12)
        assert r.rise_time == pytest.approx(2.197 * tau, rel=1e-3)
        assert r.rise_time == pytest.approx(math.log(9) * tau, rel=1e-5)
        assert r.delay == pytest.approx(math.log(2) * tau, rel=1e-5)
        assert r.settling_time == pytest.approx(math.log(100) * tau, rel=1e-5)
        assert r.overshoot == 0
        # A single pole: b1 = τ, so the estimate is exact.
        assert r.rise_time_estimate == pytest.approx(r.rise_time, rel=1e-5)
    assert modal.method == "modal" and integrated.method == "integrated"


@pytest.mark.parametrize("zeta", [0.2, 0.5, 0.8])
def test_underdamped_pair_overshoot_is_the_closed_form(zeta):
    # Overshoot exp(−πζ/√(1−ζ²)), peak at π/ω_d (any control or circuits textbook, from memory).
    wn = 2 * math.pi * 1e6
    a, modal, integrated = both(rlc(zeta, wn))
    expected = math.exp(-math.pi * zeta / math.sqrt(1 - zeta * zeta))
    for r in (modal, integrated):
        assert r.overshoot == pytest.approx(expected, abs=2e-5)
        assert r.peak_time == pytest.approx(math.pi / (wn * math.sqrt(1 - zeta * zeta)), abs=r.t[1])
        assert np.allclose(r.y[1:], pair_step(a.b1, a.b2, r.t[1:]), atol=1e-8)
    assert modal.damping == pytest.approx(zeta, rel=1e-9)
    assert modal.overshoot_estimate == pytest.approx(expected, rel=1e-12)
    # The network is exactly the pair, so the second-order estimate is the exact rise time.
    assert modal.rise_time_estimate_2nd == pytest.approx(modal.rise_time, rel=1e-4)


def test_critically_damped_pair_matches_closed_form():
    # ζ = 1: y = 1 − e^(−ω_n t)(1 + ω_n t), no overshoot (from memory).
    wn = 2 * math.pi * 1e6
    a, modal, integrated = both(rlc(1.0, wn))
    for r in (modal, integrated):
        t = r.t[1:]
        assert np.allclose(r.y[1:], 1 - np.exp(-wn * t) * (1 + wn * t), atol=1e-7)
        assert r.overshoot < 1e-9
    assert np.abs(modal.y - integrated.y).max() < AGREE


def test_against_scipy_signal_step():
    # Outside reference: scipy.signal.step of 1/(LC s² + RC s + 1) (SciPy, scipy.signal.step).
    zeta, wn = 0.3, 2 * math.pi * 1e6
    a, modal, _ = both(rlc(zeta, wn))
    t, y = scipy.signal.step(([1.0], [1 / wn ** 2, 2 * zeta / wn, 1.0]), T=modal.t)
    assert np.allclose(modal.y[1:], y[1:], atol=1e-9)


def test_a_sample_against_scipy_signal_step_from_its_poles_and_zeros():
    # The photodiode front end is d.c.-coupled: its zeros, poles and H(0) give the
    # transfer function scipy.signal builds its own step response from.
    a = analyze(design_to_circuit(load_design(next(p for p in SAMPLES if "photodiode" in p.stem))))
    r = a.step_response()
    z, p = a.zeros, a.poles
    h0 = r.final_value
    k = h0 * np.prod(-p).real / np.prod(-z).real if z.size else h0 * np.prod(-p).real
    _, y = scipy.signal.step(scipy.signal.ZerosPolesGain(z, p, k), T=r.t)
    assert np.abs(y[1:] - r.y[1:]).max() < 1e-6 * abs(h0)


def doublet(r1, r2, c):
    """R1 in series, then R2 + C to ground: H = (1 + s·R2·C)/(1 + s·(R1+R2)·C), a pole–zero pair."""
    circuit = Circuit("lag network with a doublet (invented)")
    circuit.vsource("V", "in", "0")
    circuit.resistor("R1", "in", "o", r1)
    circuit.resistor("R2", "o", "m", r2)
    circuit.capacitor("C", "m", "0", c)
    circuit.output("o")
    return circuit


def test_doublet_slow_tail_matches_closed_form():
    # y = 1 − R1/(R1+R2)·e^(−t/((R1+R2)C)) (partial fractions of H(s)/s, from memory): a jump
    # to R2/(R1+R2), then a slow tail; it settles to 1 % at τ·ln(100·R1/(R1+R2)).
    r1, r2, c = 1e3, 10e3, 1e-7
    tau, share = (r1 + r2) * c, r1 / (r1 + r2)
    a, modal, integrated = both(doublet(r1, r2, c), t_stop=10 * tau)
    for r in (modal, integrated):
        t = r.t[1:]
        assert np.allclose(r.y[1:], 1 - share * np.exp(-t / tau), atol=1e-9)
        assert r.settling_time == pytest.approx(tau * math.log(100 * share), rel=1e-5)
    assert any("slow tail" in w for w in modal.warnings)


def test_a_step_that_levels_off_short_of_the_mid_band_gain_says_where_and_why():
    # A coupling capacitor into a node that also holds a capacitance to ground: between the
    # bands the two share the charge, so the edge levels off near C_in/(C_in + C_g) of the
    # mid-band gain R_G/(R_G + R_sig) (C_in shorted, C_g open), here 2 % short of it. No
    # settling time can be read, and the step says why instead of leaving a bare dash. The
    # level it states is held to scipy.signal's step of the same H(s), written by hand:
    # H = s·C_in·R_G / (R_sig·C_in·R_G·C_g·s² + (C_in·R_G + R_sig·C_in + R_G·C_g)·s + 1).
    rs, ci, rg, cg = 1e3, 100e-9, 1e6, 2e-9
    step = analyze(capacitive_node(rs, ci, rg, cg)).step_response()
    assert step.settling_time is None
    den = [rs * ci * rg * cg, ci * rg + rs * ci + rg * cg, 1.0]
    _, y = scipy.signal.step(([ci * rg, 0.0], den), T=step.t)
    level = y[-1] / (rg / (rg + rs))
    assert level == pytest.approx(ci / (ci + cg), abs=2e-3)
    note = next(w for w in step.warnings if w.startswith("No settling time"))
    assert f"levels off at {100 * level:.1f} %" in note and "dB below |A_m|" in note


def test_rc_high_pass_pulse_sag_matches_closed_form():
    # A coupling capacitor into R: the top of a pulse of width T falls as e^(−t/RC), so the
    # sag is 1 − e^(−T/RC) ≈ T/RC = ω_L·T (from memory).
    circuit = Circuit("coupling network (invented)")
    circuit.vsource("V", "in", "0")
    circuit.capacitor("Cc", "in", "o", 1e-6)
    circuit.resistor("R", "o", "0", 10e3)
    circuit.resistor("Rf", "o", "f", 100.0)
    circuit.capacitor("Cf", "f", "0", 1e-11)
    circuit.output("f")
    a = analyze(circuit)
    tau, width = 1e-2, 1e-4
    for method in ("modal", "integrated"):
        p = a.pulse_response(width, method=method)
        assert p.sag == pytest.approx(1 - math.exp(-width / tau), rel=1e-3)
        assert p.sag_estimate == pytest.approx(width / tau, rel=1e-3)
        assert p.t[np.searchsorted(p.t, width)] == pytest.approx(width, rel=1e-12)
        assert p.figures[0].exact == p.sag


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.stem)
def test_modal_and_integrated_agree_on_every_sample(path):
    a = analyze(design_to_circuit(load_design(path)))
    modal, integrated = a.step_response(method="modal"), a.step_response(method="integrated")
    assert np.abs(modal.y - integrated.y).max() < AGREE * abs(modal.final_value)
    assert modal.rise_time is not None and modal.rise_time > 0
    assert modal.rise_time_estimate is not None
    names = [f.name for f in modal.figures]
    assert names[0].startswith("rise") and "overshoot" in names


def cs_stage(rs, cgs, cgd, gm, rd, cl, coupling=None):
    """An invented common-source-like stage: a transconductance with its input and feedback
    capacitances and a load; ``coupling`` = (C, R_bias) puts a coupling capacitor first."""
    c = Circuit("common-source stage (invented)")
    c.vsource("V", "sig", "0")
    if coupling:
        c.capacitor("Cc", "sig", "a", coupling[0])
        c.resistor("Rb", "a", "0", coupling[1])
    c.resistor("Rs", "a" if coupling else "sig", "g", rs)
    if cgs:
        c.capacitor("Cgs", "g", "0", cgs)
    c.capacitor("Cgd", "g", "d", cgd)
    c.vccs("Gm", "d", "0", "g", "0", gm)
    c.resistor("Rd", "d", "0", rd)
    c.capacitor("Cl", "d", "0", cl)
    c.output("d")
    return c


@st.composite
def stages(draw):
    """Random :func:`cs_stage` values, bounded to the ranges of real small-signal stages."""
    val = lambda lo, hi: draw(st.floats(lo, hi))  # noqa: E731
    coupling = (val(1e-7, 1e-5), val(1e4, 1e6)) if draw(st.booleans()) else None
    return cs_stage(val(50, 5e3), val(1e-13, 1e-11), val(1e-14, 1e-12), val(1e-4, 1e-2), val(1e3, 1e5),
                    val(1e-13, 1e-11), coupling)


@given(stages())
def test_modal_and_integrated_agree_on_random_stages(c):
    a = analyze(c)
    modal, integrated = a.step_response(method="modal"), a.step_response(method="integrated")
    assert np.abs(modal.y - integrated.y).max() < AGREE * abs(modal.final_value)


def test_right_half_plane_zero_starts_the_wrong_way():
    # A large gate–drain capacitance feeds the edge forward before the transconductance
    # acts: the zero g_m/C_gd is in the right half-plane (from memory).
    c = cs_stage(rs=50, cgs=0, cgd=5e-12, gm=1e-3, rd=10e3, cl=1e-13)
    r = analyze(c).step_response()
    assert r.undershoot > 0.01
    assert any("wrong way" in w and "right-half-plane zero" in w for w in r.warnings)


def test_light_damping_warning_says_the_overshoot():
    r = analyze(rlc(0.2)).step_response()
    expected = round(100 * math.exp(-math.pi * 0.2 / math.sqrt(1 - 0.04)))
    assert any(f"about {expected} % overshoot" in w for w in r.warnings)
    assert not analyze(rlc(0.8)).step_response().warnings


def test_results_are_immutable_and_arguments_checked():
    a = analyze(rc())
    r = a.step_response(t_stop=5e-6, points=101)
    assert r.t[-1] == pytest.approx(5e-6) and r.t.size == 101
    with pytest.raises(AttributeError):
        r.rise_time = 0.0
    with pytest.raises(ValueError):
        r.y[3] = 1.0
    for bad in (dict(t_stop=-1.0), dict(points=2), dict(method="euler")):
        with pytest.raises(ValueError):
            a.step_response(**bad)
    with pytest.raises(ValueError):
        a.pulse_response(0.0)


def test_unstable_network_is_an_error_not_a_waveform():
    c = Circuit("positive feedback (invented)")
    c.vsource("V", "sig", "0")
    c.resistor("Rs", "sig", "a", 1e3)
    c.capacitor("Ca", "a", "0", 1e-9)
    c.vccs("Gp", "0", "a", "a", "0", 2e-3)
    c.output("a")
    with pytest.raises(CircuitError, match="unstable"):
        analyze(c).step_response()
