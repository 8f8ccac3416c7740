"""Small stages against their floor: analyze() on every sample beside a plain dense numpy pipeline.

Run as a script from the repository root: ``python tests/benchmarks/bench_small.py [REPEATS]``.

The floor does the same mathematics on the same matrices with nothing around it: the
matrices are taken from the engine (the full network, the DC network and its Newton step
count, the resistive mid-band network and the low band's network, each as the analysis
left them), and the floor then times only numpy and LAPACK on them:

- the bias: as many Newton steps as the engine took, each the devices' model equations
  (the engine's own vectorised functions) and one dense solve of the DC equations;
- the exact sweep: one batched solve of (G + jωC)x = b at every frequency the analysis swept;
- the band test: as many rounds as the engine took (one where the first mid-band guess
  holds, two where a second round had to confirm a moved one), each one complex solve with
  the input and every port together and one transposed solve for the output;
- the neutral elements' resistances and the mid-band gain: one real solve with the input and every port;
- the open-circuit constants: Z = Uᵀ G⁻¹ U, b1, b2 and the eigenvalues of D·Z;
- the short-circuit constants: Z_L, its inverse and its eigenvalues;
- the exact corners: for each, 12 single-frequency solves (a bracketing root finder's usual count);
- the zeros: the generalised eigenvalues of the bordered pencil.

Times are process CPU time, best of REPEATS (default 30), so other jobs on the machine move
them less. analyze() is timed with the bias solved from the start, as the floor solves it,
and beside that ("kept") with the DC solution kept from the run before, as after an edit
that leaves the bias alone. Nothing is asserted.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np
import scipy.linalg as la

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "sample_designs").glob("*.json"))
TARGET = 1.5
"""analyze() within this multiple of its floor (the issue's target)."""


def _best(fn, repeat):
    best = float("inf")
    for _ in range(repeat):
        t0 = time.process_time()
        fn()
        best = min(best, time.process_time() - t0)
    return best


def _floor_inputs(doc):
    """The matrices the floor works on, from one analysis of ``doc``."""
    import bandsketch.engine.solve.analysis as analysis
    from bandsketch.engine.core.band import Band
    from bandsketch.engine.design.netlist import design_to_circuit
    from bandsketch.engine.network.elements import Capacitor
    from bandsketch.engine.solve.dcop import DcEquations
    from bandsketch.engine.solve.mna import OPEN, build_system
    from bandsketch.engine.solve.timeconstants import port_columns, port_weights

    c = design_to_circuit(doc)
    dc = DcEquations(c) if c.large_blocks else None
    rounds = []  # the band-test rounds the engine ran, for the floor to run as many
    band_tests = analysis.band_tests
    analysis.band_tests = lambda *args: rounds.append(args) or band_tests(*args)
    try:
        a = analysis.analyze(c)
    finally:
        analysis.band_tests = band_tests
    full = a._system
    reactive = [el for el in c.elements.values() if el.name in a.elements]
    states = a.midband_states()
    mid = build_system(c, states)
    high = [el for el in reactive if a.elements[el.name].band == Band.HIGH]
    low = [el for el in reactive if a.elements[el.name].band == Band.LOW]
    low_net = build_system(c, {**{k: v for k, v in states.items() if k not in {e.name for e in low}},
                               **{el.name: OPEN for el in low if isinstance(el, Capacitor)}})
    return dict(
        G=np.array(full.dense_G), C=np.array(full.dense_C), b=full.b, c=full.c, f=a.sweep_frequencies,
        f_m=a.midband_frequency, U=np.asarray(port_columns(full, reactive, dense=True)),
        Gm=np.array(mid.dense_G), Um=port_columns(mid, reactive, dense=True), bm=mid.b,
        Uh=port_columns(mid, high, dense=True), Dh=port_weights(high),
        Gl=np.array(low_net.dense_G), Ul=port_columns(low_net, low, dense=True), Dl=port_weights(low),
        dc=dc, steps=a.operating_point.iterations if a.operating_point else 0,
        corners=sum(x is not None for x in (a.f_low_exact, a.f_high_exact)), rounds=len(rounds), circuit=c)


def _floor(m):
    """The plain pipeline on the matrices ``m`` (see the module docstring)."""
    from bandsketch.engine.network.largesignal import bjt_currents, mos_current

    dc = m["dc"]
    if dc is not None:
        dev = dc.devices
        x = np.zeros(dc.n)
        for _ in range(m["steps"]):
            xe = np.append(x, 0.0)
            vbe, vbc, vgs, vds, vbs = dev.raw(xe)
            if dev.bjt_names:
                bjt_currents(vbe, vbc, dev.isat, dev.beta, dev.beta_r, dev.va, dev.vt)
            if dev.mos_names:
                mos_current(vgs, vds, vbs, dev.vth, dev.kp, dev.lam, dev.gamma, dev.phi)
            x = np.linalg.solve(dc.G + np.eye(dc.n) * 1e-3, dc.b)
    G, C, b, c = m["G"], m["C"], m["b"], m["c"]
    w = 2 * np.pi * m["f"]
    A = G[None] + 1j * w[:, None, None] * C[None]
    (np.linalg.solve(A, np.broadcast_to(b, (w.size, b.size))[..., None])[..., 0] @ c)
    for _ in range(m["rounds"]):
        Am = G + 2j * np.pi * m["f_m"] * C
        X = np.linalg.solve(Am, np.column_stack((b, m["U"])))
        np.linalg.solve(Am.T, c)
        np.einsum("ij,ij->j", m["U"], X[:, 1:])
    np.linalg.solve(m["Gm"], np.column_stack((m["bm"], m["Um"])))
    if m["Uh"].shape[1]:
        Z = m["Uh"].T @ np.linalg.solve(m["Gm"], m["Uh"])
        D = m["Dh"]
        M = D[:, None] * Z
        np.triu(M * M.T, 1).sum()
        r = np.sqrt(np.abs(D))
        la.eigvalsh(r[:, None] * Z * r[None, :])
    if m["Ul"].shape[1]:
        ZL = m["Ul"].T @ np.linalg.solve(m["Gl"], m["Ul"])
        np.linalg.inv(ZL)
        np.linalg.eigvals(m["Dl"][:, None] * ZL)
    for _ in range(12 * m["corners"]):
        np.linalg.solve(G + 2j * np.pi * m["f_m"] * C, b) @ c
    n = G.shape[0]
    P, Q = np.zeros((n + 1, n + 1)), np.zeros((n + 1, n + 1))
    P[:n, :n], P[:n, n], P[n, :n], Q[:n, :n] = -G, b, -c, C
    la.eig(P, Q, right=False)


def measure(path, repeat: int = 30) -> dict:
    """analyze()'s and the floor's CPU seconds on one sample design (a fresh circuit each run):
    with the bias solved from the start, as the floor does it, and with it kept from the run
    before (as after an edit that leaves the bias alone)."""
    from bandsketch.engine.design.designfile import load_design
    from bandsketch.engine.design.netlist import design_to_circuit
    from bandsketch.engine.solve.analysis import analyze
    from bandsketch.engine.solve.dcop import forget_solutions

    doc = load_design(path)
    m = _floor_inputs(doc)
    circuits = [design_to_circuit(doc) for _ in range(2 * repeat)]
    it = iter(circuits)
    t_an = _best(lambda: (forget_solutions(), analyze(next(it))), repeat)
    t_kept = _best(lambda: analyze(next(it)), repeat)
    t_floor = _best(lambda: _floor(m), repeat)
    return {"analyze": t_an, "analyze_bias_kept": t_kept, "floor": t_floor, "unknowns": int(m["G"].shape[0]),
            "reactive": int(m["U"].shape[1]), "biased": m["dc"] is not None}


def main(argv) -> int:
    sys.path.insert(0, str(ROOT.parent))
    repeat = int(argv[0]) if argv else 30
    print(f"{'sample':28s}{'unknowns':>9s}{'L,C':>5s}{'bias':>6s}{'analyze':>10s}{'kept':>9s}{'floor':>9s}"
          f"{'ratio':>7s}")
    for path in SAMPLES:
        r = measure(path, repeat)
        ratio = r["analyze"] / r["floor"]
        print(f"{path.stem:28s}{r['unknowns']:9d}{r['reactive']:5d}{'yes' if r['biased'] else 'no':>6s}"
              f"{1e3 * r['analyze']:8.2f}ms{1e3 * r['analyze_bias_kept']:7.2f}ms{1e3 * r['floor']:7.2f}ms{ratio:6.1f}×{'' if ratio <= TARGET else '  (target ≤ 1.5×)'}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
