"""analyze() as users call it: the scripting API, exactness against brute force, the result's forms.

All scenarios are invented.
"""

import json
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from bandstages import capacitive_node, common_emitter
from bandsketch.engine import Circuit, CircuitError, analyze
from bandsketch.engine.solve.mna import OPEN, build_system
from bandsketch.engine.present.plotdata import bode_data, write_response_csv
from bandsketch.engine.present.summary import format_table
from bandsketch.engine.solve.analysisjson import analysis_to_dict


# The scripting API example of issue 2, as written there (common practice, no source).
def test_scripting_api_example_runs_as_written():
    from bandsketch.engine import Circuit, analyze, CircuitError  # noqa: F401  (the example's own import)
    c = Circuit("hydrophone preamp")            # an invented scenario
    c.vsource("Vsig", "sig", "0")               # AC 1 V signal source; "0" and "gnd" are ground
    c.resistor("Rsig", "sig", "x", "600")       # values: numbers or strings ("4k7", "2.2n", 1e-9)
    c.capacitor("Cin", "x", "b", "4u7")
    c.resistor("Rbias", "b", "0", "8k2")
    c.bjt("Q1", collector="c", base="b", emitter="e",
          gm="80m", rpi="2k5", ro="50k", rb="100", cpi="20p", cmu="2p")
    c.resistor("Rc", "c", "0", "2k2")
    c.resistor("Re", "e", "0", "470")
    c.capacitor("Ce", "e", "0", "100u")
    c.output("c")                               # or c.output("outp", "outn")
    a = analyze(c)                              # bands={"Ce": "low"} pins bands (next issue)
    h = a.response([1e3, 1e6])                  # complex V(c)/V(sig) at those frequencies (Hz)
    a.poles, a.zeros                            # complex ndarrays, rad/s
    assert h.shape == (2,) and np.iscomplexobj(h)
    assert np.iscomplexobj(a.poles) and np.iscomplexobj(a.zeros)
    assert set(a.capacitors) == {"Cin", "Ce", "Q1.cpi", "Q1.cmu"}
    assert a.f_low_exact < a.f_high_exact and a.warnings == []


def _reference_resistance(c, a, name):
    """Brute force: rebuild the network with every other element at its mid-band state (true
    0-V shorts), leave ``name`` out, and solve once with a 1 A test current at its terminals."""
    states = {r.name: r.state for r in a.elements.values() if r.name != name}
    states[name] = OPEN
    sysm = build_system(c, states)
    el = c.elements[name]
    e = sysm.incidence(el.a, el.b)
    return float(e @ np.linalg.solve(sysm.G.toarray(), e))


@st.composite
def networks(draw):
    n = draw(st.integers(3, 6))
    nodes = [f"n{i}" for i in range(1, n + 1)]
    values = st.floats(100, 1e5)
    c = Circuit("random network (invented)")
    c.vsource("Vin", "in", "0")
    c.resistor("Rin", "in", "n1", draw(values))
    for i, node in enumerate(nodes, start=1):  # every node has a d.c. path and two connections
        c.resistor(f"Rg{i}", node, "0", draw(values))
        if i > 1:
            c.resistor(f"Rt{i}", node, nodes[draw(st.integers(0, i - 2))], draw(values))
    pairs = st.tuples(st.sampled_from(nodes + ["0"]), st.sampled_from(nodes + ["0"])).filter(lambda p: p[0] != p[1])
    # No loops of capacitors: in the low band a loop has no short-circuit constants (see
    # test_parallel_low_band_capacitors_are_named).
    joined = {}

    def root(x):
        while joined.get(x, x) != x:
            x = joined[x]
        return x

    for k, (a, b) in enumerate(draw(st.lists(pairs, min_size=1, max_size=5))):
        if root(a) != root(b):
            joined[root(a)] = root(b)
            c.capacitor(f"C{k}", a, b, draw(st.floats(1e-12, 1e-5)))
    if draw(st.booleans()):  # a branch that only loads the ideal source: its capacitor is neutral
        c.resistor("Rmon", "in", "mon", draw(values))
        c.capacitor("Cmon", "mon", "0", draw(st.floats(1e-12, 1e-5)))
    for k in range(draw(st.integers(0, 2))):
        p, q, cp = (draw(st.sampled_from(nodes)) for _ in range(3))
        if p != q:  # weak enough never to cancel the conductances (a stable, solvable network)
            c.vccs(f"G{k}", p, q, cp, "0", draw(st.sampled_from([-1, 1])) * draw(st.floats(1e-6, 1e-3)))
    c.output(nodes[-1])
    return c


# Exactness: every resistance the one-factorisation analysis reports equals a brute-force
# solve of the rebuilt network with true shorts (Sherman–Morrison and the port-matrix
# identities are exact; common practice, no source).
@settings(max_examples=40, deadline=None)
@given(networks())
def test_resistances_match_brute_force(c):
    a = analyze(c)
    for r in a.capacitors.values():
        if r.band == "neutral":
            continue
        ref = _reference_resistance(c, a, r.name)
        assert abs(r.resistance - ref) <= 1e-9 * max(abs(ref), 1e-300), r.name


# Capacitors in parallel, both coupling the signal: each alone looks neutral, so they are
# tested and timed together as one port of ΣC (common practice, no source).
def test_parallel_low_band_capacitors_are_one_port():
    c = common_emitter(coupling=True)
    c.capacitor("Cin2", "b", "x", 4.7e-6)
    a = analyze(c)
    one, two = a.capacitors["Cin"], a.capacitors["Cin2"]
    assert one.band == two.band == "low" and one.resistance == two.resistance
    assert one.time_constant == pytest.approx(9.4e-6 * one.resistance, rel=1e-12)
    alone = analyze(common_emitter(coupling=True)).capacitors["Cin"]
    assert one.resistance == pytest.approx(alone.resistance, rel=1e-12)
    assert sum(r.share for r in a.capacitors.values() if r.band == "low") == pytest.approx(1, rel=1e-12)


# A ring of low-band capacitors (here made so by pins) has no short-circuit constants:
# shorting two of them shorts the third. The error names the ring (common practice, no source).
def test_ring_of_low_band_capacitors_is_named():
    c = common_emitter(coupling=True)
    c.capacitor("Cx", "e", "y", 1e-6)
    c.resistor("Ry", "y", "0", 1000)
    c.capacitor("Cy", "y", "0", 1e-6)
    with pytest.raises(CircuitError, match="loop") as err:
        analyze(c, bands={"Cx": "low", "Cy": "low"})
    assert set(err.value.parts) == {"Ce", "Cx", "Cy"}


def test_result_is_immutable():
    a = analyze(common_emitter(coupling=True))
    with pytest.raises(AttributeError):
        a.b1 = 0.0
    with pytest.raises(TypeError):
        a.capacitors["Cx"] = None
    a.warnings.append("mine")
    assert "mine" not in a.warnings
    assert not a.sweep_response.flags.writeable


def test_port_picture_of_a_high_band_capacitor():
    a = analyze(common_emitter(coupling=True))
    p = a.port_picture("Q1.cmu")
    assert p.nodes == ("Q1.bi", "c") and p.zeroed == ("Vsig",)
    assert set(p.shorted) == {"Cin", "Ce", "Cout"}
    assert set(p.opened) == {"Q1.cpi", "Q1.ccs", "CL"}


def test_dict_is_json_and_table_reads(tmp_path):
    a = analyze(common_emitter(coupling=True))
    d = analysis_to_dict(a)
    text = json.dumps(d, allow_nan=False, ensure_ascii=False)
    back = json.loads(text)
    assert back["units"]["b1"] == "s" and back["units"]["resistance"] == "Ω"
    assert back["f_high_exact"] == pytest.approx(a.f_high_exact)
    assert [e["name"] for e in back["capacitors"]] == list(a.capacitors)
    table = format_table(a)
    for piece in ("Cin", "Q1.cmu", "Mid-band gain", "Upper corner", "Lower corner", "error", "dB"):
        assert piece in table
    path = tmp_path / "sweep.csv"
    data = bode_data(a)
    write_response_csv(data, path)
    rows = path.read_text(encoding="utf-8").splitlines()
    assert rows[0].startswith("frequency_hz") and len(rows) == len(data.exact.freq_hz) + 1
    assert back["format"] == "bandsketch-analysis" and back["version"] == 1


def test_table_lists_exact_roots_with_the_right_half_plane_zero_marked():
    # The common-emitter stage's zero at +g_m/C_μ lies in the right half-plane (Gray, Hurst,
    # Lewis, Meyer, Analysis and Design of Analog Integrated Circuits; from memory).
    a = analyze(common_emitter(coupling=True))
    table = format_table(a)
    rhp = [z for z in a.zeros if z.real > 0]
    assert rhp and "(right half-plane)" in table.split("Exact zeros", 1)[1]
    assert "Exact poles" in table and "(at the origin)" in table


# The exact corner is where |H| = |A_m|/√2 (the definition of the −3 dB corner).
def test_exact_corners_are_3db_points():
    a = analyze(common_emitter(coupling=True))
    h = np.abs(a.response([a.f_low_exact, a.f_high_exact]))
    assert np.allclose(h, abs(a.midband_gain) / math.sqrt(2), rtol=1e-9)


# Every element whose gain test is inconclusive is in the state its impedance gives: shorted
# when 1/(ω_m·C) (or ω_m·L) is below the resistance it sees with every other element at its
# state, open when above. The resistance is found again by brute force (a rebuilt network, a
# 1 A test current); the rule itself is the method notes' (common practice, no source).
@settings(max_examples=40, deadline=None)
@given(networks())
def test_inconclusive_elements_take_the_state_their_impedance_gives(c):
    a = analyze(c)
    for r in a.elements.values():
        if r.band != "neutral" or "ideal" in r.reason:
            continue
        ref = _reference_resistance(c, a, r.name)
        assert r.midband_resistance == pytest.approx(ref, rel=1e-9, abs=1e-9)
        if abs(r.midband_reactance - ref) > 1e-6 * ref:
            assert r.state == ("short" if r.midband_reactance < ref else "open"), r.name


def test_a_mid_band_that_never_reaches_a_m_is_said_with_its_shortfall():
    # A coupling capacitor into a node with a capacitance to ground: H is a band-pass
    # k·s/(a2·s² + a1·s + 1), whose top is k/a1 (common practice, no source), short of the
    # resistive A_m = R_G/(R_G + R_sig) by the charge the two capacitors share.
    rs, ci, rg, cg = 1e3, 100e-9, 1e6, 2e-9
    a = analyze(capacitive_node(rs, ci, rg, cg))
    top = ci * rg / (ci * rg + rs * ci + rg * cg)
    short = 20 * math.log10((rg / (rg + rs)) / top)
    assert a.midband_gain == pytest.approx(rg / (rg + rs))
    assert any(w.startswith(f"The exact gain tops out {short:.2f} dB below the mid-band gain") for w in a.warnings)
