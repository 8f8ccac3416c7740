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
