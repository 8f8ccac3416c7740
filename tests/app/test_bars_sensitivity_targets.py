"""Beside each bar, the exact sensitivity of its band's corner (checked against central
differences of the exact corner, common practice, no source), worked out off the UI thread;
the designer's targets drawn on the Bode plot; the sweep range set by the designer."""

import math
import threading
from dataclasses import replace

import pytest
from PySide6.QtCore import Qt

from bandsketch.app.analysis import runner as runner_module
from bandsketch.engine import analyze
from bandsketch.engine.core.values import parse_value
from bandsketch.engine.design.netlist import design_to_circuit


def _f_high(doc, name, factor):
    copy = doc.copy()
    part = copy.parts[name]
    value = parse_value(part.params["value"], unit="F")
    copy.replace_part(name, replace(part, params={**part.params, "value": repr(value * factor)}))
    return analyze(design_to_circuit(copy), bands=dict(copy.band_pins)).f_high_exact


def test_a_scrub_is_sensed_once_when_the_hand_rests(qtbot, window, monkeypatch):
    # Sensing every step of a scrub would share the interpreter with the views and slow each
    # step; the newest design is sensed once the edits pause (common practice, no source).
    window.open_sample("photodiode_tia")
    panel = window.analysis_panel
    panel.runner.wait()
    sensed = []
    real = runner_module.sensitivities
    monkeypatch.setattr(runner_module, "sensitivities", lambda c, a: sensed.append(a) or real(c, a))
    window.scene.select(["Cpd"])
    panel.runner.wait()
    sensed.clear()
    for _ in range(5):
        window.step_actions[0].trigger()
    window.scrub.end()
    panel.runner.wait()
    assert len(sensed) == 1 and sensed[0] is panel.runner.last.analysis
    assert panel.bars.sensitivity_text("Cpd") not in ("…", "—")


def test_each_bar_shows_the_exact_sensitivity_worked_off_the_ui_thread(qtbot, window, monkeypatch):
    threads = []
    real = runner_module.sensitivities

    def recorded(*args):
        threads.append(threading.get_ident())
        return real(*args)

    monkeypatch.setattr(runner_module, "sensitivities", recorded)
    window.open_sample("photodiode_tia")
    panel = window.analysis_panel
    panel.runner.wait()
    assert threads and threading.get_ident() not in threads, "worked out on the worker thread"
    bars = panel.bars
    names = [r.name for g in bars.data().groups for r in g.rows]
    assert all(bars.sensitivity_text(n) not in ("…", "—") for n in names)
    # Central difference of the exact f_H for ±0.5 % of Cpd and Cf.
    for name in ("Cpd", "Cf"):
        h = 0.005
        numeric = (math.log(_f_high(window.doc, name, 1 + h)) - math.log(_f_high(window.doc, name, 1 - h))) \
            / (math.log(1 + h) - math.log(1 - h))
        shown = float(bars.sensitivity_text(name).replace("−", "-"))
        assert shown == pytest.approx(numeric, abs=0.011), name
    # An edit clears the numbers until the new ones arrive: no figure of the old design stays.
    before = bars.sensitivity_text("Cpd")
    bars.show_bars(bars.data())
    assert bars.sensitivity_text("Cpd") == "…"
    window.scene.select(["Cpd"])
    entry = window.properties._entries["value"].edit
    entry.selectAll()
    qtbot.keyClicks(entry, "40p")
    qtbot.keyClick(entry, Qt.Key.Key_Return)
    panel.runner.wait()
    assert bars.sensitivity_text("Cpd") not in ("…", before)


def test_targets_are_drawn_where_the_designer_set_them(qtbot, window):
    window.open_sample("ce_hydrophone_preamp")
    panel = window.analysis_panel
    panel.runner.wait()
    for key, text in (("f_high_min", "1M"), ("f_low_max", "20"), ("gain", "40 dB")):
        edit = window.advisor.target_edits[key]
        edit.setText(text)
        edit.editingFinished.emit()
    panel.runner.wait()
    bode = panel.bode
    assert bode.target_lines["high"].isVisible() and bode.target_lines["high"].value() == pytest.approx(6.0)
    assert bode.target_lines["low"].isVisible() and bode.target_lines["low"].value() == pytest.approx(math.log10(20))
    assert bode.target_lines["high"].label.format == "f_H ≥ 1 MHz"
    low_db, high_db = bode.gain_window.getRegion()
    # The sample's tolerance (±1.5 dB) round the gain asked for.
    assert (low_db, high_db) == (pytest.approx(38.5), pytest.approx(41.5))
    assert bode.gain_window.isVisible()
    edit = window.advisor.target_edits["gain"]  # the gain target goes: its window with it
    edit.clear()
    edit.editingFinished.emit()
    edit = window.advisor.target_edits["gain_tolerance"]
    edit.clear()
    edit.editingFinished.emit()
    panel.runner.wait()
    assert not bode.gain_window.isVisible() and bode.target_lines["high"].isVisible()


def test_the_sweep_range_is_the_designers_and_blank_is_automatic(qtbot, window):
    window.open_sample("ce_hydrophone_preamp")
    panel = window.analysis_panel
    panel.runner.wait()
    automatic = panel.bode.data().freq_range
    qtbot.keyClicks(panel.sweep_from, "1k")
    qtbot.keyClick(panel.sweep_from, Qt.Key.Key_Return)
    qtbot.keyClicks(panel.sweep_to, "100M")
    qtbot.keyClick(panel.sweep_to, Qt.Key.Key_Return)
    assert panel.bode.data().freq_range == (pytest.approx(1e3), pytest.approx(1e8))
    assert window.stack.count() == 0, "a view choice, not an edit of the design"
    panel.sweep_to.setText("10")
    qtbot.keyClick(panel.sweep_to, Qt.Key.Key_Return)
    assert "above the lowest" in panel.sweep_note.text()
    assert panel.bode.data().freq_range == (pytest.approx(1e3), pytest.approx(1e8)), "a bad range changes nothing"
    panel.sweep_from.clear()
    panel.sweep_to.clear()
    qtbot.keyClick(panel.sweep_to, Qt.Key.Key_Return)
    assert panel.bode.data().freq_range == pytest.approx(automatic)


@pytest.mark.parametrize("width", [300, 520])
def test_a_narrow_bars_pane_keeps_every_column_in_sight(qtbot, width):
    # The cascode's pole-zero pair row ("1.77 Hz → 1.79 Hz · −<1 %") is the widest text: in a
    # narrow pane it is cut (its tooltip keeps it) before the sensitivity column is pushed out.
    from bandsketch.app.analysis.bars import MIN_BAR_W, TimeConstantBars, _row_text
    from bandsketch.engine.design.samples import load_sample
    from bandsketch.engine.present.plotdata import bar_data

    bars = TimeConstantBars()
    qtbot.addWidget(bars)
    bars.resize(width, 400)
    bars.show_bars(bar_data(analyze(design_to_circuit(load_sample("cascode_line_receiver")))))
    assert bars._bars
    for b in bars._bars:
        assert b.sens_at.x() <= width and b.text_at.x() + bars.fontMetrics().horizontalAdvance(b.text) <= b.sens_at.x()
        assert b.bar.right() <= b.text_at.x()
    longest = max(bars._bars, key=lambda b: len(_row_text(b.row)))
    assert longest.text.endswith("…") == (width == 300)
    top = max(bars._bars, key=lambda b: b.row.share)
    assert top.bar.width() >= MIN_BAR_W * top.row.share - 1
