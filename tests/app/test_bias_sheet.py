"""Bias from the sheet in the window: a rail placed, a bias resistor edited, and I_C, the
warnings, the sheet's notes and Properties following in one update."""

from pathlib import Path

from PySide6.QtWidgets import QLabel

from bandsketch.app import edits
from bandsketch.engine.design.designfile import load_design
from bandsketch.engine.design.document import Part

SAMPLE = Path(__file__).parents[2] / "sample_designs" / "ce_hydrophone_preamp.json"


def _open(window):
    window.set_document(load_design(SAMPLE), str(SAMPLE))
    window.analysis_panel.runner.wait()
    return window.analysis_panel


def test_the_sheet_writes_the_bias_and_follows_an_edit(window):
    panel = _open(window)
    first = panel.good.analysis.operating_point.devices["Q1"]
    assert first.region == "forward active"
    notes = panel.bias_notes.texts()
    assert any(t.startswith("IC 1.36 mA") for t in notes), notes
    assert any("supplies" in t and "(VCC)" for t in notes)
    old_gain = panel.good.analysis.midband_gain
    # R1 at 22 kΩ drives the base hard enough to saturate Q1 (the saturating sample's edit).
    window.editor.patch(edits.edit_field(window.doc, "R1", "value", "22k"), "Edit R1")
    panel.runner.wait()
    a = panel.good.analysis
    assert a.operating_point.devices["Q1"].region == "saturated"
    assert any(w.startswith("Q1 is saturated") for w in a.warnings)
    assert abs(a.midband_gain) < abs(old_gain) / 10
    assert any("saturated  ⚠" in t for t in panel.bias_notes.texts())
    window.properties.show_selection(["Q1"], [])
    assert window.properties.findChild(QLabel, "derived_region").text() == "saturated"
    assert window.properties.findChild(QLabel, "derived_ic").text().endswith("mA")


def test_the_bias_toggle_hides_the_notes(window):
    panel = _open(window)
    window.act_bias.trigger()
    assert panel.bias_notes.texts() == []
    window.act_bias.trigger()
    assert panel.bias_notes.texts()


def test_placing_a_rail_names_its_net(window):
    panel = _open(window)
    window.doc.add_part(Part("rail", "VR9", 900, 900, params={"net": "VCC", "dc": "12"}))
    window.doc.finish_edit()
    panel.runner.wait()
    # The lone rail joins the VCC net by name, so the design still analyses.
    assert panel.good.analysis.operating_point.node_voltages["VCC"] == 12.0
