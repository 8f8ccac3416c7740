"""The design report holds every figure the app shows for the same design.

Source of the figures: bandsketch.engine.present.plotdata (what the bars, the Bode plot and the verdict strip
draw), bandsketch.engine.advise.targets (the target verdicts), bandsketch.engine.advise.sensitivity and bandsketch.engine.advise.tolerance.
"""

from __future__ import annotations

import html
import re
from pathlib import Path

import pytest

from bandsketch.engine import analyze
from bandsketch.engine.design.designfile import load_design
from bandsketch.engine.design.netlist import design_to_circuit
from bandsketch.engine.present.plotdata import bar_data, bode_data, verdict_data
from bandsketch.engine.present.report import CAUTION, REFERENCES, build_report, design_source, write_report
from bandsketch.engine.advise.sensitivity import sensitivities
from bandsketch.engine.advise.targets import check_targets, parse_targets
from bandsketch.engine.advise.tolerance import spread_of_design

SAMPLES = Path(__file__).resolve().parents[2] / "sample_designs"


@pytest.fixture(scope="module")
def design():
    doc = load_design(SAMPLES / "two_stage_miller.json")
    doc.set_target("f_high_min", "300k")
    doc.set_target("f_low_max", "50")
    spread = spread_of_design(doc, 2000, 7)
    return doc, spread, build_report(doc, spread=spread)


def _has(report, text):
    return html.escape(text) in report


def test_every_figure_the_app_shows(design):
    doc, spread, report = design
    c = design_to_circuit(doc)
    a = analyze(c, bands=dict(doc.band_pins))
    v = verdict_data(a)
    for text in (v.gain_text, v.high_text, v.low_text, v.dominant_text, *v.warnings):
        assert _has(report, text), text
    for group in bar_data(a).groups:
        assert _has(report, group.total_text)
        for row in group.rows:
            assert _has(report, row.value_text) and _has(report, row.share_text), row.name
    for m in bode_data(a).markers:
        assert _has(report, m.text), m.text
    for check in check_targets(parse_targets(doc.targets), a):
        assert _has(report, check.text)
    for row in sensitivities(c, a).rows:
        signed = f"{row.high_exact:+.3f}".replace("-", "\u2212")  # the report's one minus sign
        assert f"{html.escape(row.value.label)}</td><td class=\"n\">{signed}" in report
    for key, y in spread.yields.items():
        assert f"{100 * y:.1f} %" in report


def test_self_contained_with_method_and_caution(design):
    _, _, report = design
    assert not re.search(r'(src|href)="(https?:|//|file:)', report)
    assert report.count(html.escape(CAUTION)) == 2
    for ref in ("Thornton", "Cochrun", "Ho, Ruehli"):
        assert ref in report
    assert len(REFERENCES) >= 3
    assert report.count("<svg") == 3  # Bode plot, bars and step response drawn inline without Qt


def test_the_schematic_given_is_inline_and_the_file_is_named_with_its_hash(tmp_path):
    doc = load_design(SAMPLES / "ce_hydrophone_preamp.json")
    for key in list(doc.targets):
        doc.set_target(key, None)
    sheet = '<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10" viewBox="0 0 10 10"><title>sheet</title></svg>'
    content = (SAMPLES / "ce_hydrophone_preamp.json").read_bytes()
    path = tmp_path / "r.html"
    write_report(doc, path, schematic_svg=sheet, source=design_source("ce.json", content), samples=200)
    text = path.read_text(encoding="utf-8")
    assert sheet in text and text.count("<svg") == 4  # the sheet, the Bode plot, the bars, the step response
    assert "The design sets no targets." in text
    # The hash a reader can check with sha256sum (hashlib is the reference).
    import hashlib
    assert "ce.json" in text and hashlib.sha256(content).hexdigest() in text
    assert "bandsketch 0.1.0" in text  # the tool's version


def test_without_a_schematic_the_report_says_so(design):
    _, _, report = design
    assert "No schematic" in report
