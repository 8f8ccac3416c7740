"""Invented test stages and an independent symbolic nodal analysis to check the engine against.

Every scenario here is invented for the tests. The symbolic analysis is written from the
nodal equations directly (Ho, Ruehli, Brennan, "The Modified Nodal Approach to Network
Analysis", IEEE Trans. Circuits and Systems CAS-22(6), 1975), not from bandsketch.engine.solve.mna.
"""

from __future__ import annotations

import math

import sympy

from bandsketch.engine import Circuit
from bandsketch.engine.network.elements import VCCS, Capacitor, Resistor, VSource

s = sympy.Symbol("s")


def _nodal(circuit, skip=()):
    """The exact nodal matrix Y(s) of ``circuit`` with its voltage sources as 0-V branches,
    its node index, and the right-hand side of a unit input source.

    Handles resistors, capacitors, transconductances and voltage sources; capacitors and
    resistors named in ``skip`` are left out.
    """
    nodes = sorted({n for el in circuit.elements.values() for n in el.nodes} - {"0"})
    vsrc = [el for el in circuit.elements.values() if isinstance(el, VSource)]
    idx = {n: i for i, n in enumerate(nodes)}
    size = len(nodes) + len(vsrc)
    Y = sympy.zeros(size, size)
    rhs = sympy.zeros(size, 1)

    def add(r, c, v):
        if r in idx and c in idx:
            Y[idx[r], idx[c]] += v

    for el in circuit.elements.values():
        if isinstance(el, (Resistor, Capacitor)):
            if el.name in skip:
                continue
            y = 1 / sympy.Rational(el.value) if isinstance(el, Resistor) else s * sympy.Rational(el.value)
            add(el.a, el.a, y), add(el.b, el.b, y), add(el.a, el.b, -y), add(el.b, el.a, -y)
        elif isinstance(el, VCCS):
            g = sympy.Rational(el.gm)
            add(el.p, el.cp, g), add(el.p, el.cn, -g), add(el.n, el.cp, -g), add(el.n, el.cn, g)
        elif not isinstance(el, VSource):
            raise TypeError(type(el).__name__)
    for k, el in enumerate(vsrc):
        row = len(nodes) + k
        for node, sign in ((el.p, 1), (el.n, -1)):
            if node in idx:
                Y[idx[node], row] += sign
                Y[row, idx[node]] += sign
        if el.name == circuit.input_name:
            rhs[row] = 1
    return Y, idx, rhs


def denominator(circuit, skip=()):
    """Coefficients [1, b1, b2, ...] of det(G + sC)/det(G), exact, with the sources zeroed.

    Handles resistors, capacitors, transconductances and voltage sources (0-V branches);
    capacitors named in ``skip`` are left out.
    """
    Y, _, _ = _nodal(circuit, skip)
    poly = sympy.Poly(sympy.expand(Y.det(method="berkowitz")), s)
    coeffs = poly.all_coeffs()[::-1]
    return [sympy.Rational(c) / coeffs[0] for c in coeffs]


def common_emitter(load=True, coupling=False):
    """Invented "hydrophone preamp" common-emitter stage with hybrid-π values."""
    c = Circuit("hydrophone preamp (invented)")
    c.vsource("Vsig", "sig", "0")
    if coupling:
        c.resistor("Rsig", "sig", "x", 600)
        c.capacitor("Cin", "x", "b", 4.7e-6)
        c.resistor("Rbias", "b", "0", 8200)
    else:
        c.resistor("Rsig", "sig", "b", 600)
    c.bjt("Q1", collector="c", base="b", emitter="e" if coupling else "0",
          gm=0.08, rpi=2500, ro=50e3, rb=100, cpi=20e-12, cmu=2e-12, ccs=1e-12 if load else None)
    c.resistor("Rc", "c", "0", 2200)
    if coupling:
        c.resistor("Re", "e", "0", 470)
        c.capacitor("Ce", "e", "0", 100e-6)
        c.capacitor("Cout", "c", "out", 1e-6)
        c.resistor("RL", "out", "0", 10e3)
        if load:
            c.capacitor("CL", "out", "0", 10e-12)
        c.output("out")
    else:
        if load:
            c.capacitor("CL", "c", "0", 5e-12)
        c.output("c")
    return c


def common_source(coupling=False):
    """Invented "photodiode front end" common-source stage."""
    c = Circuit("photodiode front end (invented)")
    c.vsource("Vsig", "sig", "0")
    if coupling:
        c.resistor("Rsig", "sig", "x", 1000)
        c.capacitor("Cin", "x", "g", 100e-9)
        c.resistor("Rg", "g", "0", 1e6)
        c.mosfet("M1", drain="d", gate="g", source="s", gm=5e-3, ro=40e3, cgs=1e-12, cgd=0.2e-12, cdb=0.3e-12)
        c.resistor("Rs", "s", "0", 1000)
        c.capacitor("Cs", "s", "0", 47e-6)
    else:
        c.resistor("Rsig", "sig", "g", 1000)
        c.mosfet("M1", drain="d", gate="g", source="0", gm=5e-3, ro=40e3, cgs=1e-12, cgd=0.2e-12, cdb=0.3e-12)
    c.resistor("Rd", "d", "0", 5000)
    c.capacitor("CL", "d", "0", 2e-12)
    c.output("d")
    return c


def capacitive_node(rs=1e3, ci=100e-9, rg=1e6, cg=2e-9):
    """Invented "sensor coupling": a source through R_sig and a coupling capacitor C_in into a
    node held by R_G and a capacitance C_g to ground, output at that node. Between the bands
    C_in and C_g share the charge, so the exact gain tops out below the resistive A_m."""
    c = Circuit("sensor coupling into a capacitive node (invented)")
    c.vsource("V", "s", "0")
    c.resistor("Rsig", "s", "a", rs)
    c.capacitor("Cin", "a", "g", ci)
    c.resistor("RG", "g", "0", rg)
    c.capacitor("Cg", "g", "0", cg)
    c.output("g")
    return c


def ladder(n=4, r=1000.0, cap=1e-9):
    """Invented "sensor cable model": an unbranched RC ladder, output at the far end."""
    c = Circuit("sensor cable model (invented)")
    c.vsource("Vsig", "n0", "0")
    for k in range(1, n + 1):
        c.resistor(f"R{k}", f"n{k - 1}", f"n{k}", r * k)
        c.capacitor(f"C{k}", f"n{k}", "0", cap / k)
    c.output(f"n{n}")
    return c


def follower(rs=600.0, cl=None):
    """Invented "line driver" emitter follower; collector at signal ground."""
    c = Circuit("line driver (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rsig", "sig", "b", rs)
    c.bjt("Q1", collector="0", base="b", emitter="e", gm=0.04, rpi=5000, rb=200, cpi=15e-12, cmu=1e-12)
    c.resistor("Re", "e", "0", 1000)
    if cl:
        c.capacitor("CL", "e", "0", cl)
    c.output("e")
    return c


def common_gate(rg=4.7e3, cg=1e-6):
    """Invented "fibre receiver" common-gate stage whose gate is bypassed to ground.

    With the gate at signal ground and no r_o, the source and drain time constants do not
    interact: τ_s = C_gs·(R_sig ‖ R_s ‖ 1/g_m) = 2 pF · 32.26 Ω = 64.5 ps and
    τ_d = (C_gd + C_L)·R_d = 1.5 pF · 2 kΩ = 3 ns (worked by hand).
    """
    c = Circuit("fibre receiver, common gate (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rsig", "sig", "s", 50)
    c.resistor("Rs", "s", "0", 1000)
    c.mosfet("M1", drain="d", gate="g", source="s", gm=10e-3, cgs=2e-12, cgd=0.5e-12)
    c.resistor("Rg", "g", "0", rg)
    c.capacitor("Cg", "g", "0", cg)
    c.resistor("Rd", "d", "0", 2000)
    c.capacitor("CL", "d", "0", 1e-12)
    c.output("d")
    return c


def cascode(rb, cb):
    """Invented "hydrophone cascode": common emitter into common base, upper base bypassed."""
    c = Circuit("hydrophone cascode (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rsig", "sig", "b1", 600)
    c.bjt("Q1", collector="m", base="b1", emitter="0", gm=0.04, rpi=2500, ro=20e3, rb=100, cpi=20e-12, cmu=2e-12)
    c.bjt("Q2", collector="out", base="b2", emitter="m", gm=0.04, rpi=2500, ro=50e3, rb=100, cpi=20e-12,
          cmu=2e-12)
    c.resistor("Rb", "b2", "0", rb)
    c.capacitor("Cb", "b2", "0", cb)
    c.resistor("Rc", "out", "0", 5000)
    c.output("out")
    return c


def tuned_tank(q, f0=10.7e6, inductance=1e-6):
    """Invented "IF strip" stage: a transconductance into a parallel RLC tank of quality ``q``.

    g_m = 1/R, so the mid-band gain at resonance is 1; the corners of a parallel tank are
    f0·(√(1 + 1/(4Q²)) ∓ 1/(2Q)) (the resonance curve; from memory).
    """
    cap = 1 / ((2 * math.pi * f0) ** 2 * inductance)
    r = q * math.sqrt(inductance / cap)
    c = Circuit(f"IF strip tank, Q = {q:g} (invented)")
    c.vsource("Vsig", "sig", "0")
    c.vccs("Gm", "0", "t", "sig", "0", 1 / r)
    c.resistor("Rt", "t", "0", r)
    c.inductor("Lt", "t", "0", inductance)
    c.capacitor("Ct", "t", "0", cap)
    c.output("t")
    return c


def rc_coupled(stages=2, coupling=1e-6):
    """Invented "seismic line amplifier": ``stages`` transconductance stages, each RC-coupled.

    Every coupling capacitor sees about the same resistance, so no low-band pole dominates.
    """
    c = Circuit(f"seismic line amplifier, {stages} stages (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rsig", "sig", "x0", 1000)
    for k in range(1, stages + 1):
        c.capacitor(f"Cc{k}", f"x{k - 1}", f"b{k}", coupling)
        c.resistor(f"Rb{k}", f"b{k}", "0", 10e3)
        c.capacitor(f"Cp{k}", f"b{k}", "0", 20e-12)
        c.vccs(f"G{k}", f"x{k}", "0", f"b{k}", "0", 20e-3)
        c.resistor(f"Rc{k}", f"x{k}", "0", 5000)
    c.capacitor(f"Cc{stages + 1}", f"x{stages}", "out", coupling)
    c.resistor("RL", "out", "0", 10e3)
    c.capacitor("CL", "out", "0", 20e-12)
    c.output("out")
    return c


def transfer(circuit):
    """Numerator and denominator of H(s) = v_out/u, float coefficients, highest power first.

    The same nodal equations as :func:`denominator`, solved by Cramer's rule: the output
    node's voltage is det(Y with its column replaced by the source vector)/det(Y). For
    scipy.signal (``freqs``); the output must be a node against ground.
    """
    Y, idx, rhs = _nodal(circuit)
    out, ground = circuit.output_nodes
    assert ground == "0"
    top = Y.copy()
    top[:, idx[out]] = rhs
    num = sympy.Poly(sympy.expand(top.det(method="berkowitz")), s)
    den = sympy.Poly(sympy.expand(Y.det(method="berkowitz")), s)
    return [float(c) for c in num.all_coeffs()], [float(c) for c in den.all_coeffs()]


def lower_corner(circuit, f_mid, gain=None):
    """Hz: where |H| of :func:`transfer` falls 3 dB below ``gain`` (by default its value at
    ``f_mid``), searched downward from ``f_mid`` (scipy.signal.freqs for |H(jω)|,
    scipy.optimize.brentq for the root)."""
    import numpy as np
    from scipy.optimize import brentq
    from scipy.signal import freqs

    num, den = transfer(circuit)

    def db_below(f):
        return 20 * np.log10(abs(freqs(num, den, [2 * math.pi * f])[1][0]) / top) + 10 * math.log10(2)

    top = abs(gain) if gain else abs(freqs(num, den, [2 * math.pi * f_mid])[1][0])
    grid = np.geomspace(f_mid, f_mid * 1e-6, 600)
    below = next(k for k, f in enumerate(grid) if db_below(f) < 0)
    return brentq(db_below, grid[below], grid[below - 1], xtol=1e-12, rtol=1e-12)


def partly_bypassed_ce(re1, re2, ce, ro=None, cin=(4.7e-6,)):
    """Invented "geophone preamp": a common emitter with R_E1 unbypassed and R_E2 bypassed by C_E,
    coupled in and out (the input coupling ``cin``, F, one capacitor or several in parallel).
    Without r_o the emitter branch carries no current where R_E2 ‖ 1/(sC_E) is infinite, so
    the bypass's zero is exactly 1/(R_E2·C_E)."""
    c = Circuit(f"geophone preamp, R_E1 {re1:g} Ω, R_E2 {re2:g} Ω (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rsig", "sig", "x", 600)
    for k, value in enumerate(cin):
        c.capacitor("Cin" if len(cin) == 1 else f"Cin{k + 1}", "x", "b", value)
    c.resistor("Rbias", "b", "0", 8200)
    c.bjt("Q1", collector="c", base="b", emitter="e", gm=0.08, rpi=2500, rb=100, cpi=20e-12, cmu=2e-12,
          **({"ro": ro} if ro else {}))
    c.resistor("Rc", "c", "0", 2200)
    c.resistor("Re1", "e", "e2", re1)
    c.resistor("Re2", "e2", "0", re2)
    c.capacitor("Ce", "e2", "0", ce)
    c.capacitor("Cout", "c", "out", 1e-6)
    c.resistor("RL", "out", "0", 10e3)
    c.output("out")
    return c


def common_base(rb, cb):
    """Invented "microphone line input": a common-base stage whose base resistor is bypassed,
    coupled in to the emitter and out from the collector. Opening the bypass puts R_b in
    series with r_π, which raises the emitter's input resistance: a corner or only a pair."""
    c = Circuit(f"microphone line input, common base, R_b {rb:g} Ω (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rsig", "sig", "x", 50)
    c.capacitor("Cin", "x", "e", 10e-6)
    c.resistor("Re", "e", "0", 1000)
    c.bjt("Q1", collector="c", base="b", emitter="e", gm=0.04, rpi=5000, rb=100, cpi=10e-12, cmu=1e-12)
    c.resistor("Rb", "b", "0", rb)
    c.capacitor("Cb", "b", "0", cb)
    c.resistor("Rc", "c", "0", 3000)
    c.capacitor("Cout", "c", "out", 1e-6)
    c.resistor("RL", "out", "0", 10e3)
    c.output("out")
    return c
