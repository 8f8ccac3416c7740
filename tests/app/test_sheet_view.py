"""Zoom to selection, and each design coming back at the zoom and scroll it was left at
(common practice, no source)."""

import shutil
from pathlib import Path

import pytest
from PySide6.QtCore import QPoint, Qt

from bandsketch.app.main_window import MainWindow
from sheet import place

STAGE = Path(__file__).with_name("invented_ce_stage.json")


def test_zoom_to_selection_brings_the_selected_part_close_and_whole_into_view(qtbot, window):
    window.open_design(str(STAGE))
    fitted = window.view.zoom()
    name = next(n for n, p in window.doc.parts.items() if p.kind == "capacitor")
    window.scene.select([name])
    window.view.setFocus()
    qtbot.keyClick(window.view, Qt.Key.Key_9, Qt.KeyboardModifier.ControlModifier)
    assert window.view.zoom() > fitted * 1.3
    item = window.scene.part_item(name).sceneBoundingRect()
    shown = window.view.mapToScene(window.view.viewport().rect()).boundingRect()
    assert shown.contains(item)


def test_zoom_to_selection_with_nothing_selected_says_so_and_stays(qtbot, window):
    place(qtbot, window, "Resistor", 200, 200)
    window.scene.clearSelection()
    before = window.view.transform()
    window.act_zoom_selection.trigger()
    assert window.view.transform() == before
    assert "Nothing is selected" in window.statusBar().currentMessage()


def _look_closely(qtbot, window):
    """Zoom in (View > Zoom in) and pan with the middle button, as a user does."""
    window.act_zoom_in.trigger()
    window.act_zoom_in.trigger()
    vp = window.view.viewport()
    start, end = vp.rect().center(), vp.rect().center() + QPoint(-120, -60)
    before = window.view.centre()
    qtbot.mousePress(vp, Qt.MouseButton.MiddleButton, Qt.KeyboardModifier.NoModifier, start)
    qtbot.mouseMove(vp, end)
    qtbot.mouseRelease(vp, Qt.MouseButton.MiddleButton, Qt.KeyboardModifier.NoModifier, end)
    assert (window.view.centre() - before).manhattanLength() > 50, "the sheet panned"
    return window.view.zoom(), window.view.centre()


def test_each_design_comes_back_where_it_was_left(qtbot, window, tmp_path):
    first, second = tmp_path / "first.json", tmp_path / "second.json"
    shutil.copy(STAGE, first)
    shutil.copy(STAGE, second)
    window.open_design(str(first))
    zoom, centre = _look_closely(qtbot, window)
    window.open_design(str(second))
    assert abs(window.view.zoom() - zoom) > 0.1, "a design never shown opens fitted"
    window.open_design(str(first))
    assert window.view.zoom() == pytest.approx(zoom)
    assert (window.view.centre() - centre).manhattanLength() < 2


def test_a_new_window_opens_a_design_where_the_last_one_left_it(qtbot, window, tmp_path):
    design = tmp_path / "stage.json"
    shutil.copy(STAGE, design)
    window.open_design(str(design))
    zoom, centre = _look_closely(qtbot, window)
    window.close()
    again = MainWindow(recovery_folder=tmp_path / "recovery2")
    again.resize(1200, 800)
    again.show()
    qtbot.waitExposed(again)
    again.open_design(str(design))
    assert again.view.zoom() == pytest.approx(zoom)
    assert (again.view.centre() - centre).manhattanLength() < 2
    again.close()
    again.deleteLater()


def test_a_sample_is_remembered_by_its_name(qtbot, window):
    window.open_sample("ce_hydrophone_preamp")
    zoom, centre = _look_closely(qtbot, window)
    window.new_design()
    window.open_sample("ce_hydrophone_preamp")
    assert window.view.zoom() == pytest.approx(zoom)
