"""The time-domain figures on the command line, in JSON and as a CSV waveform.

These check that every output carries the engine's own figures unchanged (common practice,
no source); the figures themselves are held to closed forms and scipy.signal in test_step.py.
"""

from __future__ import annotations

import csv
import json
from pathlib import Path

import numpy as np
import pytest

from bandsketch.app.cli import main
from bandsketch.engine import analyze, load_design
from bandsketch.engine.design.netlist import design_to_circuit

SAMPLE = Path(__file__).resolve().parents[2] / "sample_designs" / "follower_cable_driver.json"


def test_analyze_prints_the_time_domain_figures(capsys):
    assert main(["analyze", str(SAMPLE)]) == 0
    out = capsys.readouterr().out
    assert "Step response (modal" in out
    for name in ("rise time (10–90 %)", "overshoot", "settling to 1 %", "settling to 0.1 %", "delay to 50 %",
                 "pulse sag"):
        assert name in out
    assert "expect about" in out


def test_analyze_json_carries_the_figures(capsys):
    assert main(["analyze", str(SAMPLE), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)["time_domain"]
    step = analyze(design_to_circuit(load_design(SAMPLE))).step_response()
    assert data["rise_time_s"] == pytest.approx(step.rise_time)
    assert data["overshoot"] == pytest.approx(step.overshoot)
    rise = data["figures"][0]
    assert rise["first_order_error"] == pytest.approx(step.rise_time_estimate / step.rise_time - 1)
    assert 0 < data["pulse"]["sag"] < 1


def test_step_command_writes_the_waveform(tmp_path, capsys):
    path = tmp_path / "step.csv"
    assert main(["step", str(SAMPLE), "--csv", str(path), "--t-stop", "300n", "--points", "301"]) == 0
    assert "rise time" in capsys.readouterr().out
    with path.open(encoding="utf-8", newline="") as f:
        rows = list(csv.reader(f))
    assert rows[0][:2] == ["time_s", "exact_V_per_V"]
    assert len(rows) == 302
    t = np.array([float(r[0]) for r in rows[1:]])
    assert t[-1] == pytest.approx(300e-9)
    step = analyze(design_to_circuit(load_design(SAMPLE))).step_response(300e-9, 301)
    assert np.allclose([float(r[1]) for r in rows[1:]], step.y, rtol=1e-8, atol=1e-12)


@pytest.mark.parametrize("bad", [["--t-stop", "-1u"], ["--t-stop", "soon"], ["--points", "2"]])
def test_step_command_refuses_bad_options_in_words(bad, capsys):
    with pytest.raises(SystemExit) as exit_:
        main(["step", str(SAMPLE), *bad])
    assert exit_.value.code == 2
    assert "bandsketch step" in capsys.readouterr().err


def test_report_has_the_step_plot_and_table():
    from bandsketch.engine.present.report import build_report

    text = build_report(load_design(SAMPLE), samples=50)
    section = text[text.index("<h2>Step response</h2>"):]
    section = section[:section.index("<h2>", 5)]
    assert 'aria-label="Step response"' in section
    for name in ("rise time (10–90 %)", "overshoot", "settling to 1 %", "delay to 50 %", "pulse sag"):
        assert f"<td>{name}</td>" in section
    step = analyze(design_to_circuit(load_design(SAMPLE))).step_response()
    assert f"expect about {100 * step.overshoot_estimate:.0f} % overshoot" in section
