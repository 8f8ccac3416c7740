"""Retake the README's screenshots: ``python docs/make_screenshots.py`` (offscreen, no display).

Each picture is the window at 1400×900 (the step view 1400×1000 with the response pane
taller) on a shipped sample, grabbed the way ``bandsketch --screenshot`` grabs it.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtCore import QCoreApplication, QEvent  # noqa: E402
from PySide6.QtWidgets import QApplication  # noqa: E402

from bandsketch.app.main_window import MainWindow  # noqa: E402
from bandsketch.engine.design.samples import load_sample  # noqa: E402

OUT = Path(__file__).resolve().parent / "screenshots"


def _settle(app) -> None:
    for _ in range(10):
        app.processEvents()
        QCoreApplication.sendPostedEvents(None, QEvent.Type.DeferredDelete)


def _window(app, sample: str, size=(1400, 900)) -> MainWindow:
    window = MainWindow(keep_recovery=False)
    window.resize(*size)
    window.set_document(load_sample(sample), None)
    window.analysis_panel.runner.wait()
    window.show()
    _settle(app)
    return window


def _done(app, window: MainWindow, name: str) -> None:
    window.analysis_panel.runner.wait()
    _settle(app)
    window.grab().save(str(OUT / name))
    window.stack.setClean()
    window.close()
    window.deleteLater()
    _settle(app)
    print(f"wrote {OUT / name}")


def main() -> None:
    app = QApplication.instance() or QApplication(sys.argv[:1])
    # The common-emitter sample with the collector-base capacitance's test picture.
    window = _window(app, "ce_hydrophone_preamp")
    window.analysis_panel.select_element("Q1.cmu")
    _done(app, window, "ce_hydrophone_preamp_select.png")
    # The cable driver's step response against its time targets, the response pane taller.
    window = _window(app, "follower_cable_driver", (1400, 1000))
    panel = window.analysis_panel
    panel.plots.setCurrentWidget(panel.time)
    window.splitter.setSizes([430, 520])
    _done(app, window, "follower_cable_driver_step.png")
    # Mid-scrub: the emitter bypass stepped down twice through its E series.
    window = _window(app, "ce_hydrophone_preamp")
    for item in window.scene.items():
        if getattr(item, "name", None) == "CE":
            item.setSelected(True)
    _settle(app)
    for _ in range(2):
        window.step_value(-1)
        window.analysis_panel.runner.wait()
        _settle(app)
    _done(app, window, "scrub_ghost.png")


if __name__ == "__main__":
    main()
