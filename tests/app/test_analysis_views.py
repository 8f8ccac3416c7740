"""The analysis views in the window: readouts against the engine, pins, live edits, problems."""

from __future__ import annotations

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402
import pytest  # noqa: E402
from PySide6.QtCore import QPointF, Qt  # noqa: E402
from PySide6.QtWidgets import QApplication  # noqa: E402

from bandsketch.app import edits  # noqa: E402
from bandsketch.app.analysis.runner import AnalysisRunner, analyse_design  # noqa: E402
from bandsketch.app.analysis.bode import SPARE_ROOM  # noqa: E402
from bandsketch.app.analysis.style import view_colours  # noqa: E402
from bandsketch.app.analysis.verdict import HOLD_MS  # noqa: E402
from bandsketch.app.theme import DARK, LIGHT  # noqa: E402
from bandsketch.engine.design.designfile import load_design  # noqa: E402
from bandsketch.engine.present.plotdata import element_label, part_of  # noqa: E402
from bandsketch.engine.core.values import format_value  # noqa: E402

SAMPLES = sorted((Path(__file__).parents[2] / "sample_designs").glob("*.json"))


def _open(window, path):
    window.set_document(load_design(path), str(path))
    window.analysis_panel.runner.wait()
    return window.analysis_panel


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.stem)
def test_each_capacitor_shows_the_engines_numbers(window, path):
    panel = _open(window, path)
    analysis = panel.good.analysis
    assert panel.banner.isHidden()
    for name, result in analysis.elements.items():
        assert panel.select_element(name) is None
        assert panel.focus == name
        assert window.scene.selected_names() == [part_of(name)]
        if result.band == "neutral":
            assert not panel.overlay.isVisible()
            continue
        shown = panel.overlay.geometry
        assert panel.overlay.isVisible() and shown.element == name
        assert shown.lines[1] == element_label(result)
        assert f"R = {format_value(result.resistance, 'Ω')}" in shown.lines[1]
        assert f"τ = {format_value(result.time_constant, 's')}" in shown.lines[1]
        # The label covers no part, part text or wire of the sheet.
        label = panel.overlay._label
        assert not [shape for shape in window.scene.occupied() if shape.intersects(label)], name
        row = panel.bars.data().row(name)
        assert row.share == pytest.approx(result.share)
        assert row.dominant == (name in (analysis.dominant_high, analysis.dominant_low))


def test_the_issue_label_reads_as_asked(window):
    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "ce_hydrophone_preamp.json")
    panel.select_element("Q1.cmu")
    r = panel.good.analysis.elements["Q1.cmu"]
    assert panel.overlay.geometry.lines[1] == (
        f"R = {format_value(r.resistance, 'Ω')} · τ = {format_value(r.time_constant, 's')} · "
        f"{100 * r.share:.0f} % of b1")


def test_clicking_a_bar_selects_the_element_and_escape_clears_it(window, qtbot):
    panel = _open(window, SAMPLES[0])
    name = panel.good.analysis.dominant_high
    panel.bars.resize(500, panel.bars.sizeHint().height())
    centre = panel.bars.bar_rect(name).center().toPoint()
    with qtbot.waitSignal(panel.bars.element_clicked):
        qtbot.mouseClick(panel.bars, Qt.MouseButton.LeftButton, pos=centre)
    assert panel.focus == name and panel.overlay.isVisible()
    window.controller.escape()
    assert panel.focus is None and not panel.overlay.isVisible()


def test_hovering_a_capacitor_tells_its_band_and_why(window):
    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "ce_hydrophone_preamp.json")
    tip = window.scene.part_item("CE").toolTip()
    result = panel.good.analysis.elements["CE"]
    assert "low band" in tip and format_value(result.resistance, "Ω") in tip and result.reason in tip


def test_pinning_a_band_is_undoable_and_moves_the_estimate(window):
    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "ce_hydrophone_preamp.json")
    before = panel.good.analysis
    assert before.elements["CE"].band == "low"
    panel.bars.pin_menu("CE").actions()[0].trigger()  # "Pin to the high band"
    panel.runner.wait()
    after = panel.good.analysis
    assert dict(window.doc.band_pins) == {"CE": "high"}
    assert after.elements["CE"].band == "high" and after.elements["CE"].pinned
    # Open in the mid band, CE no longer bypasses RE: the gain falls and f_L moves.
    assert abs(after.midband_gain) < abs(before.midband_gain)
    assert after.f_low_estimate != pytest.approx(before.f_low_estimate)
    assert panel.bars.data().row("CE").pinned
    window.editor.undo()
    panel.runner.wait()
    assert dict(window.doc.band_pins) == {}
    assert panel.good.analysis.f_low_estimate == pytest.approx(before.f_low_estimate)


def test_a_value_edit_moves_the_estimate_and_the_exact_curve(window):
    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "two_stage_miller.json")
    before_bode = panel.bode.data()
    before = panel.good.analysis
    window.editor.patch(edits.edit_field(window.doc, "CC", "value", "10p"), "Edit CC")
    panel.runner.wait()
    after = panel.good.analysis
    assert after.f_high_estimate < before.f_high_estimate
    assert after.f_high_exact < before.f_high_exact
    assert panel.bode.data() is not before_bode
    drawn_x, drawn_y = panel.bode.curves["exact"][0].getData()
    assert np.allclose(drawn_y, panel.bode.data().exact.magnitude_db)
    estimate = next(m for m in panel.bode.data().markers if m.corner == "high" and m.estimated)
    assert estimate.freq_hz == pytest.approx(after.f_high_estimate)


def test_a_broken_circuit_shows_a_banner_and_keeps_the_last_result_greyed(window):
    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "ce_hydrophone_preamp.json")
    good = panel.good
    wire = next(iter(window.doc.wires))
    window.editor.patch(edits.delete(window.doc, [], [wire]), "Delete wire")
    panel.runner.wait()
    assert not panel.banner.isHidden()
    message = panel.banner.text()
    assert any(name in message for name in window.doc.parts) or "node" in message.lower()
    assert panel.good is good and panel.bars._stale and panel.bode._stale
    window.editor.undo()
    panel.runner.wait()
    assert panel.banner.isHidden() and not panel.bars._stale


def test_an_empty_sheet_shows_nothing_and_no_banner(window):
    panel = window.analysis_panel
    panel.runner.wait()
    assert panel.banner.isHidden() and panel.good is None and panel.bode.data() is None


def test_a_newer_request_supersedes_a_slower_one(qtbot):
    doc = load_design(SAMPLES[0])
    runner = AnalysisRunner(thread_after_s=0.0)
    runner.last_seconds = 1.0  # as if the last run had been slow: the next go off the UI thread
    got = []
    runner.finished.connect(got.append)
    runner.request(doc)
    runner.request(doc)
    runner.request(doc)
    assert runner.wait()
    assert [o.generation for o in got] == [3]
    assert runner.threaded_runs >= 2 and got[0].ok


def test_analyse_design_never_raises_on_nonsense():
    doc = load_design(SAMPLES[0])
    for name, part in doc.parts.items():
        if part.kind == "capacitor":
            doc.replace_part(name, part.with_params(value="banana"))
            break
    outcome = analyse_design(doc)
    assert not outcome.ok and name in outcome.problem and name in outcome.problem_parts


def test_exports_write_png_svg_and_csv(window, tmp_path):
    panel = _open(window, SAMPLES[0])
    for suffix in ("png", "svg", "csv"):
        path = tmp_path / f"plot.{suffix}"
        panel.export(str(path))
        assert path.stat().st_size > 100
    assert (tmp_path / "plot.csv").read_text(encoding="utf-8").startswith("frequency_hz,magnitude_db,magnitude_v_per_v,phase_deg")


def test_hover_reads_out_frequency_gain_and_phase(window, qtbot):
    panel = _open(window, SAMPLES[0])
    plot = panel.bode.magnitude
    inside = plot.getViewBox().sceneBoundingRect().center()
    with qtbot.waitSignal(panel.bode.hovered) as seen:
        panel.bode._on_mouse_moved(inside)
    assert seen.args[0].startswith("f = ") and "dB" in seen.args[0] and "°" in seen.args[0]
    assert panel.hover_readout.text() == seen.args[0]


def test_log_axis_labels_say_hertz_plainly():
    from bandsketch.app.analysis.bode import FrequencyAxis

    axis = FrequencyAxis("bottom")
    assert axis.logTickStrings([1.0, 3.0, 6.0], 1.0, 1.0) == ["10 Hz", "1 kHz", "1 MHz"]


def test_light_and_dark_colours_follow_the_theme():
    light, dark = view_colours(LIGHT), view_colours(DARK)
    assert light.paper != dark.paper and light.ink != dark.ink
    assert light.high.name() == "#0072b2" and light.low.name() == "#cc79a7"  # Okabe–Ito


def test_select_names_what_it_cannot_show(window):
    panel = _open(window, SAMPLES[0])
    assert "not a capacitor or inductor" in panel.select_element("Nothing")


def test_screenshot_with_select_draws_the_picture(tmp_path, qapp):
    from bandsketch.app.gui import run_gui

    out = tmp_path / "shot.png"
    path = Path(__file__).parents[2] / "sample_designs" / "ce_hydrophone_preamp.json"
    assert run_gui(str(path), screenshot=str(out), size=(1000, 700), select="CE") == 0
    assert out.stat().st_size > 1000


def test_right_clicking_a_block_offers_a_menu_per_element(window):
    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "ce_hydrophone_preamp.json")
    menu = panel.pin_menu_for_part("Q1")
    assert sorted(a.text() for a in menu.actions()) == ["Q1.cmu", "Q1.cpi"]
    assert panel.pin_menu_for_part("R1") is None
    own = panel.pin_menu_for_part("CE")
    assert [a.isChecked() for a in own.actions()] == [False, False, True]


def _ranges(panel):
    magnitude, phase = panel.bode.magnitude.getViewBox(), panel.bode.phase.getViewBox()
    return [tuple(r) for r in (*magnitude.viewRange(), phase.viewRange()[1])]


def _wanted(panel):
    data = panel.bode.data()
    lo, hi = data.freq_range
    return [pytest.approx((np.log10(lo), np.log10(hi))), pytest.approx(data.magnitude_view_db),
            pytest.approx(data.phase_view_deg)]


def test_a_small_edit_moves_the_curve_against_still_axes_and_a_new_design_is_fitted(window):
    # Common practice, no source: axes that jump at every edit hide how far the curve moved.
    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "ce_hydrophone_preamp.json")
    first = _ranges(panel)
    assert first == _wanted(panel), "a design opened is fitted whole"
    # Halving the input capacitor moves f_L by under an octave: the plot's quarter-decade
    # ends move, the axes do not.
    window.editor.patch(edits.edit_field(window.doc, "Cin", "value", "1u1"), "Edit Cin")
    panel.runner.wait()
    assert _ranges(panel) == first
    assert _ranges(panel) != _wanted(panel), "the fit alone would have moved them"
    # A change that moves f_L two decades moves the frequency axis's low end: to a quarter
    # decade (half the spare room) below the response's own, its high end staying.
    window.editor.patch(edits.edit_field(window.doc, "Cin", "value", "22n"), "Edit Cin")
    panel.runner.wait()
    (lo, hi), wanted = _ranges(panel)[0], _wanted(panel)[0]
    assert lo == pytest.approx(wanted.expected[0] - SPARE_ROOM["frequency"] / 2) and hi == first[0][1]
    # Taken back: the low end goes below the curve's again, and an edit back to where the
    # new end holds the response moves nothing.
    window.act_undo.trigger()
    panel.runner.wait()
    back = _ranges(panel)
    assert back[0][0] == pytest.approx(_wanted(panel)[0].expected[0] - SPARE_ROOM["frequency"] / 2)
    window.act_undo.trigger()
    panel.runner.wait()
    assert _ranges(panel) == back
    # The Fit button fits whatever the axes were.
    window.editor.patch(edits.edit_field(window.doc, "Cin", "value", "1u1"), "Edit Cin")
    panel.runner.wait()
    panel.bode.fit()
    assert _ranges(panel) == _wanted(panel)
    # Another design is fitted whole, even where the axes shown would hold it.
    _open(window, Path(__file__).parents[2] / "sample_designs" / "ce_saturated_divider.json")
    assert _ranges(panel) == _wanted(panel)


def test_the_verdict_keeps_its_height_while_a_design_is_edited_and_lets_go_after(window, qtbot):
    window.resize(1400, 900)  # room for every line the verdict needs
    panel = _open(window, Path(__file__).parents[2] / "sample_designs" / "cascode_line_receiver.json")
    tallest = panel.verdict.height()
    heights = []
    for value in ("470n", "220n", "2u2", "1u", "470n"):
        window.editor.patch(edits.edit_field(window.doc, "Cin", "value", value), "Edit Cin")
        panel.runner.wait()
        QApplication.processEvents()
        assert panel.verdict.height() >= tallest, "the strip never shrinks under an edit"
        assert panel.verdict.height() >= panel.verdict.heightForWidth(panel.verdict.width()), "nor hides a line"
        tallest = panel.verdict.height()
        heights.append(panel.verdict.heightForWidth(panel.verdict.width()))
    assert len(set(heights)) > 1, "the edits change how many lines the verdict takes"
    qtbot.waitUntil(lambda: panel.verdict.height() == panel.verdict.heightForWidth(panel.verdict.width()),
                    timeout=HOLD_MS + 1000)  # once the edits pause, the plots get the room back
    _open(window, Path(__file__).parents[2] / "sample_designs" / "photodiode_tia.json")
    QApplication.processEvents()
    assert panel.verdict.height() == panel.verdict.heightForWidth(panel.verdict.width()), \
        "another design's verdict takes its own height"
