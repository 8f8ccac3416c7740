"""Field edits go through the engine's parser: a bad entry is shown with its reason, never taken."""

from pathlib import Path

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QComboBox

from sheet import at, place


def _entry(window, key):
    return window.properties._entries[key]


def _type(qtbot, edit, text):
    """Type ``text`` and press Enter (characters beyond ASCII are inserted, as a paste would)."""
    edit.setFocus()
    edit.selectAll()
    for ch in text:
        if ch.isascii():
            qtbot.keyClicks(edit, ch)
        else:
            edit.insert(ch)
    qtbot.keyClick(edit, Qt.Key.Key_Return)


def test_value_with_iec_code_is_taken_and_shown_formatted(qtbot, window):
    r = place(qtbot, window, "Resistor", 100, 100)
    entry = _entry(window, "value")
    _type(qtbot, entry.edit, "4K7")
    assert window.doc.parts[r].params["value"] == "4K7"
    assert not entry.invalid and entry.note.text() == "4.7 kΩ"


def test_bad_value_is_marked_with_the_reason_and_not_taken(qtbot, window):
    r = place(qtbot, window, "Capacitor", 100, 100)
    steps = window.stack.count()
    entry = _entry(window, "value")
    _type(qtbot, entry.edit, "4,7n")
    assert window.doc.parts[r].params["value"] == "100n"
    assert window.stack.count() == steps
    assert entry.invalid and "C1" in entry.note.text() and "comma" in entry.note.text()
    assert entry.edit.text() == "4,7n", "the rejected entry stays as typed"
    _type(qtbot, entry.edit, "47 Ω")
    assert entry.invalid and "farads" in entry.note.text()
    _type(qtbot, entry.edit, "4n7")
    assert window.doc.parts[r].params["value"] == "4n7" and not entry.invalid


def test_rename_clash_is_refused_in_place(qtbot, window):
    place(qtbot, window, "Resistor", 100, 100)
    r2 = place(qtbot, window, "Resistor", 200, 100)
    entry = _entry(window, "name")
    _type(qtbot, entry.edit, "r1")
    assert r2 in window.doc.parts and entry.invalid and "already the name of R1" in entry.note.text()
    _type(qtbot, entry.edit, "Rload")
    assert "Rload" in window.doc.parts and window.scene.selected_names() == ["Rload"]


def test_transistor_switches_to_operating_point_with_derived_values(qtbot, window):
    q = place(qtbot, window, "NPN transistor", 200, 200)
    assert "gm" in window.properties._entries and "ic" not in window.properties._entries
    boxes = [b for b in window.properties.findChildren(QComboBox) if b.findData("operating_point") >= 0]
    boxes[0].setCurrentIndex(boxes[0].findData("operating_point"))
    assert window.doc.parts[q].params["mode"] == "operating_point"
    assert "ic" in window.properties._entries and "gm" not in window.properties._entries
    from PySide6.QtWidgets import QLabel
    shown = {label.objectName(): label.text() for label in window.properties.findChildren(QLabel)
             if label.objectName().startswith("derived_")}
    assert shown["derived_gm"].endswith("mS") and shown["derived_rpi"].endswith("kΩ")
    assert shown["derived_vt"].endswith("mV")
    window.act_undo.trigger()
    assert window.doc.parts[q].params["mode"] == "small_signal"


def test_double_click_edits_the_value_in_place(qtbot, window):
    r = place(qtbot, window, "Resistor", 100, 100)
    window.scene.clearSelection()
    qtbot.mouseDClick(window.view.viewport(), Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier,
                      at(window, 100, 100))
    editor = window.inplace
    assert editor is not None and editor.text() == "10k"
    editor.setText("abc")
    assert not editor.accept_text()
    assert "R1" in editor.reason.text() and editor.reason.isVisible()
    assert window.doc.parts[r].params["value"] == "10k"
    editor.setText("2k2")
    assert editor.accept_text()
    assert window.doc.parts[r].params["value"] == "2k2"


def test_problems_are_marked_where_they_are(qtbot, window):
    r = place(qtbot, window, "Resistor", 100, 100)
    problems = window.scene.problems
    assert problems, "a lone resistor cannot be analysed"
    marks = [i for i in window.scene.items() if type(i).__name__ == "ProblemItem"]
    assert all(m.toolTip() for m in marks)
    assert window.scene.part_item(r).problem
    assert "problem" in window.problem_label.text()


def test_complete_stage_shows_no_problem_marks(qtbot, window):
    window.open_design(str(Path(__file__).with_name("invented_ce_stage.json")))
    assert window.scene.problems == []
    assert window.problem_label.text() == "Connections complete"
    r = place(qtbot, window, "Resistor", 600, 300)
    assert window.scene.problems, "a part touching nothing is reported"
    assert any(r in p.parts for p in window.scene.problems)
    window.act_undo.trigger()
    assert window.scene.problems == []


def test_design_notes_are_several_lines_and_a_visit_is_one_undo_step(qtbot, window):
    notes = window.properties.notes
    assert notes.height() > 3 * notes.fontMetrics().lineSpacing(), "room for several lines"
    notes.setFocus()
    qtbot.keyClicks(notes, "Invented stage")
    qtbot.keyClick(notes, Qt.Key.Key_Return)
    qtbot.keyClicks(notes, "second line")
    assert window.doc.description == "Invented stage\nsecond line", "taken as typed"
    window.view.setFocus()
    assert window.stack.count() == 1 and window.stack.undoText() == "Edit notes"
    # Undo from inside the box goes to the window's stack, and the box shows the result.
    notes.setFocus()
    qtbot.keyClicks(notes, "!")
    assert window.stack.count() == 2
    qtbot.keyClick(notes, Qt.Key.Key_Z, Qt.KeyboardModifier.ControlModifier)
    assert window.doc.description == notes.toPlainText() == "Invented stage\nsecond line"
    qtbot.keyClick(notes, Qt.Key.Key_Z, Qt.KeyboardModifier.ControlModifier)
    assert window.doc.description == notes.toPlainText() == ""
    qtbot.keyClick(notes, Qt.Key.Key_Z, Qt.KeyboardModifier.ControlModifier | Qt.KeyboardModifier.ShiftModifier)
    assert window.doc.description == "Invented stage\nsecond line"


def test_design_notes_longer_than_a_file_holds_are_refused_with_the_reason(qtbot, window):
    notes = window.properties.notes
    notes.setFocus()
    notes.setPlainText("x" * 201)
    assert window.doc.description == "" and "200 characters" in notes.note.text()


def test_sourcing_is_edited_in_properties_as_undoable_steps(qtbot, window):
    from bandsketch.app.properties import _Entry

    r = place(qtbot, window, "Resistor", 100, 100)
    box = window.properties.findChild(_Entry, "sourcing_tolerance")
    _type(qtbot, box.edit, "1 %")
    assert window.doc.parts[r].sourcing.tolerance == "1 %"
    box = window.properties.findChild(_Entry, "sourcing_tolerance")
    _type(qtbot, box.edit, "five")
    assert box.invalid and "not a percentage" in box.note.text()
    assert window.doc.parts[r].sourcing.tolerance == "1 %"
    series = window.properties.findChild(QComboBox, "sourcing_series")
    series.setCurrentIndex(series.findData("E96"))
    knob = window.properties.findChild(QComboBox, "sourcing_knob")
    knob.setCurrentIndex(knob.findData("no"))
    assert (window.doc.parts[r].sourcing.series, window.doc.parts[r].sourcing.knob) == ("E96", "no")
    for expected in (("E96", ""), ("", "")):
        window.stack.undo()
        assert (window.doc.parts[r].sourcing.series, window.doc.parts[r].sourcing.knob) == expected


def test_a_new_form_never_shows_the_old_one_through_it(qtbot, window):
    # The old form is deleted only when the event loop comes round; a paint before that
    # drew the design's title and notes under a part's fields (common practice, no source).
    from PySide6.QtCore import QCoreApplication
    from PySide6.QtWidgets import QLineEdit, QPlainTextEdit

    window.open_sample("ce_hydrophone_preamp")
    window.analysis_panel.runner.wait()
    window.scene.select(["CE"])
    for _ in range(5):
        QCoreApplication.processEvents()  # the new form is built; the old one awaits deletion
    fields = window.properties.findChildren(QLineEdit) + window.properties.findChildren(QPlainTextEdit)
    shown = [w for w in fields if w.isVisibleTo(window.properties)]
    texts = [w.text() if isinstance(w, QLineEdit) else w.toPlainText() for w in shown]
    assert "CE" in texts
    assert not any("hydrophone" in t.lower() for t in texts), texts
