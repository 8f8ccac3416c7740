"""Starting the window: ``run_gui`` is what the ``bandsketch`` command calls."""

from __future__ import annotations

import os
import sys

SETTLE_MS = 300
"""How long a screenshot waits for layout and first paints before grabbing."""
DEFAULT_SIZE = (1400, 900)


def _application():
    from PySide6.QtWidgets import QApplication

    app = QApplication.instance()
    if app is None:
        app = QApplication(sys.argv[:1])
    app.setOrganizationName("Bandsketch")
    app.setApplicationName("Bandsketch")
    if app.platformName() == "offscreen":
        _quiet_offscreen_notices()
    return app


def offscreen_application():
    """A QApplication on the offscreen platform (unless one runs already), for drawing
    without a window: the command line's report."""
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    return _application()


def _quiet_offscreen_notices() -> None:
    """Drop the offscreen platform's notice that it cannot pass size hints to a window
    system it does not have; every other Qt message still reaches stderr."""
    from PySide6.QtCore import qInstallMessageHandler

    def handler(mode, context, message):
        if "does not support propagateSizeHints" not in message:
            print(message, file=sys.stderr)

    qInstallMessageHandler(handler)


def _report_unexpected_in(window) -> None:
    """Show any exception a slot lets through in a dialog (Qt then carries on); the design stays."""
    from . import dialogs
    from .guard import REPORT_HINT, unexpected

    def hook(kind, exc, tb):
        line = unexpected(exc)
        print(f"bandsketch: unexpected failure ({line})", file=sys.stderr)
        dialogs.show_error(window, "Something went wrong",
                           f"Bandsketch met an unexpected failure ({line}). Your design is still open; "
                           f"save it under a new name to be safe. {REPORT_HINT}")

    sys.excepthook = hook


def _tear_down(app, window) -> None:
    """Close the window and delete it while the application still runs: its worker threads
    stopped first, and every deferred deletion done, so nothing is left for the interpreter
    to tear down in the wrong order at exit."""
    from PySide6.QtCore import QEvent

    window.stack.setClean()
    window.close()
    window.deleteLater()
    app.sendPostedEvents(None, QEvent.Type.DeferredDelete)
    app.processEvents()


def run_gui(design_path: str | None = None, screenshot: str | None = None,
            size: tuple[int, int] | None = None, select: str | None = None, sample: str | None = None) -> int:
    """Open the main window, optionally on a design; with ``screenshot``, save a picture and exit.

    Parameters
    ----------
    design_path : str, optional
        Design file to open.
    screenshot : str, optional
        PNG file: the window opens offscreen, settles, is grabbed whole, and the program ends.
    size : (int, int), optional
        Window size in pixels.
    select : str, optional
        With ``screenshot``: the capacitor or inductor (``Cin``, ``Q1.cmu``) whose test
        picture is drawn on the canvas.
    sample : str, optional
        A shipped sample to open instead of ``design_path`` (as an untitled copy).

    Returns
    -------
    int
        Exit status: 0 on success, 2 if the design (for a screenshot) cannot be read or
        ``select`` names no capacitor or inductor of it (no picture is written), 1 if the
        picture cannot be written or the system lacks a library Qt's X11 platform needs
        (:mod:`bandsketch.app.syslibs`; the message names the packages to install).
    """
    if not screenshot:
        from .syslibs import install_hint, missing_xcb_libraries

        missing = missing_xcb_libraries()
        if missing:
            # Qt would abort the process (exit 134) with a line about its "xcb" plugin.
            print(f"bandsketch: {install_hint(missing)}", file=sys.stderr)
            return 1
    app = offscreen_application() if screenshot else _application()

    from PySide6.QtCore import QEventLoop, QTimer

    from bandsketch.engine.design.samples import load_named
    from bandsketch.engine.core.errors import DesignFileError

    from .main_window import MainWindow

    if screenshot:
        doc = None
        if design_path or sample:
            try:
                doc = load_named(design_path, sample)
            except DesignFileError as exc:
                print(f"bandsketch: {exc}", file=sys.stderr)
                return 2
        window = MainWindow(keep_recovery=False)
        window.resize(*(size or DEFAULT_SIZE))
        window.show()
        if doc is not None:
            window.set_document(doc, None if sample else design_path)
        if select:
            window.analysis_panel.runner.wait()
            problem = window.analysis_panel.select_element(select)
            if problem:
                print(f"bandsketch: --select {select}: {problem}", file=sys.stderr)
                _tear_down(app, window)
                return 2
        loop = QEventLoop()
        QTimer.singleShot(SETTLE_MS // 2, window.view.zoom_to_fit)
        QTimer.singleShot(SETTLE_MS, loop.quit)
        loop.exec()
        window.analysis_panel.runner.wait()
        ok = window.grab().save(screenshot)
        _tear_down(app, window)
        if not ok:
            print(f"bandsketch: could not write {screenshot}", file=sys.stderr)
        return 0 if ok else 1

    window = MainWindow()
    window.resize(*(size or DEFAULT_SIZE))
    window.show()
    _report_unexpected_in(window)

    def start():
        # Work recovered from a crash comes first; the design named on the command line
        # then opens only if nothing was restored.
        if window.offer_recovery():
            return
        if sample:
            window.open_sample(sample)
        elif design_path:
            window.open_design(design_path)

    QTimer.singleShot(0, start)
    return app.exec()
