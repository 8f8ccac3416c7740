"""The time-domain view beside the Bode plot: shown on every sample, live with every edit."""

from __future__ import annotations

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402
import pytest  # noqa: E402

from bandsketch.app import edits  # noqa: E402
from bandsketch.engine.design.designfile import load_design  # noqa: E402

SAMPLES = sorted((Path(__file__).parents[2] / "sample_designs").glob("*.json"))


def _open(window, path):
    window.set_document(load_design(path), str(path))
    window.analysis_panel.runner.wait()
    panel = window.analysis_panel
    panel.plots.setCurrentWidget(panel.time)
    panel.runner.wait()
    return panel


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.stem)
def test_the_step_view_shows_on_every_sample(window, path):
    panel = _open(window, path)
    step, pulse = panel.time.data()
    assert step is not None and pulse is not None
    exact = panel.good.analysis.step_response()
    drawn_x, drawn_y = panel.time.curves["exact"].getData()
    assert np.allclose(drawn_y, exact.y / exact.final_value)
    assert [m.level for m in step.markers][:2] == [0.1, 0.9]
    assert "t_r" in panel.time.summary.text() and "sag" in panel.time.summary.text()
    assert "exact" in panel.legend.text()
    panel.plots.setCurrentWidget(panel.bode)
    assert "A_m" in panel.legend.text()


def test_the_step_view_follows_an_edit(window):
    # A larger compensation capacitor slows the edge: the drawn rise moves later.
    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "two_stage_miller.json")
    before = panel.good.analysis.step_response()
    window.editor.patch(edits.edit_field(window.doc, "CC", "value", "10p"), "Edit CC")
    panel.runner.wait()
    after = panel.good.analysis.step_response()
    assert after.time_90 > before.time_90
    drawn_x, drawn_y = panel.time.curves["exact"].getData()
    assert np.allclose(drawn_y, after.y / after.final_value)
    window.editor.undo()
    panel.runner.wait()
    drawn_x, drawn_y = panel.time.curves["exact"].getData()
    assert np.allclose(drawn_y, before.y / before.final_value)


def test_time_targets_are_set_in_the_advisor_and_drawn_on_the_step(window):
    # A time target is a design target like f_H: typed in the advisor, one undo step,
    # judged on the exact step beside its estimate, and drawn where the edge must meet it.
    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "follower_cable_driver.json")
    advisor = window.advisor
    for key in list(window.doc.targets):  # the sample's own targets; this test sets its own
        window.doc.set_target(key, None)
    panel.refresh()
    panel.runner.wait()
    step = panel.good.analysis.step_response()
    edit = advisor.target_edits["rise_time_max"]
    edit.setText(f"{0.5 * step.rise_time * 1e9:.4g}n")
    edit.editingFinished.emit()
    advisor.target_edits["overshoot_max"].setText("40 %")
    advisor.target_edits["overshoot_max"].editingFinished.emit()
    panel.runner.wait()
    assert set(window.doc.targets) >= {"rise_time_max", "overshoot_max"}
    verdict = advisor.verdict_label.text()
    assert "FAIL</b> t_r" in verdict and "PASS</b> overshoot" in verdict
    shown = [line for line in panel.time.target_lines if line.isVisible()]
    assert len(shown) == 2
    rise_line = next(line for line in shown if line.angle == 90)
    data = panel.time.data()[0]
    start = next(m.time for m in data.markers if m.level == 0.1)
    assert rise_line.value() == pytest.approx(start + 0.5 * step.rise_time / data.scale, rel=1e-3)
    window.editor.undo()
    panel.runner.wait()
    assert "overshoot_max" not in window.doc.targets
    assert sum(line.isVisible() for line in panel.time.target_lines) == 1


def test_the_pulse_width_is_chosen_in_the_pulse_menu(window):
    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "ce_hydrophone_preamp.json")
    assert panel.pulse_button.isVisible() and not panel.sweep_button.isVisible()
    panel.pulse_width_edit.setText("200u")
    panel.pulse_width_edit.editingFinished.emit()
    panel.runner.wait()
    pulse = panel.time.data()[1]
    assert pulse.width * {"µs": 1e-6, "ms": 1e-3}[pulse.time_label] == pytest.approx(200e-6)
    assert "pulse 200 µs" in panel.time.summary.text()
    panel.pulse_width_edit.setText("-1")
    panel.pulse_width_edit.editingFinished.emit()
    assert "pulse width" in panel.pulse_note.text()
    panel.set_pulse_width(None)
    panel.runner.wait()
    assert panel.time.data()[1].width * 1e-3 != pytest.approx(200e-6)


def test_the_time_view_exports_its_own_plot_and_waveform(window, tmp_path):
    import csv
    import xml.etree.ElementTree as ET

    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "two_stage_miller.json")
    panel.export(str(tmp_path / "step.csv"))
    with open(tmp_path / "step.csv", newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    step = panel.good.analysis.step_response()
    assert rows[0][0] == "time_s" and len(rows) == len(step.t) + 1
    assert float(rows[-1][1]) == pytest.approx(step.y[-1], rel=1e-8)
    panel.export(str(tmp_path / "step.svg"))
    root = ET.parse(tmp_path / "step.svg").getroot()
    assert root.tag.endswith("svg")
    panel.export(str(tmp_path / "step.png"))
    assert (tmp_path / "step.png").stat().st_size > 1000


def test_the_step_is_worked_out_while_its_view_is_on_show(window):
    # The Frequency page does not wait for the step and pulse; showing their page brings them.
    window.set_document(load_design(SAMPLES[0]), str(SAMPLES[0]))
    panel = window.analysis_panel
    panel.plots.setCurrentWidget(panel.bode)
    panel.runner.wait()
    window.editor.patch(edits.edit_field(window.doc, "Cin", "value", "2u2"), "Edit Cin")
    panel.runner.wait()
    assert not panel.good.timed and panel.good.step is None
    panel.plots.setCurrentWidget(panel.time)
    panel.runner.wait()
    assert panel.good.timed and panel.good.step is not None
    assert panel.good.doc.parts["Cin"].params["value"] == "2u2"
    drawn_x, drawn_y = panel.time.curves["exact"].getData()
    exact = panel.good.analysis.step_response()
    assert np.allclose(drawn_y, exact.y / exact.final_value)
