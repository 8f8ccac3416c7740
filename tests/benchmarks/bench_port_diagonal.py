"""Benchmark: the port diagonal by selected inversion against two triangular solves per port.

Run as a script: ``PYTHONPATH=. python tests/benchmarks/bench_port_diagonal.py [--quick]``.
For the invented sensor mesh and cable ladder it times diag(Uᵀ A⁻¹ U) on the two matrices
analyze() takes it of: the band-test matrix G + jωC at the mid-band frequency (complex) and
the mid-band network's G (real), and prints the whole analyze() beside them. "solves" is the way before selected inversion: SuperLU's default factors
(COLAMD, partial pivoting) and chunked dense right-hand sides; "selected" is
:func:`bandsketch.engine.solve.timeconstants.port_diagonal` on the engine's factors. The
factorisations are not timed; the difference is the largest relative one over the ports.
"""

from __future__ import annotations

import math
import sys
import time

import numpy as np
import scipy.sparse.linalg as spla

from bench_timeconstants import best_of, ladder, mesh
from bandsketch.engine import analyze
from bandsketch.engine.network.elements import Capacitor, Inductor
from bandsketch.engine.solve import timeconstants
from bandsketch.engine.solve.mna import build_system

SIZES = (5000, 10000)


class _DefaultLU:
    """SuperLU's factors as the engine made them before (default ordering and pivoting)."""

    def __init__(self, A):
        self._lu = spla.splu(A)
        self.dtype = np.result_type(A.dtype, float)

    def solve(self, rhs, trans="N"):
        return self._lu.solve(np.asarray(rhs, dtype=self.dtype), trans=trans)


def _matrices(c, a):
    """(name, A, U) of the two diagonals analyze() asks for, at its mid-band state."""
    reactive = [el for el in c.elements.values() if isinstance(el, (Capacitor, Inductor))]
    full = build_system(c)
    w = 2 * math.pi * a.midband_frequency
    mid = build_system(c, a.midband_states())
    return [("G + jωC", (full.G + 1j * w * full.C).tocsc(), timeconstants.port_columns(full, reactive, dense=False)),
            ("mid G", mid.G.tocsc(), timeconstants.port_columns(mid, reactive, dense=False))]


def main(argv) -> int:
    sizes = SIZES[:1] if "--quick" in argv else SIZES
    header = f"{'network':<8}{'caps':>7}  {'matrix':<9}{'solves':>9}{'selected':>10}{'rel. diff':>11}{'analyze':>10}"
    print(header)
    print("─" * len(header))
    for build in (mesh, ladder):
        for n in sizes:
            c = build(n)
            t_an, a = best_of(lambda: analyze(c), 1 if n > 5000 else 2)
            for k, (name, A, U) in enumerate(_matrices(c, a)):
                old_lu, new_lu = _DefaultLU(A), timeconstants.factorize(A, "benchmark")
                saved = timeconstants.SELECTED_INVERSE_PORTS
                timeconstants.SELECTED_INVERSE_PORTS = sys.maxsize
                try:
                    t_old, z_old = best_of(lambda: timeconstants.port_diagonal(old_lu, U), 1)
                finally:
                    timeconstants.SELECTED_INVERSE_PORTS = saved
                t_new, z_new = best_of(lambda: timeconstants.port_diagonal(new_lu, U), 3)
                scale = np.abs(z_old)
                diff = float(np.max(np.abs(z_new - z_old)[scale > 0] / scale[scale > 0]))
                total = f"{t_an:.2f}s" if k == 0 else ""
                print(f"{build.__name__ if k == 0 else '':<8}{n if k == 0 else '':>7}  {name:<9}"
                      f"{t_old:>8.3f}s{t_new:>9.3f}s{diff:>11.1e}{total:>10}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
