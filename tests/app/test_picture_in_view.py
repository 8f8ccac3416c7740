"""Clicking a capacitor on any sample, at the default window size, shows its test picture's
label whole on the visible sheet, checked on a grab of the sheet (common practice, no
source: a readout the user must scroll to find is not read)."""

import pytest
from PySide6.QtCore import QRect
from PySide6.QtGui import QColor

from bandsketch.app.gui import DEFAULT_SIZE
from bandsketch.engine.design.samples import list_samples
from sheet import click


def _label_pixels(window):
    """The label's rectangle in the sheet's pixels, and the grab of the sheet."""
    view = window.view
    rect = view.mapFromScene(window.analysis_panel.overlay.label_rect()).boundingRect()
    return rect, view.viewport().grab().toImage()


@pytest.mark.parametrize("sample", [s.name for s in list_samples()])
def test_a_clicked_capacitors_label_is_whole_on_the_visible_sheet(qtbot, window, sample):
    window.resize(*DEFAULT_SIZE)
    qtbot.wait(10)
    window.open_sample(sample)
    window.analysis_panel.runner.wait()
    qtbot.wait(10)
    capacitors = [n for n, p in window.doc.parts.items() if p.kind == "capacitor"]
    assert capacitors
    for name in capacitors:
        window.scene.clearSelection()
        part = window.doc.parts[name]
        click(qtbot, window, part.x, part.y)
        assert window.analysis_panel.focus == name, f"{sample}: clicking {name} shows its picture"
        rect, image = _label_pixels(window)
        shown = QRect(0, 0, image.width(), image.height())
        assert shown.contains(rect), f"{sample} {name}: label {rect} outside the sheet in view {shown}"
        # The label is drawn there: its border, in the band's colour, runs along its top edge.
        accent = window.analysis_panel.overlay._colours.band(window.analysis_panel.overlay.geometry.band)
        def inked(x):
            for y in range(rect.top() - 2, rect.top() + 4):
                c = QColor(image.pixel(x, y))
                if abs(c.red() - accent.red()) + abs(c.green() - accent.green()) + abs(c.blue() - accent.blue()) < 120:
                    return True
            return False

        columns = range(rect.left() + 10, rect.right() - 10, 7)
        assert sum(map(inked, columns)) > len(columns) / 2, \
            f"{sample} {name}: the label's border is not where it is said to be"
        assert window.view.zoom() > 0.6, "the sheet was not zoomed down to make room"
