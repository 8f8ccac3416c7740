"""A band pin belongs to its part: it follows a rename, travels on the clipboard with the part,
and goes when the part goes, so a stale pin never breaks the analysis (common practice, no
source)."""

from pathlib import Path

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QApplication

from bandsketch.engine.design.designfile import load_design

SAMPLE = Path(__file__).parents[2] / "sample_designs" / "ce_hydrophone_preamp.json"


def opened(window):
    window.set_document(load_design(SAMPLE), str(SAMPLE))
    panel = window.analysis_panel
    panel.runner.wait()
    return panel


def test_a_pin_follows_a_rename_of_its_block(qtbot, window):
    panel = opened(window)
    panel.pin_band("Q1.cmu", "low")
    panel.select_element("Q1.cmu")
    qtbot.keyClick(window.view, Qt.Key.Key_F2)
    field = QApplication.focusWidget()
    field.selectAll()
    qtbot.keyClicks(field, "Q7")
    qtbot.keyClick(field, Qt.Key.Key_Return)
    panel.runner.wait()
    assert "Q7" in window.doc.parts
    assert dict(window.doc.band_pins) == {"Q7.cmu": "low"}
    assert panel.outcome.ok, panel.outcome.problem
    window.act_undo.trigger()
    assert dict(window.doc.band_pins) == {"Q1.cmu": "low"}


def test_a_pin_goes_with_its_part_on_the_clipboard_and_on_delete(qtbot, window):
    panel = opened(window)
    panel.pin_band("Q1.cmu", "low")
    window.scene.select(["Q1"])
    window.act_copy.trigger()
    window.act_delete.trigger()
    panel.runner.wait()
    assert dict(window.doc.band_pins) == {}, "the pin went with its part"
    window.act_paste.trigger()
    panel.runner.wait()
    (pasted,) = [n for n in window.doc.parts if window.doc.parts[n].kind == "bjt"]
    assert dict(window.doc.band_pins) == {f"{pasted}.cmu": "low"}
    window.act_undo.trigger()
    window.act_undo.trigger()
    assert dict(window.doc.band_pins) == {"Q1.cmu": "low"}
