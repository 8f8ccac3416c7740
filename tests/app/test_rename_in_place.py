"""Double-clicking a part's name on the sheet renames it in place, one undo step (common
practice, no source)."""

from PySide6.QtCore import Qt

from sheet import at, place


def double_click_name(qtbot, window, name):
    item = window.scene.part_item(name)
    spot = item.mapToScene(item.name_rect().center())
    qtbot.mouseDClick(window.view.viewport(), Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier,
                      at(window, spot.x(), spot.y()))
    return window.inplace


def test_double_clicking_the_name_renames_the_part_in_one_step(qtbot, window):
    r = place(qtbot, window, "Resistor", 200, 200)
    window.scene.clearSelection()
    steps = window.stack.count()
    editor = double_click_name(qtbot, window, r)
    assert editor is not None and editor.isVisible() and editor.text() == r
    assert editor.selectedText() == r, "typing replaces the old name"
    qtbot.keyClicks(editor, "Rload")
    qtbot.keyClick(editor, Qt.Key.Key_Return)
    assert list(window.doc.parts) == ["Rload"]
    assert window.doc.parts["Rload"].params["value"] == "10k"
    assert window.stack.count() == steps + 1
    window.act_undo.trigger()
    assert list(window.doc.parts) == [r]


def test_a_taken_name_is_refused_with_the_reason_and_the_editor_stays(qtbot, window):
    r1 = place(qtbot, window, "Resistor", 200, 200)
    r2 = place(qtbot, window, "Resistor", 400, 200)
    editor = double_click_name(qtbot, window, r2)
    qtbot.keyClicks(editor, r1.lower())
    qtbot.keyClick(editor, Qt.Key.Key_Return)
    assert set(window.doc.parts) == {r1, r2}
    assert editor.isVisible() and r1 in editor.reason.text()
    qtbot.keyClick(editor, Qt.Key.Key_Escape)
    assert not editor.isVisible() and set(window.doc.parts) == {r1, r2}


def test_double_clicking_the_body_still_edits_the_value(qtbot, window):
    r = place(qtbot, window, "Resistor", 200, 200)
    qtbot.mouseDClick(window.view.viewport(), Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier,
                      at(window, 200, 200))
    assert window.inplace.field.key == "value" and window.inplace.text() == "10k"
