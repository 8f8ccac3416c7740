"""The DC operating point: closed-form bias of textbook stages, exact small-signal derivatives,
regions named in plain words, and every random bias network either solved or refused by name."""

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from bandsketch.engine import BiasError, Circuit, CircuitError, analyze, operating_point
from bandsketch.engine.network.largesignal import bjt_currents, mos_current
from bandsketch.engine.solve import dcop

# V_T = kT/q at 300 K with the SI-exact k and q (CODATA 2018).
VT = 1.380649e-23 * 300.0 / 1.602176634e-19


def _ce(r1="47k", r2="10k", rc="4k7", re="1k", vcc=12.0, beta=100.0, va=None, isat=1e-14):
    c = Circuit("divider-biased CE")
    c.rail("VCC", "vcc", vcc)
    c.vsource("Vs", "in", "0")
    c.resistor("R1", "vcc", "b", r1)
    c.resistor("R2", "b", "0", r2)
    c.resistor("RC", "vcc", "c", rc)
    c.resistor("RE", "e", "0", re)
    c.capacitor("Cin", "in", "b", "10u")
    c.capacitor("CE", "e", "0", "100u")
    c.bjt("Q1", collector="c", base="b", emitter="e", isat=isat, beta=beta, va=va, ft=300e6, cmu=2e-12)
    c.output("c")
    return c


def _kcl_residuals(c, point):
    """Each node's current sum from the solved voltages, computed here from the element laws
    (resistors, sources, the transistor models), not by the solver's own assembly."""
    v = point.node_voltages
    sums = {n: 0.0 for n in v}
    for el in c.dc_elements():
        kind = type(el).__name__
        if kind == "Resistor":
            i = (v[el.a] - v[el.b]) / el.value
            sums[el.a] += i
            sums[el.b] -= i
        elif kind in ("VSource", "Rail"):
            i = point.branch_currents[el.name]
            sums[el.p] += i
            sums[el.n] -= i
        elif kind == "ISource":
            sums[el.into] -= el.dc
            sums[el.out_of] += el.dc
    for name, block in c.large_blocks.items():
        p, m = block.pins, block.model.params
        if block.kind == "bjt":
            s = m.sign
            ic, ib, *_ = bjt_currents(s * (v[p["base"]] - v[p["emitter"]]), s * (v[p["base"]] - v[p["collector"]]),
                                      m.isat, m.beta, m.beta_r, m.va, m.vt)
            sums[p["collector"]] += s * float(ic)
            sums[p["base"]] += s * float(ib)
            sums[p["emitter"]] -= s * float(ic + ib)
        else:
            s = m.sign
            i_d, *_ = mos_current(s * (v[p["gate"]] - v[p["source"]]), s * (v[p["drain"]] - v[p["source"]]),
                                  s * (v[p["bulk"]] - v[p["source"]]), m.vth, m.kp, m.lam, m.gamma, m.phi)
            sums[p["drain"]] += s * float(i_d)
            sums[p["source"]] -= s * float(i_d)
    return {n: x for n, x in sums.items() if n != "0"}


def test_divider_biased_ce_matches_the_textbook_iteration():
    # Thevenin base circuit, I_E = (V_BB − V_BE)/(R_E + R_B/(β+1)), V_BE = V_T ln(I_C/I_S),
    # iterated to a fixed point; β finite, V_A infinite. A. S. Sedra, K. C. Smith,
    # Microelectronic Circuits, §6 (BJT DC bias), from memory.
    beta, isat = 100.0, 1e-14
    vbb, rb = 12.0 * 10 / 57, 47e3 * 10e3 / 57e3
    ic = 1e-3
    for _ in range(100):
        vbe = VT * math.log(ic / isat)
        ic = beta / (beta + 1) * (vbb - vbe) / (1e3 + rb / (beta + 1))
    point = operating_point(_ce(beta=beta, isat=isat))
    q = point.devices["Q1"]
    assert q.ic == pytest.approx(ic, rel=1e-6)
    assert q.region == "forward active"
    assert q["ic"] == q.ic
    assert point.node_voltages["c"] == pytest.approx(12.0 - 4.7e3 * ic, rel=1e-6)
    assert point.warnings == ()
    assert max(abs(x) for x in _kcl_residuals(_ce(), operating_point(_ce())).values()) < 1e-9


def _cs_stage(rd="3k3", **device):
    """Invented degenerated common-source stage: 680k/320k divider from 10 V, R_S = 1 kΩ."""
    c = Circuit("degenerated CS")
    c.rail("VDD", "vdd", 10.0)
    c.vsource("Vs", "in", "0")
    c.capacitor("Cin", "in", "g", "1u")
    c.resistor("R1", "vdd", "g", "680k")
    c.resistor("R2", "g", "0", "320k")
    c.resistor("RD", "vdd", "d", rd)
    c.resistor("RS", "s", "0", "1k")
    c.mosfet("M1", drain="d", gate="g", source="s", **device)
    c.output("d")
    return c


def test_source_degenerated_cs_matches_the_quadratic():
    # I_D = ½K(V_G − I_D R_S − V_th)², solved in closed form for u = V_GS − V_th:
    # ½K R_S u² + u − (V_G − V_th) = 0 (Shichman–Hodges square law, saturation, λ = 0).
    # B. Razavi, Design of Analog CMOS Integrated Circuits, ch. 3, from memory.
    k, vth, rs = 4e-3, 0.7, 1e3
    c = _cs_stage(vth=vth, kp=k, cgs=2e-12, cgd=0.5e-12)
    vg = 10.0 * 320 / 1000
    u = (-1 + math.sqrt(1 + 2 * k * rs * (vg - vth))) / (k * rs)
    i_d = 0.5 * k * u * u
    m = operating_point(c).devices["M1"]
    assert m.id == pytest.approx(i_d, rel=1e-9)
    assert m.vgs == pytest.approx(u + vth, rel=1e-9)
    assert m.region == "saturation"


def test_bjt_differential_pair_with_a_tail_resistor():
    # Both bases at 0 V: V_E = −V_BE, I_tail = (V_E − V_EE)/R_T, each I_C = α·I_tail/2,
    # V_BE = V_T ln(I_C/I_S); by symmetry the two collectors carry equal currents.
    # P. R. Gray, P. J. Hurst, S. H. Lewis, R. G. Meyer, Analysis and Design of Analog
    # Integrated Circuits, §3.5 (emitter-coupled pair), from memory.
    beta, isat, rt = 150.0, 2e-15, 10e3
    c = Circuit("diff pair")
    c.rail("VCC", "vcc", 12.0)
    c.rail("VEE", "vee", -12.0)
    c.vsource("Vs", "b1", "0")
    c.resistor("RC1", "vcc", "c1", "10k")
    c.resistor("RC2", "vcc", "c2", "10k")
    c.resistor("RT", "e", "vee", rt)
    c.bjt("Q1", collector="c1", base="b1", emitter="e", isat=isat, beta=beta)
    c.bjt("Q2", collector="c2", base="0", emitter="e", isat=isat, beta=beta)
    c.output("c2")
    ic = 0.5e-3
    for _ in range(100):
        vbe = VT * math.log(ic / isat)
        ic = beta / (beta + 1) * (12.0 - vbe) / rt / 2
    point = operating_point(c)
    assert point.devices["Q1"].ic == pytest.approx(ic, rel=1e-6)
    assert point.devices["Q2"].ic == pytest.approx(ic, rel=1e-9)


def test_current_mirror_ratio():
    # Two matched transistors, V_A infinite: I_C = I_REF/(1 + 2/β), I_REF = (V_CC − V_BE)/R_REF.
    # Sedra & Smith, Microelectronic Circuits, §8.2 (the basic BJT mirror), from memory.
    beta, isat = 80.0, 5e-15
    c = Circuit("mirror")
    c.rail("VCC", "vcc", 5.0)
    c.vsource("Vs", "in", "0")
    c.resistor("Rin", "in", "0", "1k")
    c.resistor("RREF", "vcc", "r", "4k3")
    c.resistor("RL", "vcc", "out", "2k")
    c.bjt("Q1", collector="r", base="r", emitter="0", isat=isat, beta=beta)
    c.bjt("Q2", collector="out", base="r", emitter="0", isat=isat, beta=beta)
    c.output("out")
    ic = 1e-3
    for _ in range(100):
        vbe = VT * math.log(ic / isat)
        ic = (5.0 - vbe) / 4.3e3 / (1 + 2 / beta)
    assert operating_point(c).devices["Q2"].ic == pytest.approx(ic, rel=1e-6)


def test_bjt_small_signal_values_are_the_models_derivatives():
    # Central differences of the transport model itself (common practice, no source).
    c = _ce(va=60.0)
    q = operating_point(c).devices["Q1"]
    m = c.large_blocks["Q1"].model.params
    h = 1e-6

    def ic_ib(vbe, vce):
        ic, ib, *_ = bjt_currents(vbe, vbe - vce, m.isat, m.beta, m.beta_r, m.va, m.vt)
        return float(ic), float(ib)

    gm = (ic_ib(q.vbe + h, q.vce)[0] - ic_ib(q.vbe - h, q.vce)[0]) / (2 * h)
    go = (ic_ib(q.vbe, q.vce + h)[0] - ic_ib(q.vbe, q.vce - h)[0]) / (2 * h)
    gpi = (ic_ib(q.vbe + h, q.vce)[1] - ic_ib(q.vbe - h, q.vce)[1]) / (2 * h)
    ss = q.small_signal
    assert ss["gm"] == pytest.approx(gm, rel=1e-6)
    assert 1 / ss["ro"] == pytest.approx(go, rel=1e-6)
    assert 1 / ss["rpi"] == pytest.approx(gpi, rel=1e-6)
    # C_π = g_m/(2π f_T) − C_μ.
    assert ss["cpi"] == pytest.approx(ss["gm"] / (2 * math.pi * 300e6) - 2e-12, rel=1e-12)


def test_mos_small_signal_values_are_the_models_derivatives():
    # Central differences of the square law with λ and the body effect (common practice, no source).
    args = (0.6, 4e-3, 0.05, 0.45, 0.7)
    for vgs, vds, vbs in ((1.2, 2.0, -0.5), (1.2, 0.2, -0.3), (1.0, -0.3, 0.0)):
        _, gm, gds, gmb, _ = mos_current(vgs, vds, vbs, *args)
        h = 1e-6
        f = lambda a, b, c: float(mos_current(a, b, c, *args)[0])
        assert float(gm) == pytest.approx((f(vgs + h, vds, vbs) - f(vgs - h, vds, vbs)) / (2 * h), rel=1e-6)
        assert float(gds) == pytest.approx((f(vgs, vds + h, vbs) - f(vgs, vds - h, vbs)) / (2 * h), rel=1e-6)
        assert float(gmb) == pytest.approx((f(vgs, vds, vbs + h) - f(vgs, vds, vbs - h)) / (2 * h), rel=1e-6,
                                           abs=1e-12)


def test_biased_stage_equals_the_same_stage_with_the_values_typed():
    # The method notes §8: the time-constant analysis of a biased stage is that of the same
    # stage with the solved small-signal values typed in (common practice, no source).
    biased = analyze(_ce(va=80.0))
    ss = biased.operating_point.devices["Q1"].small_signal
    typed = _ce()
    typed = Circuit("typed")
    typed.rail("VCC", "vcc", 12.0)
    typed.vsource("Vs", "in", "0")
    for name, a, b, v in (("R1", "vcc", "b", "47k"), ("R2", "b", "0", "10k"), ("RC", "vcc", "c", "4k7"),
                          ("RE", "e", "0", "1k")):
        typed.resistor(name, a, b, v)
    typed.capacitor("Cin", "in", "b", "10u")
    typed.capacitor("CE", "e", "0", "100u")
    typed.bjt("Q1", collector="c", base="b", emitter="e", gm=ss["gm"], rpi=ss["rpi"], ro=ss["ro"],
              cpi=ss["cpi"], cmu=ss["cmu"])
    typed.output("c")
    other = analyze(typed)
    assert biased.midband_gain == pytest.approx(other.midband_gain, rel=1e-12)
    assert biased.b1 == pytest.approx(other.b1, rel=1e-12)
    assert biased.f_low_estimate == pytest.approx(other.f_low_estimate, rel=1e-12)
    assert biased.f_high_exact == pytest.approx(other.f_high_exact, rel=1e-9)


def test_saturated_bjt_is_named():
    # A 47 kΩ collector resistor at ~1.3 mA would need 60 V: the transistor saturates.
    point = operating_point(_ce(rc="47k"))
    assert point.devices["Q1"].region == "saturated"
    assert any("Q1 is saturated" in w for w in point.warnings)


def test_cut_off_bjt_with_no_base_drive_is_named():
    point = operating_point(_ce(r1="100meg", r2="1"))
    assert point.devices["Q1"].region == "cut off"
    assert any("Q1" in w and ("no base drive" in w or "cut off" in w) for w in point.warnings)


def test_mosfet_in_triode_and_below_threshold_are_named():
    def cs(rd, vth):
        c = Circuit("CS")
        c.rail("VDD", "vdd", 5.0)
        c.vsource("Vs", "in", "0")
        c.capacitor("Cin", "in", "g", "1u")
        c.resistor("R1", "vdd", "g", "1meg")
        c.resistor("R2", "g", "0", "1meg")
        c.resistor("RD", "vdd", "d", rd)
        c.mosfet("M1", drain="d", gate="g", source="0", vth=vth, kp=2e-3)
        c.output("d")
        return operating_point(c)

    triode = cs("100k", 0.5)
    assert triode.devices["M1"].region == "triode"
    assert any("M1 is in triode" in w for w in triode.warnings)
    off = cs("1k", 3.0)
    assert off.devices["M1"].region == "cut off"
    assert any("M1 is below threshold" in w for w in off.warnings)


def test_pnp_stage_reads_positive_in_its_own_polarity():
    c = Circuit("pnp")
    c.rail("VCC", "vcc", 12.0)
    c.vsource("Vs", "in", "0")
    c.capacitor("Cin", "in", "b", "10u")
    c.resistor("R1", "b", "0", "47k")
    c.resistor("R2", "vcc", "b", "10k")
    c.resistor("RE", "vcc", "e", "1k")
    c.resistor("RC", "c", "0", "4k7")
    c.bjt("Q1", collector="c", base="b", emitter="e", isat=1e-14, beta=100, polarity="pnp")
    c.output("c")
    q = operating_point(c).devices["Q1"]
    # Mirror image of the npn stage above: the same I_C.
    assert q.region == "forward active"
    assert q.ic == pytest.approx(operating_point(_ce()).devices["Q1"].ic, rel=1e-9)


def test_rails_of_one_name_are_one_rail():
    c = _ce()
    assert c.rail("VCC", "vcc", 12.0) is c.elements["VCC"]
    with pytest.raises(CircuitError, match="VCC"):
        c.rail("VCC", "vcc", 15.0)


def test_a_circuit_that_will_not_settle_gets_a_named_error(monkeypatch):
    monkeypatch.setattr(dcop, "MAX_NEWTON", 2)
    monkeypatch.setattr(dcop, "MAX_HOMOTOPY_STEPS", 2)
    with pytest.raises(BiasError, match=r"The bias of Q1 does not settle.*node \w+ swings most"):
        operating_point(_ce())


def test_an_edit_of_the_dc_network_moves_the_bias():
    first = analyze(_ce()).operating_point.devices["Q1"].ic
    assert analyze(_ce(re="2k")).operating_point.devices["Q1"].ic < 0.6 * first


def test_a_what_if_on_the_small_signal_network_keeps_the_bias():
    c = _ce()
    point = analyze(c).operating_point
    other = c.with_elements({"Q1.cpi": type(c.elements["Q1.cpi"])("Q1.cpi", "b", "e", 1e-12, "Q1")})
    assert other.operating_point is point
    assert analyze(other).operating_point is point


@given(r1=st.floats(1e3, 1e6), r2=st.floats(1e3, 1e6), rc=st.floats(10.0, 1e5), re=st.floats(0.0, 1e4),
       vcc=st.floats(-15.0, 15.0), beta=st.floats(10.0, 500.0), pnp=st.booleans())
def test_every_random_bias_network_is_solved_or_refused_by_name(r1, r2, rc, re, vcc, beta, pnp):
    # Either a point that satisfies KCL to 1e-9 A at every node, or a named error; never a hang.
    try:
        c = Circuit("random")
        c.rail("VCC", "vcc", vcc)
        c.vsource("Vs", "in", "0")
        c.capacitor("Cin", "in", "b", "1u")
        c.resistor("R1", "vcc", "b", r1)
        c.resistor("R2", "b", "0", r2)
        c.resistor("RC", "vcc", "c", rc)
        if re > 0:
            c.resistor("RE", "e", "0", re)
        c.bjt("Q1", collector="c", base="b", emitter="e" if re > 0 else "0", isat=1e-15, beta=beta,
              polarity="pnp" if pnp else "npn")
        c.output("c")
        point = operating_point(c)
    except CircuitError as exc:
        # A value the parser refuses names its part; a bias that does not settle names Q1.
        assert exc.parts and exc.message
        return
    assert max(abs(x) for x in _kcl_residuals(c, point).values()) < 1e-9
    assert np.isfinite(list(point.node_voltages.values())).all()


def _sized_cs(rd="3k3", **gate):
    # The degenerated CS stage above, its device given by size: k′ = 200 µA/V², W/L = 20,
    # so K_P = k′·W/L = 4 mA/V² as before (Shichman–Hodges: K_P = μC_ox·W/L).
    return _cs_stage(rd, vth=0.7, kprime="200u", w="20u", l="1u", **gate)


def test_k_prime_with_w_and_l_gives_the_square_law_k():
    sized = operating_point(_sized_cs()).devices["M1"]
    k, vth, rs, vg = 4e-3, 0.7, 1e3, 3.2
    u = (-1 + math.sqrt(1 + 2 * k * rs * (vg - vth))) / (k * rs)
    assert sized.id == pytest.approx(0.5 * k * u * u, rel=1e-9)


@pytest.mark.parametrize("rd, region, share_s, share_d", [("3k3", "saturation", 2 / 3, 0.0),
                                                          ("20k", "triode", 0.5, 0.5)])
def test_gate_capacitances_follow_the_meyer_model_by_region(rd, region, share_s, share_d):
    # Meyer (RCA Review 32, 1971): saturation C_gs = ⅔WLC_ox + WC_ov, C_gd = WC_ov; triode
    # each ½WLC_ox + WC_ov. W = 20 µm, L = 1 µm, C_ox = 8.6 mF/m² (8.6 fF/µm², about 4 nm of
    # SiO₂: ε_ox/t_ox = 3.45e-11/4e-9, value from memory), C_ov = 0.3 nF/m (0.3 fF/µm).
    a = analyze(_sized_cs(rd, cox="8.6m", cov="0.3n"))
    assert a.operating_point.devices["M1"].region == region
    channel, overlap = 20e-6 * 1e-6 * 8.6e-3, 20e-6 * 0.3e-9
    assert a.elements["M1.cgs"].capacitance == pytest.approx(share_s * channel + overlap, rel=1e-12)
    assert a.elements["M1.cgd"].capacitance == pytest.approx(share_d * channel + overlap, rel=1e-12)


def test_sizes_that_do_not_add_up_are_named():
    for given, says in (({"kprime": "200u"}, "give W and L too"), ({"kp": "4m", "kprime": "200u", "w": "20u",
                                                                     "l": "1u"}, "clear K_P"),
                        ({"kp": "4m", "cox": "8.6m"}, "give W and L too"), ({}, "K_P, or k′ with W and L")):
        c = Circuit("bad sizes")
        c.rail("VDD", "vdd", 10.0)
        c.vsource("Vs", "g", "0")
        c.resistor("RD", "vdd", "d", "3k3")
        with pytest.raises(CircuitError, match=says) as refused:
            c.mosfet("M1", drain="d", gate="g", source="0", vth=0.7, **given)
        assert refused.value.parts == ("M1",) or "M1" in str(refused.value)


def _ce_with_cin(value):
    c = _ce()
    return c.with_elements({"Cin": type(c.elements["Cin"])("Cin", "in", "b", value)})


def test_a_capacitor_edit_takes_the_kept_bias_as_solving_would_give_it(monkeypatch):
    # Common practice, no source: a DC solution depends on the DC equations alone, so the one
    # kept for the same equations must be the one solving again gives, to the last bit.
    dcop.forget_solutions()
    cold = operating_point(_ce_with_cin(10e-6))
    solves = []
    real = dcop._solve
    monkeypatch.setattr(dcop, "_solve", lambda problem: solves.append(problem) or real(problem))
    kept = operating_point(_ce_with_cin(22e-6))
    assert solves == [], "a capacitor is open at DC: nothing to solve again"
    assert kept.node_voltages == cold.node_voltages and kept.iterations == cold.iterations
    assert kept.devices["Q1"].ic == cold.devices["Q1"].ic
    # A resistor is part of the DC equations: solved anew, and the bias moves.
    moved = operating_point(_ce(re="1k2"))
    assert len(solves) == 1 and moved.devices["Q1"].ic < cold.devices["Q1"].ic
    # The solver's settings are part of what is kept: other settings, another solve.
    monkeypatch.setattr(dcop, "REL_TOL", 1e-10)
    operating_point(_ce_with_cin(10e-6))
    assert len(solves) == 2


def test_only_the_last_solutions_are_kept():
    dcop.forget_solutions()
    for k in range(dcop.KEPT_SOLUTIONS + 5):
        operating_point(_ce(rc=f"{4 + 0.1 * k:.1f}k"))
    assert len(dcop._solutions) == dcop.KEPT_SOLUTIONS
