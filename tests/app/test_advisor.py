"""The advisor panel over a real design: targets as undo steps, sensitivity hover, the value
that meets a failing target applied in one click (and undone), spread with cancel, report."""

from __future__ import annotations

from pathlib import Path

import pytest
from PySide6.QtGui import QUndoStack

from app.advisor.panel import AdvisorPanel
from app.commands import Editor
from engine import analyze
from engine.designfile import load_design
from engine.netlist import design_to_circuit
from engine.targets import meets, parse_targets

SAMPLES = Path(__file__).resolve().parents[2] / "sample_designs"


@pytest.fixture
def panel(qtbot):
    doc = load_design(SAMPLES / "two_stage_miller.json")
    stack = QUndoStack()
    editor = Editor(doc, stack)
    p = AdvisorPanel(doc, editor)
    qtbot.addWidget(p)
    p._stack = stack
    yield p
    p.jobs.cancel.set()
    p.jobs.wait()


def _figures(doc):
    a = analyze(design_to_circuit(doc), bands=dict(doc.band_pins))
    return a.f_high_exact, a.f_low_exact, a.midband_gain


def test_target_is_an_undo_step_and_the_verdict_follows(panel):
    panel.set_target("f_high_min", "300k")
    assert panel.doc.targets["f_high_min"] == "300k"
    assert "FAIL" in panel.verdict_label.text()
    assert panel.meet_target.count() == 1
    panel._stack.undo()
    panel.doc.finish_edit()
    assert "f_high_min" not in panel.doc.targets
    assert panel.verdict_label.text() == "No targets set."


def test_sensitivity_rows_name_their_part(panel, qtbot):
    assert panel.sens_table.rowCount() > 5
    seen = []
    panel.part_hovered.connect(seen.append)
    panel._sens_hover(0, 1)
    first = panel.sens_table.item(0, 0).data(0x0100)
    assert seen == [first] and first in panel.doc.parts


def test_done_when_find_apply_pass_undo(panel, qtbot):
    # The acceptance path on the two-stage sample: a missed f_H target, the part that
    # matters most, its standard value applied in one click, the verdict turning to pass.
    panel.set_target("f_high_min", "300k")
    targets = parse_targets(panel.doc.targets)
    assert not meets(targets, *_figures(panel.doc))["f_high_min"]
    panel.find_values()
    assert panel.jobs.wait(120000)
    assert panel.meet_table.rowCount() == len(panel.remedies) > 0
    row = next(i for i, r in enumerate(panel.remedies) if r.apply_text)
    before = panel.doc.parts[panel.remedies[row].knob.part]
    panel.meet_table.selectRow(row)
    panel.apply_selected()
    assert meets(targets, *_figures(panel.doc))["f_high_min"]
    assert "PASS" in panel.verdict_label.text()
    panel._stack.undo()
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
    assert "design estimates" in html_path.read_text(encoding="utf-8")
    assert panel.export_report(str(pdf_path)).startswith("Report written")
    assert pdf_path.read_bytes().startswith(b"%PDF")
