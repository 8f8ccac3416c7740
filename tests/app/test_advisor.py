"""The advisor panel over a real design: targets as undo steps, sensitivity hover, the value
that meets a failing target applied in one click (and undone), spread with cancel, report."""

from __future__ import annotations

from pathlib import Path

import pytest

from bandsketch.engine import analyze
from bandsketch.engine.design.designfile import load_design
from bandsketch.engine.design.netlist import design_to_circuit
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


def _figures(doc):
    a = analyze(design_to_circuit(doc), bands=dict(doc.band_pins))
    return a.f_high_exact, a.f_low_exact, a.midband_gain


def test_target_is_an_undo_step_and_the_verdict_follows(panel):
    panel.set_target("f_high_min", "300k")
    panel.settle()
    assert panel.doc.targets["f_high_min"] == "300k"
    assert "FAIL" in panel.verdict_label.text()
    assert panel.meet_target.count() == 1
    panel.editor.undo()
    panel.settle()
    assert "f_high_min" not in panel.doc.targets
    assert panel.verdict_label.text() == "No targets set."


def test_sensitivities_wait_until_shown_and_name_their_part(panel, window, qtbot):
    # An edit while another page shows does not pay for them; showing the page works them out.
    assert panel.sens_table.rowCount() == 0
    window.analysis_tabs.setCurrentWidget(panel)
    panel.tabs.setCurrentIndex(1)
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


def test_done_when_find_apply_pass_undo(panel, qtbot):
    # The acceptance path on the two-stage sample: a missed f_H target, the part that
    # matters most, its standard value applied in one click, the verdict turning to pass.
    panel.set_target("f_high_min", "300k")
    panel.settle()
    targets = parse_targets(panel.doc.targets)
    assert not meets(targets, *_figures(panel.doc))["f_high_min"]
    panel.find_values()
    assert panel.jobs.wait(120000)
    assert panel.meet_table.rowCount() == len(panel.remedies) > 0
    row = next(i for i, r in enumerate(panel.remedies) if r.apply_text)
    before = panel.doc.parts[panel.remedies[row].knob.part]
    panel.meet_table.selectRow(row)
    panel.apply_selected()
    panel.settle()
    assert meets(targets, *_figures(panel.doc))["f_high_min"]
    assert "PASS" in panel.verdict_label.text()
    panel.editor.undo()
    assert panel.doc.parts[before.name] == before


def test_spread_runs_and_cancels(panel, qtbot):
    panel.set_target("f_high_min", "150k")
    panel.samples.setValue(3000)
    panel.run_spread()
    assert panel.jobs.wait(60000)
    assert panel.spread is not None and panel.spread.samples == 3000
    assert "Yield" in panel.spread_label.text()
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
    # The sheet, the Bode plot and the bars, as the window draws them.
    for alt in ("schematic", "Bode plot", "time-constant bars"):
        assert f'<img alt="{alt}" src="data:image/png;base64,' in html
    assert panel.export_report(str(pdf_path)).startswith("Report written")
    assert pdf_path.read_bytes().startswith(b"%PDF")
