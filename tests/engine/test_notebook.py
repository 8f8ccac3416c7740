"""In a notebook: results print as a line, not kilobytes; an analysis gives its data as a dict,
as rows and (with pandas) as a DataFrame, shows its verdict and bars as a small HTML table,
and plots its Bode plot with matplotlib when that is installed. Common practice, no source
(the IPython display protocol: ``_repr_html_``)."""

from __future__ import annotations

import json
import sys
import xml.etree.ElementTree as ET

import pytest

from bandsketch.engine import analyze, plot_bode
from bandsketch.engine.advise.tolerance import spread_of_design
from bandsketch.engine.design.netlist import design_to_circuit
from bandsketch.engine.design.samples import load_sample
from bandsketch.engine.solve.analysisjson import analysis_to_dict
from bandsketch.engine.solve.notebook import ROW_KEYS


@pytest.fixture(scope="module")
def ce():
    doc = load_sample("ce_hydrophone_preamp")
    return doc, analyze(design_to_circuit(doc), bands=dict(doc.band_pins))


def test_reprs_are_a_line_each(ce):
    doc, a = ce
    text = repr(a)
    assert len(text) < 250 and "\n" not in text and "CE hydrophone preamp" in text and "600 kHz" in text
    for r in a.elements.values():
        assert len(repr(r)) < 200 and r.name in repr(r)
    step = a.step_response()
    others = (step, a.pulse_response(1e-4), a.operating_point, spread_of_design(doc, 50, 1))
    for obj in others:
        assert len(repr(obj)) < 250 and "\n" not in repr(obj), type(obj).__name__
    assert "forward active" in repr(a.operating_point)


def test_to_dict_is_the_json_the_command_prints(ce):
    _, a = ce
    d = a.to_dict()
    assert d == analysis_to_dict(a) and d["format"] == "bandsketch-analysis"
    json.dumps(d, allow_nan=False)


def test_to_rows_has_one_row_per_element_with_units_in_the_keys(ce):
    _, a = ce
    rows = a.to_rows()
    assert [r["element"] for r in rows] == list(a.elements)
    for row in rows:
        assert tuple(row) == ROW_KEYS
        r = a.elements[row["element"]]
        assert (row["resistance_ohm"], row["time_constant_s"], row["share"]) == (r.resistance, r.time_constant, r.share)


def test_to_frame_with_pandas(ce):
    pandas = pytest.importorskip("pandas")
    _, a = ce
    frame = a.to_frame()
    assert isinstance(frame, pandas.DataFrame) and list(frame.index) == list(a.elements)
    assert frame.loc["Q1.cmu", "band"] == "high"


def test_to_frame_without_pandas_says_what_to_install(ce, monkeypatch):
    _, a = ce
    monkeypatch.setitem(sys.modules, "pandas", None)
    with pytest.raises(ImportError, match="pip install pandas"):
        a.to_frame()


def test_html_is_the_verdict_and_the_bars(ce):
    _, a = ce
    text = a._repr_html_()
    assert len(text) < 4000
    root = ET.fromstring(text)  # well-formed, so any notebook renders it
    rows = root.findall(".//tr")
    assert len(rows) == 1 + len(a.elements)
    assert "A_m" in text and "f_H 600 kHz" in text and "f_L" in text


def test_plot_bode_with_matplotlib(ce):
    matplotlib = pytest.importorskip("matplotlib")
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    _, a = ce
    mag, phase = plot_bode(a)
    assert len(mag.get_lines()) >= 3 and len(phase.get_lines()) >= 3
    assert mag.get_ylabel() == "Gain (dB)" and mag.get_xscale() == "log"
    _, ax = plt.subplots()
    assert plot_bode(a, ax=ax) == (ax,)
    plt.close("all")


def test_plot_bode_without_matplotlib_says_what_to_install(ce, monkeypatch):
    _, a = ce
    monkeypatch.setitem(sys.modules, "matplotlib", None)
    monkeypatch.setitem(sys.modules, "matplotlib.pyplot", None)
    with pytest.raises(ImportError, match=r"bandsketch\[plot\]"):
        plot_bode(a)
