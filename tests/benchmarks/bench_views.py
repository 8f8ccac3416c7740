"""Edit-to-updated-view time of the analysis views, on the samples and on a 300-part design.

Run as a script (``python tests/benchmarks/bench_views.py``); pytest does not collect it.
Each edit changes one capacitor's value through the window's editor (an undoable step,
exactly as the properties panel does it), to between 0.5 and 2 times its value and back,
and the clock stops once the bars, the Bode plot and the verdict show the new analysis,
whether it ran on the UI thread or a worker.
Targets: a median of 20 ms or less on every sample (40 ms with the part selected), 50 ms on
the ladder, and a scrub of 30 updates/s or more.
"""

from __future__ import annotations

import argparse
import os
import statistics
import sys
import time
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from PySide6.QtCore import QCoreApplication  # noqa: E402
from PySide6.QtWidgets import QApplication  # noqa: E402

from bandsketch.app import edits  # noqa: E402
from bandsketch.app.analysis.runner import analyse_design  # noqa: E402
from bandsketch.app.main_window import MainWindow  # noqa: E402
from bandsketch.engine.design.designfile import load_design  # noqa: E402
from bandsketch.engine.design.document import Document, Part  # noqa: E402
from bandsketch.engine.core.values import format_value, parse_value  # noqa: E402

EDITS = 15
FACTORS = (0.5, 0.7, 0.9, 1.2, 1.5, 2.0)
"""What the edits multiply the capacitor by, in turn (each edit after one puts it back)."""
STAGES = 50
"""RC sections of the generated ladder: six parts each (R, C, three net labels, a ground),
with the source, its ground and label and the probe 305 parts."""


def ladder(stages: int = STAGES) -> Document:
    """An RC ladder drawn with net labels: Vsig → R1 → n1 (C1 to ground) → R2 → ... → output."""
    doc = Document("generated RC ladder (benchmark)")
    doc.add_part(Part("vsource", "Vsig", 0, 40))
    doc.add_part(Part("ground", "G0", 0, 80))
    doc.add_part(Part("label", "L0", 0, 0, params={"net": "n0"}))
    for i in range(1, stages + 1):
        x = 60 * i
        doc.add_part(Part("resistor", f"R{i}", x, 40, params={"value": "1k"}))
        doc.add_part(Part("label", f"La{i}", x, 0, params={"net": f"n{i - 1}"}))
        doc.add_part(Part("label", f"Lb{i}", x, 80, params={"net": f"n{i}"}))
        doc.add_part(Part("capacitor", f"C{i}", x, 240, params={"value": "1n"}))
        doc.add_part(Part("label", f"Lc{i}", x, 200, params={"net": f"n{i}"}))
        doc.add_part(Part("ground", f"G{i}", x, 280))
    doc.add_part(Part("output", "OUT", 60 * stages, 140))
    doc.add_part(Part("label", "Lout", 60 * stages, 140, params={"net": f"n{stages}"}))
    doc.set_meta(input_source="Vsig")
    return doc


def _capacitor(doc) -> str:
    return next(p.name for p in doc.parts.values() if p.kind == "capacitor")


def _shown(panel) -> None:
    """Wait until the views show the analysis of the document as it is now."""
    while panel.outcome is None or panel.outcome.generation != panel.runner.generation:
        QCoreApplication.processEvents()
        panel.runner.pool.waitForDone(1)
    QCoreApplication.processEvents()


def time_edits(window, doc, edits_n: int = EDITS, selected: bool = False) -> list:
    """Milliseconds from each value edit to the views showing its analysis; with ``selected``
    the capacitor edited is selected on the sheet, so its test picture follows too."""
    window.set_document(doc, None)
    panel = window.analysis_panel
    panel.runner.wait(60000)
    name = _capacitor(window.doc)
    if selected:
        window.scene.select([name])
        _shown(panel)
    original = window.doc.parts[name].params["value"]
    farads = parse_value(original)
    times = []
    for k in range(edits_n):
        text = original if k % 2 else format_value(farads * FACTORS[k // 2 % len(FACTORS)])
        start = time.perf_counter()
        window.editor.patch(edits.edit_field(window.doc, name, "value", text), f"Edit {name}")
        _shown(panel)
        times.append(1000 * (time.perf_counter() - start))
    if selected:
        window.scene.select([])
    return times


def scrub_rate(window, doc, steps: int = 30) -> float:
    """Updates per second of a value scrub: a selected capacitor stepped through its E series
    (ten steps up, ten down, ...), each step shown (bars, Bode plot with its ghost, verdict,
    test picture) before the next."""
    window.set_document(doc, None)
    panel = window.analysis_panel
    panel.runner.wait(60000)
    window.scene.select([_capacitor(window.doc)])
    _shown(panel)
    up, down = window.step_actions[0], window.step_actions[1]
    start = time.perf_counter()
    for k in range(steps):
        (up if (k // 10) % 2 == 0 else down).trigger()
        _shown(panel)
    rate = steps / (time.perf_counter() - start)
    window.scrub.end()
    window.scene.select([])
    return rate


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--only", metavar="TEXT", help="measure only the designs whose name holds TEXT")
    parser.add_argument("--edits", type=int, default=EDITS, help=f"edits per measurement (default {EDITS})")
    parser.add_argument("--scrub", type=int, default=30, help="scrub steps (default 30; 0 skips the scrub)")
    args = parser.parse_args(argv)
    app = QApplication.instance() or QApplication(sys.argv[:1])
    window = MainWindow(keep_recovery=False)
    window.resize(1400, 900)
    window.show()
    rows = [(path.stem, lambda path=path: load_design(path))
            for path in sorted((ROOT / "sample_designs").glob("*.json"))]
    rows.append((f"generated ladder, {len(ladder().parts)} parts", ladder))
    rows = [(label, make) for label, make in rows if args.only is None or args.only in label]
    print(f"{'design':40s} {'parts':>5s} {'median ms':>10s} {'max ms':>8s} {'selected ms':>12s} "
          f"{'scrub /s':>9s} {'analyse ms':>11s} {'thread':>7s}")
    for label, make in rows:
        doc = make()
        threaded_before = window.analysis_panel.runner.threaded_runs
        times = time_edits(window, make(), args.edits)
        threaded = window.analysis_panel.runner.threaded_runs - threaded_before
        picked = statistics.median(time_edits(window, make(), args.edits, selected=True))
        rate = scrub_rate(window, make(), args.scrub) if args.scrub else float("nan")
        alone = 1000 * analyse_design(doc).seconds
        print(f"{label:40s} {len(doc.parts):5d} {statistics.median(times):10.1f} {max(times):8.1f} "
              f"{picked:12.1f} {rate:9.1f} {alone:11.1f} {threaded:4d}/{len(times)}")
    print("\nmedian and max: edit to view; selected: median with the edited capacitor selected; "
          "scrub: updates/s.\nanalyse ms: design -> circuit -> analyze -> plot data, alone; "
          "thread: edits run on the worker")
    window.stack.setClean()
    window.close()
    del app
    return 0


if __name__ == "__main__":
    sys.exit(main())
