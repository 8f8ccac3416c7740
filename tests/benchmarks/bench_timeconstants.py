"""Benchmark: analyze() against the naive way, on RC meshes and ladders of 10 to 5,000 capacitors.

Run as a script: ``PYTHONPATH=. python tests/benchmarks/bench_timeconstants.py [--quick]``.
The naive way rebuilds the network and solves it once per capacitor for the resistance it
sees (the other capacitors open); above 40 capacitors it is timed on 40 of them and scaled
up, which the table marks with ~. The networks are invented ("sensor array model").
"""

from __future__ import annotations

import sys
import time

import numpy as np
import scipy.sparse.linalg as spla

from bandsketch.engine import Circuit, analyze
from bandsketch.engine.solve.mna import OPEN, build_system

SIZES = (10, 100, 400, 1000, 5000)
NAIVE_SAMPLE = 40


def mesh(n_caps: int) -> Circuit:
    """A rows × cols resistor grid with a capacitor from every node to ground."""
    rows = int(np.floor(np.sqrt(n_caps)))
    while n_caps % rows:
        rows -= 1
    cols = n_caps // rows
    c = Circuit(f"sensor array mesh {rows}×{cols} (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rs", "sig", "m0_0", 100)
    for i in range(rows):
        for j in range(cols):
            c.capacitor(f"C{i}_{j}", f"m{i}_{j}", "0", 1e-12 * (1 + (i + 2 * j) % 5))
            if j + 1 < cols:
                c.resistor(f"Rh{i}_{j}", f"m{i}_{j}", f"m{i}_{j + 1}", 1000)
            if i + 1 < rows:
                c.resistor(f"Rv{i}_{j}", f"m{i}_{j}", f"m{i + 1}_{j}", 1500)
    c.resistor("Rload", f"m{rows - 1}_{cols - 1}", "0", 1e6)
    c.output(f"m{rows - 1}_{cols - 1}")
    return c


def ladder(n_caps: int) -> Circuit:
    """An unbranched RC ladder, output at the far end."""
    c = Circuit(f"sensor cable ladder {n_caps} (invented)")
    c.vsource("Vsig", "n0", "0")
    for k in range(1, n_caps + 1):
        c.resistor(f"R{k}", f"n{k - 1}", f"n{k}", 10.0)
        c.capacitor(f"C{k}", f"n{k}", "0", 1e-12)
    c.output(f"n{n_caps}")
    return c


def naive_seconds(c: Circuit, f_test: float, repeat: int) -> tuple[float, float, bool]:
    """Seconds of the naive way, scaled up from a sample when there are many capacitors.

    Returns the time to rebuild and solve once per capacitor for its resistance (the
    others open), the time of the whole naive job (that, plus rebuilding and solving with
    the capacitor shorted and opened for the band test at ``f_test``), and whether sampled.
    """
    from bandsketch.engine.solve.response import frequency_response

    caps = [el for el in c.elements.values() if type(el).__name__ == "Capacitor"]
    sample = caps[:NAIVE_SAMPLE]

    def resistances():
        for el in sample:
            system = build_system(c, {other.name: OPEN for other in caps})
            e = system.incidence(el.a, el.b)
            e @ spla.splu(system.G.tocsc()).solve(e)

    def band_tests():
        for el in sample:
            for state in ("short", "open"):
                frequency_response(build_system(c, {el.name: state}), [f_test])

    scale = len(caps) / len(sample)
    t_r, _ = best_of(resistances, repeat)
    t_b, _ = best_of(band_tests, repeat)
    return t_r * scale, (t_r + t_b) * scale, len(sample) < len(caps)


def single_stage() -> Circuit:
    c = Circuit("hydrophone preamp (invented)")
    c.vsource("Vsig", "sig", "0")
    c.resistor("Rsig", "sig", "x", "600")
    c.capacitor("Cin", "x", "b", "4u7")
    c.resistor("Rbias", "b", "0", "8k2")
    c.bjt("Q1", collector="c", base="b", emitter="e", gm="80m", rpi="2k5", ro="50k", rb="100", cpi="20p", cmu="2p")
    c.resistor("Rc", "c", "0", "2k2")
    c.resistor("Re", "e", "0", "470")
    c.capacitor("Ce", "e", "0", "100u")
    c.output("c")
    return c


def best_of(fn, repeat):
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        result = fn()
        best = min(best, time.perf_counter() - t0)
    return best, result


def main(argv) -> int:
    sizes = SIZES[:3] if "--quick" in argv else SIZES
    t, _ = best_of(lambda: analyze(single_stage()), 5)
    print(f"single common-emitter stage: analyze() {1e3 * t:.1f} ms (target ≤ 20 ms)\n")
    print("analyze: the whole analysis (sweep, band test, corners, time constants, warnings)")
    print("OCTC: its open-circuit part (one LU, N solves, b2, eigenvalues)")
    print("naive R: rebuild + solve per capacitor for its resistance; naive all: that plus the")
    print("band test by rebuilding with each capacitor shorted and opened (~: timed on 40, scaled)\n")
    header = (f"{'network':<8}{'caps':>6}{'analyze':>10}{'OCTC':>9}{'naive R':>10}{'naive all':>11}"
              f"{'R: OCTC':>9}{'all':>7}   exact τ, b2")
    print(header)
    print("─" * len(header))
    for build in (mesh, ladder):
        for n in sizes:
            c = build(n)
            repeat = 3 if n <= 1000 else 1
            t_an, a = best_of(lambda: analyze(c), repeat)
            t_oc = min(_octc_seconds(c, a) for _ in range(repeat))
            t_r, t_all, scaled = naive_seconds(c, a.midband_frequency, repeat)
            mark = "~" if scaled else ""
            print(f"{build.__name__:<8}{n:>6}{t_an:>9.3f}s{t_oc:>8.3f}s{mark + f'{t_r:.3f}s':>10}"
                  f"{mark + f'{t_all:.3f}s':>11}{t_r / t_oc:>8.0f}×{t_all / t_an:>6.1f}×   "
                  f"{'yes' if a.b2 is not None else 'no (b1 from the diagonal only)'}")
    return 0


def _octc_seconds(c, a) -> float:
    """Time of the open-circuit part alone: one LU of the mid-band network and the port solves."""
    from bandsketch.engine.solve.timeconstants import factorize, open_circuit, port_columns, port_weights

    reactive = [el for el in c.elements.values() if type(el).__name__ in ("Capacitor", "Inductor")]
    high = [el for el in reactive if a.elements[el.name].band == "high"]
    t0 = time.perf_counter()
    mid = build_system(c, a.midband_states())
    open_circuit(factorize(mid.G, "benchmark"), port_columns(mid, high), port_weights(high))
    return time.perf_counter() - t0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
