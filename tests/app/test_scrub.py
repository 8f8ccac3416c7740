"""The value scrub: a value stepped through its E series in one undo step, the views following,
the response from before the scrub kept as a ghost with the corner's move written beside it."""

import pytest
from PySide6.QtCore import QEvent, QPoint, QPointF, Qt
from PySide6.QtGui import QMouseEvent, QWheelEvent
from PySide6.QtWidgets import QApplication

from bandsketch.app import edits
from bandsketch.app.properties import GRIP_STEP_PX
from bandsketch.engine.advise.eseries import E12, E24
from bandsketch.engine.design.samples import list_samples
from bandsketch.engine.present.plotdata import corner_shift
from sheet import at


def _settled(window):
    assert window.analysis_panel.runner.wait(20000)


def _capacitor(window):
    return next(p.name for p in window.doc.parts.values() if p.kind == "capacitor")


def _wheel(window, name, notches, modifiers=Qt.KeyboardModifier.ControlModifier):
    item = window.scene.part_item(name)
    pos = QPointF(at(window, item.sceneBoundingRect().center().x(), item.sceneBoundingRect().center().y()))
    event = QWheelEvent(pos, QPointF(window.view.viewport().mapToGlobal(pos.toPoint())), QPoint(0, 0),
                        QPoint(0, 120 * notches), Qt.MouseButton.NoButton, modifiers,
                        Qt.ScrollPhase.NoScrollPhase, False)
    QApplication.sendEvent(window.view.viewport(), event)


@pytest.mark.parametrize("sample", [s.name for s in list_samples()])
def test_a_scrub_on_every_sample_is_one_undo_step_with_a_ghost(qtbot, window, sample):
    assert window.open_sample(sample)
    _settled(window)
    panel, doc = window.analysis_panel, window.doc
    name = _capacitor(window)
    original = doc.parts[name].params["value"]
    before_steps = window.stack.count()
    window.scene.select([name])
    up = window.step_actions[0]
    seen = []
    for _ in range(5):
        up.trigger()
        _settled(window)
        # Every step is analysed and shown: the views are at the value the document holds.
        assert panel.outcome.doc.parts[name].params["value"] == doc.parts[name].params["value"]
        seen.append(doc.parts[name].params["value"])
    assert len(set(seen)) == 5, "each step moved the value"
    assert window.stack.count() == before_steps + 1, "five steps, one undo step"
    assert panel.ghost is not None and window.analysis_panel.bode.has_before()
    note = panel.bode.before_note_text()
    assert note == corner_shift(panel.ghost, panel.bode.data()).text and "→" in note
    window.scrub.end()
    window.act_undo.trigger()
    assert doc.parts[name].params["value"] == original, "undo gives back the text as it was"
    window.act_redo.trigger()
    assert doc.parts[name].params["value"] == seen[-1]


def test_a_resistor_walks_its_series_and_a_capacitor_the_series_it_is_bought_from(qtbot, window):
    assert window.open_sample("ce_hydrophone_preamp")
    doc = window.doc
    resistor = next(p for p in doc.parts.values() if p.kind == "resistor" and p.sourcing.knob != "no").name
    window.editor.patch(edits.edit_field(doc, resistor, "value", "4k7"), "Set")
    window.scene.select([resistor])
    for _ in range(3):
        window.step_actions[0].trigger()
    # IEC 60063:2015 E24 after 4.7: 5.1, 5.6, 6.2.
    assert doc.parts[resistor].params["value"] == "6.2k"
    assert 6.2 in E24
    cap = _capacitor(window)
    window.scrub.end()
    window.editor.patch(edits.set_sourcing(doc, cap, series="E12"), "Series")
    window.editor.patch(edits.edit_field(doc, cap, "value", "1u"), "Set")
    window.scene.select([cap])
    window.step_actions[1].trigger()
    window.step_actions[1].trigger()
    assert doc.parts[cap].params["value"] == "680n"  # E12: 1.0, 0.82, 0.68 (IEC 60063:2015)
    assert 6.8 in E12 and 8.2 in E12
    window.step_actions[2].trigger()  # a decade up
    assert doc.parts[cap].params["value"] == "6.8µ"


def test_ctrl_wheel_over_the_selected_part_steps_it_and_plain_wheel_still_zooms(qtbot, window):
    assert window.open_sample("photodiode_tia")
    _settled(window)
    name = _capacitor(window)
    original = window.doc.parts[name].params["value"]
    window.scene.select([name])
    zoom = window.view.zoom()
    steps = window.stack.count()
    _wheel(window, name, 2)
    _wheel(window, name, -1)
    assert window.view.zoom() == zoom
    assert window.doc.parts[name].params["value"] != original
    assert window.stack.count() == steps + 1
    _wheel(window, name, -1)
    assert window.stack.count() == steps + 1
    window.scrub.end()
    window.act_undo.trigger()
    assert window.doc.parts[name].params["value"] == original
    _wheel(window, name, 1, Qt.KeyboardModifier.NoModifier)
    assert window.view.zoom() != zoom


def test_dragging_the_grip_in_properties_is_one_scrub(qtbot, window):
    assert window.open_sample("two_stage_miller")
    _settled(window)
    name = _capacitor(window)
    original = window.doc.parts[name].params["value"]
    window.scene.select([name])
    entry = window.properties._entries["value"]
    grip = entry.grip
    steps = window.stack.count()
    start = QPointF(grip.width() / 2, grip.height() / 2)

    def send(kind, y, buttons):
        pos = QPointF(start.x(), y)
        QApplication.sendEvent(grip, QMouseEvent(kind, pos, QPointF(grip.mapToGlobal(pos.toPoint())),
                                                 Qt.MouseButton.LeftButton, buttons, Qt.KeyboardModifier.NoModifier))

    send(QEvent.Type.MouseButtonPress, start.y(), Qt.MouseButton.LeftButton)
    for k in range(1, 5):
        send(QEvent.Type.MouseMove, start.y() - k * GRIP_STEP_PX, Qt.MouseButton.LeftButton)
        _settled(window)
    assert window.scrub.is_active(), "the scrub lasts while the grip is held"
    send(QEvent.Type.MouseButtonRelease, start.y() - 4 * GRIP_STEP_PX, Qt.MouseButton.NoButton)
    assert not window.scrub.is_active()
    assert window.stack.count() == steps + 1
    assert entry.edit.text() == window.doc.parts[name].params["value"] != original
    window.act_undo.trigger()
    assert window.doc.parts[name].params["value"] == original


def test_the_ghost_goes_after_the_scrub_and_a_suggestions_before_curve_comes_back(qtbot, window):
    assert window.open_sample("cs_partly_bypassed")
    _settled(window)
    panel = window.analysis_panel
    kept = panel.bode.data().exact
    panel.compare_with_before(kept)
    name = _capacitor(window)
    window.scene.select([name])
    window.step_actions[0].trigger()
    _settled(window)
    assert "before the scrub" in panel.legend.text() and panel.bode.before_note_text()
    window.scrub.end()
    assert panel.ghost is not None, "the ghost stays a moment after the scrub"
    qtbot.waitUntil(lambda: panel.ghost is None, timeout=5000)
    assert panel.bode.has_before() and "before the change" in panel.legend.text()
    assert panel.bode.before_note_text() == ""


def test_a_pause_ends_the_scrub_and_a_zero_value_says_why_it_cannot_step(qtbot, window):
    assert window.open_sample("ce_hydrophone_preamp")
    doc = window.doc
    name = _capacitor(window)
    window.scene.select([name])
    steps = window.stack.count()
    window.step_actions[0].trigger()
    qtbot.waitUntil(lambda: not window.scrub.is_active(), timeout=5000)
    window.step_actions[0].trigger()
    assert window.stack.count() == steps + 2
    source = next(p.name for p in doc.parts.values() if p.kind == "vsource" and p.params.get("dc") == "0")
    window.scene.select([source])
    messages = []
    window.scrub.refused.connect(messages.append)
    window.step_actions[0].trigger()
    assert doc.parts[source].params["dc"] == "0"
    assert messages and source in messages[0] and "0" in messages[0]
