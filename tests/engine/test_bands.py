"""The band test: which capacitors and inductors set the lower corner, which the upper, which none.

All stages are invented scenarios (see bandstages.py).
"""

import pytest

from bandstages import cascode, common_emitter, common_source, follower
from bandsketch.engine import Circuit, CircuitError, analyze


# Expected bands follow the usual reading of these stages: coupling and bypass capacitors
# set the lower corner, device and load capacitors the upper one (Gray, Hurst, Lewis, Meyer,
# Analysis and Design of Analog Integrated Circuits; from memory).
def test_common_emitter_bands():
    a = analyze(common_emitter(coupling=True))
    bands = {n: r.band for n, r in a.capacitors.items()}
    assert bands == {"Cin": "low", "Ce": "low", "Cout": "low",
                     "Q1.cpi": "high", "Q1.cmu": "high", "Q1.ccs": "high", "CL": "high"}
    assert not any(r.pinned or r.acts_in_band for r in a.capacitors.values())
    assert a.midband_gain < 0 and a.dominant_high == "Q1.cmu" and a.dominant_low == "Ce"


# As above, for the MOS stage (Razavi, Design of Analog CMOS Integrated Circuits; from memory).
def test_common_source_bands():
    a = analyze(common_source(coupling=True))
    bands = {n: r.band for n, r in a.capacitors.items()}
    assert bands == {"Cin": "low", "Cs": "low", "M1.cgs": "high", "M1.cgd": "high", "M1.cdb": "high",
                     "CL": "high"}


# The test's evidence is kept: opening a coupling capacitor drops the gain to nothing
# (common practice, no source).
def test_reason_keeps_the_two_gains():
    a = analyze(common_emitter(coupling=True))
    cin = a.capacitors["Cin"]
    assert cin.gain_opened == 0 and cin.gain_shorted == pytest.approx(abs(a.midband_gain), rel=1e-3)
    assert cin.reason.startswith("opening Cin drops the gain from 40.2 dB to −∞ dB")


# A pin always wins and is shown as a pin (common practice, no source).
def test_pin_overrides_the_test():
    a = analyze(common_emitter(coupling=True), bands={"Ce": "high"})
    ce = a.capacitors["Ce"]
    assert ce.band == "high" and ce.pinned and ce.reason.startswith("pinned to the high band")
    assert a.capacitors["Cin"].band == "low" and not a.capacitors["Cin"].pinned


def test_pin_of_an_unknown_part_names_it():
    with pytest.raises(CircuitError, match="Cx") as err:
        analyze(common_emitter(coupling=True), bands={"Cx": "low"})
    assert err.value.parts == ("Cx",)


# A capacitor on a branch that only loads the ideal source, and one across that source,
# cannot change the gain: both are neutral (common practice, no source). The monitor's
# capacitor is still a short at mid band (16.8 Ω beside 5 kΩ), so that is its state.
def test_neutral_capacitors():
    c = common_emitter(coupling=True)
    c.resistor("Rmon", "sig", "mon", 10e3)
    c.resistor("Rmon2", "mon", "0", 10e3)
    c.capacitor("Cmon", "mon", "0", 1e-6)
    c.capacitor("Csrc", "sig", "0", 1e-9)
    a = analyze(c)
    for name in ("Cmon", "Csrc"):
        r = a.capacitors[name]
        assert r.band == "neutral" and r.resistance is None and r.share == 0
        assert a.port_picture(name) is None
    assert "ideal voltage source" in a.capacitors["Csrc"].reason
    cmon = a.capacitors["Cmon"]
    assert "neutral; so its impedance decides: shorted at mid band" in cmon.reason and cmon.state == "short"


# A follower driving a capacitive load has an inductive output impedance and a complex
# pole pair, so it peaks (Gray, Hurst, Lewis, Meyer, as above; from memory).
def test_follower_with_load_capacitance_warns_of_peaking():
    a = analyze(follower(rs=600, cl=20e-12))
    assert a.b1 ** 2 < 4 * a.b2
    assert any("complex poles" in w for w in a.warnings)
    assert any("peaks" in w for w in a.warnings)
    quiet = analyze(follower(rs=600))
    assert not any("peaks" in w or "complex" in w for w in quiet.warnings)


# A bypassed cascode base: opening the bypass only lets a little signal current into the
# lower device's output resistance, a pole–zero pair without a corner (common practice,
# no source). The stage is d.c.-coupled, so there is no lower corner at all, and the
# estimate, which counts the pair for the fraction of 3 dB it costs, finds none either.
def test_bypassed_cascode_base_is_a_pole_zero_pair():
    c = cascode(50e3, 10e-6)  # the upper base biased from two 100 kΩ resistors, in parallel
    a = analyze(c)
    assert a.capacitors["Cb"].band == "low"
    assert a.f_low_exact is None and a.f_low_ratio is None and a.f_low_estimate is None
    assert a.capacitors["Cb"].pole_zero_pair and a.f_low_estimate_sum > 0
    assert any(w.startswith("Opening Cb costs only") and "pole–zero pair" in w for w in a.warnings)


# The right-half-plane zero of a common-source stage sits at +g_m/C_gd (Razavi, as above;
# from memory); here it is only a few times f_H away.
def test_right_half_plane_zero_warning():
    c = Circuit("antenna buffer (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rsig", "sig", "g", 50)
    c.mosfet("M1", drain="d", gate="g", source="0", gm=1e-3, cgs=1e-12, cgd=2e-12)
    c.resistor("Rd", "d", "0", 1000)
    c.output("d")
    a = analyze(c)
    assert any("right-half-plane zero" in w for w in a.warnings)
    assert any(abs(z - 1e-3 / 2e-12) < 1e-6 * 5e8 for z in a.zeros)


# Two capacitors in series with nothing else at the node between them leave that node
# without a d.c. path: an error naming the node (common practice, no source).
def test_series_capacitors_name_the_node():
    c = common_emitter(coupling=True)
    c.capacitor("Cx1", "out", "mid", 1e-9)
    c.capacitor("Cx2", "mid", "0", 1e-9)
    with pytest.raises(CircuitError, match="mid") as err:
        analyze(c)
    assert "mid" in err.value.nodes and {"Cx1", "Cx2"} <= set(err.value.parts)


# A tuned stage at resonance: shorting the tank capacitor kills the gain and opening it
# leaves R‖jωL, so both states lower the gain; the same for the inductor. Both act inside
# the band, and the resistive mid-band gain is g_m·R (common practice, no source).
def test_tank_elements_act_inside_the_band():
    c = Circuit("IF strip tank (invented)")
    c.vsource("Vsig", "sig", "0")
    c.vccs("Gm", "0", "t", "sig", "0", 10e-3)
    c.resistor("Rt", "t", "0", 100)
    c.inductor("Lt", "t", "0", 1e-6)
    c.capacitor("Ct", "t", "0", 1e-9)
    c.output("t")
    a = analyze(c)
    assert a.capacitors["Ct"].acts_in_band and a.inductors["Lt"].acts_in_band
    assert a.midband_gain == pytest.approx(1.0, rel=1e-12)
    assert sum("acts inside the band" in w for w in a.warnings) == 2
    assert a.f_low_exact < a.midband_frequency < a.f_high_exact


# A bypass whose opening raises the gain (the cascode base bias is tapped from the input
# base, so with the bypass open some signal reaches the upper base in phase). It is still
# a short at mid band: low band, a pole–zero pair, never a high-band capacitor (common
# practice, no source).
def test_a_state_that_raises_the_gain_does_not_decide():
    c = Circuit("line receiver cascode (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rsig", "sig", "x", 600)
    c.capacitor("Cin", "x", "b1", 1e-6)
    c.resistor("RB1", "vb2", "0", 22e3)
    c.resistor("RB2", "vb2", "b1", 15e3)
    c.resistor("RB3", "b1", "0", 22e3)
    c.capacitor("CB", "vb2", "0", 10e-6)
    c.bjt("Q1", collector="m", base="b1", emitter="e1", gm=0.0387, rpi=3100, ro=60e3, rb=80, cpi=19e-12, cmu=1.5e-12)
    c.bjt("Q2", collector="out", base="vb2", emitter="m", gm=0.0387, rpi=3100, ro=60e3, rb=80, cpi=19e-12,
          cmu=1.5e-12)
    c.resistor("RE", "e1", "0", 220)
    c.resistor("RC", "out", "0", 3300)
    c.output("out")
    a = analyze(c)
    cb = a.capacitors["CB"]
    assert cb.gain_opened > cb.gain_shorted and cb.band == "low" and cb.state == "short"
    assert "raises the gain" in cb.reason and "but it is shorted at mid band" in cb.reason
    assert any(w.startswith("Opening CB raises the gain") for w in a.warnings)
    assert a.f_high_exact / 10 < a.f_high_estimate < a.f_high_exact


# The first mid-band guess follows the rule every round applies (√(f_L·f_H) from the sweep's
# brackets), so a stage whose bands hold at once is tested once, and the answer is the one
# a confirming round would give (common practice, no source).
def test_a_round_that_would_repeat_itself_is_not_run(monkeypatch):
    import bandsketch.engine.solve.analysis as analysis

    calls = []
    real = analysis.band_tests

    def counted(system, reactive, f_test, fixed):
        calls.append(f_test)
        return real(system, reactive, f_test, fixed)

    monkeypatch.setattr(analysis, "band_tests", counted)
    a = analyze(common_emitter(coupling=True))
    assert calls == [a.midband_frequency]
    confirmed = real(a._system, [el for el in common_emitter(coupling=True).elements.values()
                                 if el.name in a.capacitors], a.midband_frequency, {})
    assert {n: t.band for n, t in confirmed.items()} == {n: r.band for n, r in a.capacitors.items()}
