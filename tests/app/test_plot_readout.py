"""Hovering the Bode plot reads the response out without moving anything beside it (common
practice, no source: a readout that resizes its neighbours makes them jump under the eye)."""

from PySide6.QtCore import QPoint
from PySide6.QtTest import QTest

from bandsketch.app.gui import DEFAULT_SIZE


def test_hovering_the_bode_plot_leaves_the_bars_pane_as_it_was(qtbot, window):
    window.resize(*DEFAULT_SIZE)
    window.open_sample("cascode_line_receiver")
    panel = window.analysis_panel
    panel.runner.wait()
    qtbot.wait(20)
    bars_pane = panel.split.widget(0)
    before = (panel.split.sizes(), bars_pane.width(), bars_pane.verticalScrollBar().isVisible())
    canvas = panel.bode.canvas
    readings = set()
    for i in range(1, 12):
        QTest.mouseMove(canvas.viewport(), QPoint(canvas.width() * i // 12, canvas.height() // 3))
        qtbot.wait(5)
        readings.add(panel.hover_readout.text())
        assert (panel.split.sizes(), bars_pane.width(), bars_pane.verticalScrollBar().isVisible()) == before
    assert len(readings - {""}) >= 5, "the readout followed the pointer"
    assert all(panel.hover_readout.fontMetrics().horizontalAdvance(t) <= panel.hover_readout.width()
               for t in readings), "every reading fits the readout whole"
