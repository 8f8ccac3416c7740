"""Corner labels on the Bode plot never print over each other, and subscripts on the
Properties panel keep their descenders (common practice, no source)."""

from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QColor
from PySide6.QtWidgets import QLabel

from bandsketch.app.gui import DEFAULT_SIZE
from bandsketch.app.properties import caption
from sheet import at


def _type_in_place(qtbot, window, name, text):
    part = window.doc.parts[name]
    qtbot.mouseDClick(window.view.viewport(), Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier,
                      at(window, part.x, part.y))
    editor = window.inplace
    editor.selectAll()
    qtbot.keyClicks(editor, text)
    qtbot.keyClick(editor, Qt.Key.Key_Return)


def _labels(bode):
    return {slot: label for slot, (_, _, label) in bode.markers.items() if label.isVisible()}


def test_corner_labels_stay_apart_when_the_corners_come_close(qtbot, window):
    window.resize(*DEFAULT_SIZE)
    window.open_sample("ce_hydrophone_preamp")
    panel = window.analysis_panel
    panel.runner.wait()
    # A small bypass and coupling capacitor pull f_L up to a few kHz, a couple of decades under f_H.
    _type_in_place(qtbot, window, "CE", "1u")
    _type_in_place(qtbot, window, "Cout", "100n")
    panel.runner.wait()
    qtbot.wait(50)
    labels = _labels(panel.bode)
    assert len(labels) == 4, "both corners, estimated and exact, are labelled"
    for estimated in (True, False):
        high = labels[("high", estimated)].sceneBoundingRect()
        low = labels[("low", estimated)].sceneBoundingRect()
        assert not high.intersects(low), f"the {'estimated' if estimated else 'exact'} labels overprint"
    # With the corners far apart again (as shipped) the labels point into the mid band.
    window.act_undo.trigger()
    window.act_undo.trigger()
    panel.runner.wait()
    qtbot.wait(50)
    labels = _labels(panel.bode)
    box = panel.bode.magnitude.getViewBox()
    for (corner, estimated), label in labels.items():
        line = box.mapViewToScene(QPointF(panel.bode.markers[(corner, estimated)][0][0].value(), 0)).x()
        rect = label.sceneBoundingRect()
        assert (rect.right() <= line + 1) if corner == "high" else (rect.left() >= line - 1)


def _ink_bottom(html):
    label = QLabel(html)
    label.adjustSize()
    image = label.grab().toImage()
    return max(y for y in range(image.height())
               if any(QColor(image.pixel(x, y)).lightness() < 120 for x in range(image.width())))


def test_a_subscript_g_keeps_its_tail(qtbot):
    # A clipped descender makes C_gs ink stop where C_ss's does ("Cgs" read "Cqs").
    assert _ink_bottom(caption("C_gs")) > _ink_bottom(caption("C_ss"))


def test_the_derived_values_panel_writes_cgs_whole(qtbot, window):
    window.open_sample("cs_partly_bypassed")
    mos = next(n for n, p in window.doc.parts.items() if p.kind == "mosfet")
    window.scene.select([mos])
    shown = window.properties.findChild(QLabel, "derived_cgs")
    form = window.properties._derived
    label = form.labelForField(shown)
    assert label.text() == caption("C_gs")
