"""How sheet edits grow with the sheet: one drag step of everything, a paste, an undo.

Run as a script (``python tests/benchmarks/bench_sheet_edits.py``); pytest does not collect it.
The sheet is the 22-part cascode sample copied side by side 1, 2, 4, 8 and 18 times (22 to
396 parts). Each figure is the median wall time of the edit through the window's editor (an
undoable command, the document's notices, the sheet's items and junction dots brought up to
date, pending events processed); the analysis a finished edit starts is not included.
Target: a drag step of everything under 50 ms at ~400 parts, and growth close to linear.
"""

from __future__ import annotations

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
from bandsketch.app.commands import RunCommand, new_run  # noqa: E402
from bandsketch.app.main_window import MainWindow  # noqa: E402
from bandsketch.engine.design.designfile import load_design  # noqa: E402
from bandsketch.engine.design.parts import GRID  # noqa: E402

STAGE = ROOT / "sample_designs" / "cascode_line_receiver.json"
COPIES = (1, 2, 4, 8, 18)
REPEATS = 5
SPACING = 60 * GRID
"""Scene units between copies, wider than the stage."""


def _timed(action) -> float:
    start = time.perf_counter()
    action()
    QCoreApplication.processEvents()
    return time.perf_counter() - start


def main() -> None:
    app = QApplication.instance() or QApplication(sys.argv[:1])
    stage = load_design(STAGE)
    print(f"{'parts':>6} {'wires':>6} {'drag step':>10} {'paste':>8} {'undo':>8}  (median ms of {REPEATS})")
    previous = None
    for copies in COPIES:
        window = MainWindow(keep_recovery=False)
        window.analysis_panel.runner.wait()
        for k in range(copies):
            window.editor.patch(edits.paste(window.doc, stage, k * SPACING, 0), "Paste")
        window.analysis_panel.runner.wait()
        QCoreApplication.processEvents()
        doc, editor = window.doc, window.editor
        drag, paste, undo = [], [], []
        for _ in range(REPEATS):
            names, wires = list(doc.parts), list(doc.wires)
            run = new_run()
            drag.append(_timed(lambda: editor.push(
                RunCommand(doc, edits.move(doc, names, wires, GRID, 0), "Move", run), finished=False)))
            editor.finish()
            undo.append(_timed(editor.undo))
            paste.append(_timed(lambda: editor.patch(edits.paste(doc, stage, copies * SPACING, 0), "Paste")))
            window.analysis_panel.runner.wait()
            editor.undo()
            window.analysis_panel.runner.wait()
        ms = [1000 * statistics.median(v) for v in (drag, paste, undo)]
        growth = "" if previous is None else f"   drag ×{ms[0] / previous[1]:.1f} for parts ×{len(doc.parts) / previous[0]:.1f}"
        print(f"{len(doc.parts):>6} {len(doc.wires):>6} {ms[0]:>10.1f} {ms[1]:>8.1f} {ms[2]:>8.1f}{growth}")
        previous = (len(doc.parts), ms[0])
        window.stack.setClean()
        window.close()
        window.deleteLater()
        QCoreApplication.processEvents()
    app.quit()


if __name__ == "__main__":
    main()
