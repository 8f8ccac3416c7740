"""Advisor speed on every sample design: prints seconds, never asserts.

Run: ``python tests/benchmarks/bench_advise.py``. Each sample gets the test's targets (f_H a
quarter higher than now, the gain held within ±1 dB); the figures are the one-knob
suggestions (every knob's root find plus every candidate re-analysed, yields included) and
a two-knob search over the pair the advisor proposes (batched screen plus full confirmation).
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from bandsketch.engine.advise.effect import effect_of  # noqa: E402
from bandsketch.engine.advise.search import search  # noqa: E402
from bandsketch.engine.advise.suggest import suggest  # noqa: E402
from bandsketch.engine.advise.targets import parse_targets  # noqa: E402
from bandsketch.engine.design.designfile import load_design  # noqa: E402


def main() -> None:
    print(f"{'design':28s} {'knobs':>5s} {'rows':>5s} {'meet':>5s} {'suggest s':>9s} {'combos':>7s} {'search s':>8s}")
    for path in sorted((ROOT / "sample_designs").glob("*.json")):
        doc = load_design(path)
        for key in list(doc.targets):
            doc.set_target(key, None)
        now = effect_of(doc, parse_targets({}))
        doc.set_target("f_high_min", f"{1.25 * now.f_high:.6g}")
        doc.set_target("gain", f"{abs(now.gain):.6g}")
        targets = parse_targets(doc.targets)
        t = time.perf_counter()
        advice = suggest(doc, targets)
        t_suggest = time.perf_counter() - t
        t = time.perf_counter()
        found = search(doc, targets)
        t_search = time.perf_counter() - t
        meeting = sum(s.meets_all for s in advice.suggestions)
        print(f"{path.stem:28s} {len(advice.knobs):5d} {len(advice.suggestions):5d} {meeting:5d} "
              f"{t_suggest:9.2f} {found.combinations:7d} {t_search:8.2f}")


if __name__ == "__main__":
    main()
