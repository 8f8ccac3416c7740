"""Monte Carlo speed on every sample design: prints seconds per run, never asserts.

Run: ``python tests/benchmarks/bench_tolerance.py [SAMPLES]`` (default 10,000). The issue's
figure to beat is under 2 s for 10,000 samples of the common-emitter sample.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from bandsketch.engine import analyze  # noqa: E402
from bandsketch.engine.design.designfile import load_design  # noqa: E402
from bandsketch.engine.solve.mna import build_system  # noqa: E402
from bandsketch.engine.design.netlist import design_to_circuit  # noqa: E402
from bandsketch.engine.advise.tolerance import monte_carlo  # noqa: E402


def main() -> None:
    samples = int(sys.argv[1]) if len(sys.argv) > 1 else 10_000
    print(f"{'design':28s} {'unknowns':>8s} {'values':>6s} {'seconds':>8s} {'per 1k':>7s}")
    for path in sorted((ROOT / "sample_designs").glob("*.json")):
        doc = load_design(path)
        c = design_to_circuit(doc)
        a = analyze(c, bands=dict(doc.band_pins))
        t = time.perf_counter()
        s = monte_carlo(c, a, samples=samples, seed=1)
        dt = time.perf_counter() - t
        n = build_system(c).size
        print(f"{path.stem:28s} {n:8d} {len(s.tolerances):6d} {dt:8.2f} {1000 * dt / samples:7.3f}")


if __name__ == "__main__":
    main()
