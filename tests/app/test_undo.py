"""Every kind of edit undoes and redoes exactly, back to the empty sheet and forward again."""

from PySide6.QtCore import Qt

from bandsketch.app import edits
from bandsketch.app.commands import RenameCommand
from sheet import click, drag, place, snapshot, wire


def test_every_edit_undoes_to_empty_and_redoes_to_the_end(qtbot, window):
    doc, states = window.doc, [snapshot(window.doc)]

    def step():
        states.append(snapshot(doc))

    v = place(qtbot, window, "Voltage source", 60, 200); step()
    r = place(qtbot, window, "Resistor", 160, 160, rotate=1); step()
    c = place(qtbot, window, "Capacitor", 260, 200); step()
    place(qtbot, window, "Ground", 60, 240); step()
    wire(qtbot, window, (60, 160), (120, 160)); step()
    wire(qtbot, window, (200, 160), (260, 160)); step()
    drag(qtbot, window, (260, 200), (300, 220)); step()                       # move, one step
    window.scene.select([c]); window.act_rotate.trigger(); step()
    window.act_mirror.trigger(); step()
    window.editor.patch(edits.edit_field(doc, r, "value", "4k7"), "Set"); step()
    window.editor.push(RenameCommand(doc, r, "Rload")); step()
    window.editor.patch(edits.pin_band(doc, c, "low"), "Pin band"); step()
    window.editor.patch(edits.set_input(doc, None), "Input"); step()
    window.editor.patch(edits.set_meta(doc, "title", "Invented undo check"), "Title"); step()
    window.editor.patch(edits.set_target(doc, "f_high_min", "1M"), "Target"); step()
    window.editor.patch(edits.set_target(doc, "f_high_min", "2M"), "Target"); step()
    window.scene.select(["Rload"]); window.act_copy.trigger(); window.act_paste.trigger(); step()
    window.act_duplicate.trigger(); step()
    window.scene.select([v]); window.act_delete.trigger(); step()
    assert len(set(map(repr, states))) == len(states), "every gesture changed the design"
    assert window.stack.count() == len(states) - 1, "one undo step per gesture"

    for expected in reversed(states[:-1]):
        window.act_undo.trigger()
        assert snapshot(doc) == expected
    assert doc.is_empty()
    for expected in states[1:]:
        window.act_redo.trigger()
        assert snapshot(doc) == expected


def test_undo_of_delete_brings_back_input_and_band_pin(qtbot, window):
    v = place(qtbot, window, "Voltage source", 60, 200)
    c = place(qtbot, window, "Capacitor", 160, 200)
    window.editor.patch(edits.pin_band(window.doc, c, "high"), "Pin band")
    before = snapshot(window.doc)
    window.act_select_all.trigger()
    window.act_delete.trigger()
    assert window.doc.input_source is None and not window.doc.band_pins
    window.act_undo.trigger()
    assert snapshot(window.doc) == before and window.doc.input_source == v


def test_rename_carries_references_and_is_undone(qtbot, window):
    place(qtbot, window, "Voltage source", 60, 200)
    f = place(qtbot, window, "I-controlled I", 200, 200)
    assert window.doc.parts[f].params["sensed"] == "V1"
    window.editor.push(RenameCommand(window.doc, "V1", "Vin"))
    assert window.doc.parts[f].params["sensed"] == "Vin" and window.doc.input_source == "Vin"
    window.act_undo.trigger()
    assert window.doc.parts[f].params["sensed"] == "V1" and window.doc.input_source == "V1"


def test_paste_renames_clashing_parts(qtbot, window):
    r = place(qtbot, window, "Resistor", 100, 100)
    window.scene.select([r])
    window.act_copy.trigger()
    window.act_paste.trigger()
    window.act_paste.trigger()
    assert sorted(window.doc.parts) == ["R1", "R2", "R3"]
    assert {(p.x, p.y) for p in window.doc.parts.values()} == {(100, 100), (140, 140), (180, 180)}
    assert window.scene.selected_names() == ["R3"]


def test_shift_click_while_placing_keeps_placing(qtbot, window):
    qtbot.mouseClick(window.palette_panel.buttons["Resistor"], Qt.MouseButton.LeftButton)
    click(qtbot, window, 100, 100, modifier=Qt.KeyboardModifier.ShiftModifier)
    click(qtbot, window, 200, 100)
    click(qtbot, window, 300, 100)
    assert sorted(window.doc.parts) == ["R1", "R2"]


def test_single_key_places_and_escape_stops(qtbot, window):
    window.view.setFocus()
    qtbot.keyClick(window.view, Qt.Key.Key_C)
    assert window.controller.mode.value == "Place"
    qtbot.keyClick(window.view, Qt.Key.Key_Escape)
    assert window.controller.mode.value == "Select"
    qtbot.keyClick(window.view, Qt.Key.Key_Q)
    click(qtbot, window, 200, 200)
    assert window.doc.parts["Q1"].kind == "bjt"
