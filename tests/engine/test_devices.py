"""Device blocks: operating-point derivations, the expanded topology and the op-amp model."""

import math

import numpy as np
import pytest

from bandsketch.engine.network.circuit import Circuit
from bandsketch.engine.network.devices import (BOLTZMANN, ELEMENTARY_CHARGE, bjt_values, expand, mosfet_values,
                            opamp_values, thermal_voltage)
from bandsketch.engine.network.elements import VCCS, Resistor
from bandsketch.engine.core.errors import BadValueError
from bandsketch.engine.solve.mna import build_system
from bandsketch.engine.solve.response import frequency_response, poles
from bandsketch.engine.network.validate import validate

# Source: CODATA 2018 recommended values (E. Tiesinga et al., Rev. Mod. Phys. 93, 025010,
# 2021): k = 1.380649e-23 J/K and e = 1.602176634e-19 C, both exact since the 2019 SI.
K_CODATA = 1.380649e-23
Q_CODATA = 1.602176634e-19


def test_thermal_voltage_at_300_k():
    assert BOLTZMANN == K_CODATA and ELEMENTARY_CHARGE == Q_CODATA
    vt = thermal_voltage(300.0)
    assert vt == pytest.approx(K_CODATA * 300.0 / Q_CODATA, rel=1e-15)
    assert round(vt * 1e3, 2) == 25.85  # 25.852 mV
    # Linear in temperature: V_T(T) = kT/q.
    assert thermal_voltage(350.0) / thermal_voltage(300.0) == pytest.approx(350 / 300, rel=1e-15)


def test_bjt_operating_point():
    # g_m = I_C/V_T, r_π = β/g_m, r_o = V_A/I_C, C_π = g_m/(2π f_T) − C_μ.
    # Sedra & Smith, Microelectronic Circuits, 7th ed., 2015, §7.2 and §10.2 (from memory).
    v = bjt_values("Q1", {"ic": "1m", "beta": "120", "va": "80", "ft": "300M", "cmu": "2p",
                          "temp": "300"})
    vt = K_CODATA * 300 / Q_CODATA
    gm = 1e-3 / vt
    assert v["vt"] == pytest.approx(vt, rel=1e-15)
    assert v["gm"] == pytest.approx(gm, rel=1e-12)
    assert v["rpi"] == pytest.approx(120 / gm, rel=1e-12)
    assert v["ro"] == pytest.approx(80 / 1e-3, rel=1e-12)
    assert v["cpi"] == pytest.approx(gm / (2 * math.pi * 300e6) - 2e-12, rel=1e-12)
    assert v["cmu"] == 2e-12 and v["rb"] == 0.0 and v["ccs"] == 0.0


def test_bjt_operating_point_defaults_and_temperature():
    # Without V_A the output resistance is infinite; the default temperature is 300 K.
    v = bjt_values("Q1", {"ic": "2m", "beta": "100"})
    assert v["ro"] == math.inf and v["cpi"] == 0.0
    assert v["gm"] == pytest.approx(2e-3 / thermal_voltage(300.0), rel=1e-12)
    hot = bjt_values("Q1", {"ic": "2m", "beta": "100", "temp": "400"})
    assert hot["gm"] == pytest.approx(2e-3 / thermal_voltage(400.0), rel=1e-12)


def test_bjt_ft_too_high_is_refused_naming_the_field():
    with pytest.raises(BadValueError) as info:
        bjt_values("Q7", {"ic": "10u", "beta": "100", "ft": "10G", "cmu": "2p"})
    assert info.value.part == "Q7" and info.value.field == "ft"
    assert "Q7" in str(info.value)


def test_bjt_missing_beta_names_it():
    with pytest.raises(BadValueError) as info:
        bjt_values("Q2", {"ic": "1m"})
    assert info.value.field == "beta" and "Q2" in str(info.value)


def test_mosfet_operating_point():
    # g_m = 2 I_D/V_ov, r_o = 1/(λ I_D) = V_A/I_D (square law).
    # Sedra & Smith, Microelectronic Circuits, 7th ed., 2015, §7.2 (from memory).
    v = mosfet_values("M1", {"id": "0.5m", "vov": "0.2", "lam": "0.05"})
    assert v["gm"] == pytest.approx(2 * 0.5e-3 / 0.2, rel=1e-12)
    assert v["ro"] == pytest.approx(1 / (0.05 * 0.5e-3), rel=1e-12)
    v = mosfet_values("M1", {"id": "0.5m", "vov": "0.2", "va": "20"})
    assert v["ro"] == pytest.approx(20 / 0.5e-3, rel=1e-12)
    assert mosfet_values("M1", {"id": "1m", "vov": "0.25"})["ro"] == math.inf
    with pytest.raises(BadValueError) as info:
        mosfet_values("M3", {"id": "1m", "vov": "0.2", "lam": "0.1", "va": "10"})
    assert "M3" in str(info.value)


def test_bjt_topology_as_drawn():
    # r_b base–b′, r_π and C_π b′–emitter, C_μ b′–collector, g_m·v_b′e collector→emitter,
    # r_o collector–emitter, C_cs collector–substrate (issue 2's topology; Sedra & Smith,
    # 7th ed., 2015, fig. 10.5, from memory).
    c = Circuit("topology")
    block = c.bjt("Q1", collector="c", base="b", emitter="e", substrate="sub", gm="40m", rpi="2k5",
                  ro="100k", rb="50", cpi="10p", cmu="1p", ccs="3p")
    els = {el.name: el for el in expand(block)}
    bi = "Q1.bi"
    assert els["Q1.rb"] == Resistor("Q1.rb", "b", bi, 50.0, "Q1")
    assert {els["Q1.rpi"].a, els["Q1.rpi"].b} == {bi, "e"}
    assert {els["Q1.cpi"].a, els["Q1.cpi"].b} == {bi, "e"}
    assert {els["Q1.cmu"].a, els["Q1.cmu"].b} == {bi, "c"}
    assert {els["Q1.ro"].a, els["Q1.ro"].b} == {"c", "e"}
    assert {els["Q1.ccs"].a, els["Q1.ccs"].b} == {"c", "sub"}
    assert els["Q1.gm"] == VCCS("Q1.gm", "c", "e", bi, "e", 0.04, "Q1")
    # Without r_b there is no internal node.
    block = Circuit("x").bjt("Q2", collector="c", base="b", emitter="e", gm="40m", rpi="2k5")
    assert all("Q2.bi" not in el.nodes for el in expand(block))
    assert "Q2.ro" not in {el.name for el in expand(block)}  # r_o absent = infinite


def test_mosfet_topology_and_bulk_default():
    # g_m·v_gs + g_mb·v_bs drain→source; C_gs, C_gd, C_db drain–bulk, C_sb source–bulk.
    # Sedra & Smith, 7th ed., 2015, §10.2 (from memory).
    c = Circuit("mos")
    block = c.mosfet("M1", drain="d", gate="g", source="s", bulk="bk", gm="2m", gmb="0.3m",
                     ro="40k", cgs="1p", cgd="0.2p", cdb="0.3p", csb="0.4p")
    els = {el.name: el for el in expand(block)}
    assert els["M1.gm"] == VCCS("M1.gm", "d", "s", "g", "s", 2e-3, "M1")
    assert els["M1.gmb"] == VCCS("M1.gmb", "d", "s", "bk", "s", 3e-4, "M1")
    assert {els["M1.cdb"].a, els["M1.cdb"].b} == {"d", "bk"}
    assert {els["M1.csb"].a, els["M1.csb"].b} == {"s", "bk"}
    # Bulk defaults to the source: g_mb and C_sb then have nothing to do.
    block = Circuit("mos2").mosfet("M2", drain="d", gate="g", source="s", gm="2m", gmb="0.3m",
                                   cgs="1p", csb="0.4p")
    names = {el.name for el in expand(block)}
    assert block.pins["bulk"] == "s"
    assert "M2.gmb" not in names and "M2.csb" not in names and "M2.cgs" in names


def test_opamp_values():
    v = opamp_values("U1", {"a0": "100k", "fu": "10M"})
    assert v["fp"] == pytest.approx(100.0, rel=1e-12)
    assert v["rout"] == 0.0 and v["rin"] == math.inf


def _non_inverting(a0, fu, r1, r2):
    c = Circuit("non-inverting amplifier")
    c.vsource("Vin", "in", "0")
    c.opamp("U1", plus="in", minus="m", out="out", a0=a0, fu=fu)
    c.resistor("R2", "out", "m", r2)
    c.resistor("R1", "m", "0", r1)
    c.output("out")
    validate(c)
    return build_system(c)


def test_opamp_single_pole_non_inverting_closed_loop():
    # A(s) = A₀/(1 + s A₀/(2π f_u)); closed loop H = A/(1 + βA) with β = R1/(R1 + R2).
    # Common practice (negative feedback with a single-pole op-amp), no source.
    a0, fu, r1, r2 = 2e5, 1e6, 1e3, 9e3
    system = _non_inverting(a0, fu, r1, r2)
    f = np.logspace(0, 8, 17)
    s = 2j * np.pi * f
    a = a0 / (1 + s * a0 / (2 * np.pi * fu))
    beta = r1 / (r1 + r2)
    ours = frequency_response(system, f)
    np.testing.assert_allclose(ours, a / (1 + beta * a), rtol=1e-9, atol=0)
    # The one closed-loop pole: −2π f_u (β + 1/A₀) rad/s.
    p = poles(system)
    assert p.size == 1 and p[0] == pytest.approx(-2 * np.pi * fu * (beta + 1 / a0), rel=1e-9)
    # Bandwidth ≈ f_u/(1 + R2/R1) (gain–bandwidth product, common practice): the -3 dB
    # point sits there to within 1/(βA₀).
    f3 = fu / (1 + r2 / r1)
    h0, h3 = np.abs(frequency_response(system, [1e-3, f3]))
    assert h3 / h0 == pytest.approx(1 / math.sqrt(2), rel=1e-3)
    assert h0 == pytest.approx((1 + r2 / r1) / (1 + 1 / (beta * a0)), rel=1e-9)


def test_opamp_output_and_input_resistance():
    # Unity-gain follower with r_in = 1 MΩ, r_out = 100 Ω into 1 kΩ, at DC (A(0) = A₀):
    # solve the two nodal equations by hand. Common practice, no source.
    a0 = 1e4
    c = Circuit("follower")
    c.vsource("Vin", "in", "0")
    c.resistor("Rs", "in", "p", "10k")
    c.opamp("U1", plus="p", minus="out", out="out", a0=a0, fu="1M", rout="100", rin="1M")
    c.resistor("RL", "out", "0", "1k")
    c.output("out")
    validate(c)
    rs, rin, ro, rl = 1e4, 1e6, 100.0, 1e3
    # p:   (vp − 1)/rs + (vp − vo)/rin = 0
    # out: (vo − vp)/rin + (vo − a0 (vp − vo))/ro + vo/rl = 0
    m = np.array([[1 / rs + 1 / rin, -1 / rin],
                  [-1 / rin - a0 / ro, 1 / rin + (1 + a0) / ro + 1 / rl]])
    vp, vo = np.linalg.solve(m, [1 / rs, 0])
    assert frequency_response(build_system(c), [1e-6])[0] == pytest.approx(vo, rel=1e-9)
