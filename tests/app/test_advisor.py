"""The advisor panel over a real design: targets as undo steps, sensitivity hover, a suggestion
that meets every target applied in one click (and undone), the search over knobs together,
spread with cancel, report."""

from __future__ import annotations

from pathlib import Path

import pytest

from bandsketch.engine import analyze
from bandsketch.engine.design.designfile import load_design
from bandsketch.engine.design.netlist import design_to_circuit
import pyqtgraph as pg

from bandsketch.app.advisor.panel import BIAS_COLUMN
from bandsketch.engine.advise.targets import meets, parse_targets

SAMPLES = Path(__file__).resolve().parents[2] / "sample_designs"


@pytest.fixture
def panel(window):
    """The advisor as the window mounts it, on the two-stage sample; it shows what the
    window's runner analysed (waited for, so each check sees the newest analysis)."""
    path = SAMPLES / "two_stage_miller.json"
    doc = load_design(path)
    for key in list(doc.targets):  # the sample's own targets; each test sets its own
        doc.set_target(key, None)
    window.set_document(doc, str(path))
    p = window.advisor
    runner = window.analysis_panel.runner
    p.settle = runner.wait
    p.settle()
    yield p
    p.jobs.cancel.set()
    p.jobs.wait()
    p.sens_jobs.wait()


def _figures(doc):
    a = analyze(design_to_circuit(doc), bands=dict(doc.band_pins))
    return a.f_high_exact, a.f_low_exact, a.midband_gain


def test_target_is_an_undo_step_and_the_verdict_follows(panel):
    panel.set_target("f_high_min", "300k")
    panel.settle()
    assert panel.doc.targets["f_high_min"] == "300k"
    assert "FAIL" in panel.verdict_label.text()
    panel.editor.undo()
    panel.settle()
    assert "f_high_min" not in panel.doc.targets
    assert panel.verdict_label.text() == "No targets set."


def test_sensitivities_wait_until_shown_and_name_their_part(panel, window, qtbot):
    # An edit while another page shows does not pay for them; showing the page works them out.
    assert panel.sens_table.rowCount() == 0
    window.analysis_tabs.setCurrentWidget(panel)
    panel.tabs.setCurrentIndex(1)
    assert panel.sens_jobs.wait()  # worked out on the advisor's worker thread
    assert panel.sens_table.rowCount() > 5
    seen = []
    panel.part_hovered.connect(seen.append)
    panel._sens_hover(0, 1)
    first = panel.sens_table.item(0, 0).data(0x0100)
    assert seen == [first] and first in panel.doc.parts


def test_hovering_a_row_points_the_part_out_on_the_sheet(panel, window):
    # The scene's accent: the selection colour while pointed at, the band colour after.
    scene = window.scene
    banded = next(n for n, r in window.analysis_panel.good.analysis.elements.items()
                  if r.band != "neutral" and n in panel.doc.parts)
    band_colour = scene.part_item(banded)._accent
    panel.part_hovered.emit(banded)
    assert scene.part_item(banded)._accent == scene.theme.selection
    panel.part_hovered.emit("RL")
    assert scene.part_item(banded)._accent == band_colour
    assert scene.part_item("RL")._accent == scene.theme.selection
    panel.part_hovered.emit("")
    assert scene.part_item("RL")._accent is None
    assert scene.selected_names() == []


def test_the_advisor_shows_the_runners_analysis(panel, window):
    # One analysis per edit: the advisor's verdict is the one the views' runner produced.
    runner = window.analysis_panel.runner
    panel.set_target("f_high_min", "100k")
    panel.settle()
    assert runner.last.doc.targets == {"f_high_min": "100k"}
    assert f"{runner.last.analysis.f_high_exact / 1e3:.0f} kHz" in panel.verdict_label.text()
    assert "PASS" in panel.verdict_label.text()


def test_done_when_suggest_apply_pass_undo(panel, window):
    # The acceptance path on the two-stage sample: f_H, f_L and gain targets, the
    # best standard-value change that meets all three applied in one click (with its yield
    # shown), the verdict turning to pass, the previous curve kept on the Bode plot until
    # dismissed, and one undo step taking it all back.
    panel.set_target("f_high_min", "150k")
    panel.set_target("f_low_max", "40")
    panel.set_target("gain", "46 dB")
    panel.settle()
    targets = parse_targets(panel.doc.targets)
    assert not meets(targets, *_figures(panel.doc))["f_high_min"]
    assert "FAIL" in panel.verdict_label.text()
    panel.find_suggestions()
    assert panel.jobs.wait(180000)
    assert panel.suggest_table.rowCount() == len(panel.suggestions) > 0
    best = panel.suggestions[0]
    assert best.meets_all and best.spread is not None
    assert f"yield {100 * best.spread.fraction:.0f} %" in panel.suggest_label.text()
    assert panel.suggest_table.item(0, 8).text() == "meets every target"
    # It comes selected: applying it is one click.
    assert panel.apply_button.isEnabled()
    assert [r.row() for r in panel.suggest_table.selectionModel().selectedRows()] == [0]
    # Rows that meet everything come first; a row that breaks another target says which.
    flags = [s.meets_all for s in panel.suggestions]
    assert flags == sorted(flags, reverse=True)
    before = {c.knob.part: panel.doc.parts[c.knob.part] for c in best.changes}
    steps = window.stack.count()
    panel.suggest_table.selectRow(0)
    panel.apply_selected()
    panel.settle()
    assert window.stack.count() == steps + 1
    assert all(meets(targets, *_figures(panel.doc)).values())
    assert "FAIL" not in panel.verdict_label.text()
    bode = window.analysis_panel.bode
    assert bode.has_before() and window.analysis_panel.dismiss_before.isVisibleTo(window.analysis_panel)
    panel.editor.undo()
    assert all(panel.doc.parts[name] == part for name, part in before.items())
    window.analysis_panel.dismiss_before.click()
    assert not bode.has_before()


def test_search_together_meets_or_says_it_cannot(panel):
    panel.set_target("f_high_min", "300k")
    panel.set_target("gain", "54 dB")
    panel.settle()
    panel.search_knobs.setText("RC2, CC")
    panel.search_together()
    assert panel.jobs.wait(180000)
    text = panel.suggest_label.text()
    assert "RC2" in text and ("meets every target" in text or "No combination of RC2, CC" in text)
    panel.search_knobs.setText("Q1")
    panel.search_together()
    assert panel.jobs.wait(60000)
    assert "not a value the advisor may change" in panel.suggest_label.text()


def test_spread_runs_and_cancels(panel, qtbot):
    panel.set_target("f_high_min", "150k")
    panel.samples.setValue(3000)
    assert panel.plots == {}, "the histograms are made when first needed"
    panel.run_spread()
    assert panel.jobs.wait(60000)
    assert panel.spread is not None and panel.spread.samples == 3000
    assert "Yield" in panel.spread_label.text()
    assert set(panel.plots) == {"f_high", "f_low", "gain"}
    assert any(isinstance(item, pg.BarGraphItem) for item in panel.plots["f_high"].getPlotItem().items)
    panel.samples.setValue(200000)
    panel.run_spread()
    panel.jobs.cancel.set()
    assert panel.jobs.wait(60000)
    assert panel.spread_label.text() == "Spread cancelled."


def test_report_html_and_pdf(panel, tmp_path):
    html_path, pdf_path = tmp_path / "r.html", tmp_path / "r.pdf"
    panel.samples.setValue(500)
    assert panel.export_report(str(html_path)).startswith("Report written")
    html = html_path.read_text(encoding="utf-8")
    assert "design estimates" in html
    # The sheet, the Bode plot, the bars and the step response, drawn as vectors.
    assert html.count("<svg") == 4 and "data:image/png" not in html
    assert panel.export_report(str(pdf_path)).startswith("Report written")
    assert pdf_path.read_bytes().startswith(b"%PDF")


def test_a_suggestion_that_saturates_is_marked(panel, window):
    # The two-stage sample: raising RC2 far enough saturates Q2; that row's bias cell is marked
    # and its verdict says so (common practice, no source: a saturated BJT does not amplify).
    panel.set_target("f_high_min", "150k")
    panel.set_target("gain", "46 dB")
    panel.settle()
    panel.find_suggestions()
    assert panel.jobs.wait(180000)
    marked = [i for i, s in enumerate(panel.suggestions) if s.effect.out_of_region]
    assert marked
    for i in marked:
        cell = panel.suggest_table.item(i, BIAS_COLUMN)
        assert cell.text().startswith("⚠") and "saturated" in cell.text()
        assert "out of its amplifying region" in panel.suggest_table.item(i, BIAS_COLUMN + 2).text()
        assert not panel.suggestions[i].meets_all
