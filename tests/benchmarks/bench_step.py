"""Benchmark: 2,000-point step responses of every sample and of an RC mesh of 400 capacitors.

Run as a script: ``python tests/benchmarks/bench_step.py``. Prints the median time of
a 2,000-point step response (``bandsketch.engine.solve.step.step_response``, which
``Analysis.step_response()`` calls once and keeps; the analysis itself is not timed) and which way the waveform
was found (modal: poles and residues; integrated: L-stable steps). Targets: ≤ 5 ms for a
sample, ≤ 200 ms for the mesh (the mesh is the invented "sensor array" of bench_timeconstants).
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_timeconstants import mesh  # noqa: E402

from bandsketch.engine import analyze, load_design  # noqa: E402
from bandsketch.engine.design.netlist import design_to_circuit  # noqa: E402
from bandsketch.engine.solve.step import step_response  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]


def median_ms(fn, repeat):
    fn()
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return 1e3 * statistics.median(times)


def main():
    print(f"{'network':34} {'unknowns':>8} {'method':>10} {'step (ms)':>10}  target")
    for path in sorted((ROOT / "sample_designs").glob("*.json")):
        a = analyze(design_to_circuit(load_design(path)))
        ms = median_ms(lambda: step_response(a), 15)
        print(f"{path.stem:34} {a._system.size:8d} {a.step_response().method:>10} {ms:10.2f}  ≤ 5")
    a = analyze(mesh(400))
    ms = median_ms(lambda: step_response(a), 3)
    print(f"{'RC mesh, 400 capacitors':34} {a._system.size:8d} {a.step_response().method:>10} {ms:10.1f}  ≤ 200")


if __name__ == "__main__":
    main()
