"""One phase reference everywhere: the plot, the window's CSV and the command line's CSV
read the same phase, the mid band of an inverting stage at −180° and of a non-inverting one
at 0° (common practice, no source), and the gain axis names its unit (dB of V/V, dBΩ of a
transimpedance in V/A = Ω, SI brochure, BIPM 2019, table 4)."""

import csv

import numpy as np

from bandsketch.app.cli import main


def _read(path, f_col, ph_col):
    with open(path, newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    return np.array([float(r[f_col]) for r in rows]), np.array([float(r[ph_col]) for r in rows])


def _at(f, ph, at_hz):
    return float(np.interp(np.log10(at_hz), np.log10(f), ph))


def test_plot_window_csv_and_command_line_csv_read_the_same_phase(qtbot, window, tmp_path, capsys):
    window.open_sample("ce_hydrophone_preamp")
    panel = window.analysis_panel
    panel.runner.wait()
    analysis = panel.good.analysis
    assert analysis.midband_gain < 0, "the CE sample inverts"
    drawn = panel.bode.curves["exact"][1]
    plotted_f, plotted_ph = np.asarray(drawn.xData), np.asarray(drawn.yData)
    panel.export(str(tmp_path / "window.csv"))
    window_f, window_ph = _read(tmp_path / "window.csv", "frequency_hz", "phase_deg")
    assert main(["analyze", "--sample", "ce_hydrophone_preamp", "--csv", str(tmp_path / "cli.csv")]) == 0
    capsys.readouterr()
    cli_f, cli_ph = _read(tmp_path / "cli.csv", "frequency_hz", "phase_deg")
    # One writer, one schema: the window's file and the command line's are the same file.
    assert (tmp_path / "window.csv").read_text(encoding="utf-8") == (tmp_path / "cli.csv").read_text(encoding="utf-8")
    f_mid = float(np.sqrt(analysis.f_low_exact * analysis.f_high_exact))
    for at_hz in (f_mid, analysis.f_low_exact, analysis.f_high_exact, 3 * analysis.f_low_exact):
        readings = [_at(f, ph, at_hz) for f, ph in ((plotted_f, plotted_ph), (window_f, window_ph), (cli_f, cli_ph))]
        assert max(readings) - min(readings) < 0.5, (at_hz, readings)
    assert abs(_at(cli_f, cli_ph, f_mid) + 180) < 5, "an inverting stage reads −180° at mid band"
    # A single-pole corner lags the mid band by 45° (any first-order low-pass); the exact
    # upper corner of this stage, set 93 % by one capacitor, lags by about that.
    assert -180 - 60 < _at(cli_f, cli_ph, analysis.f_high_exact) < -180 - 30


def test_the_phase_axis_spans_the_curve_and_not_beyond(qtbot, window):
    window.open_sample("ce_hydrophone_preamp")
    panel = window.analysis_panel
    panel.runner.wait()
    qtbot.waitUntil(lambda: panel.bode.phase.viewRange()[1] != [0, 1], timeout=2000)
    low, high = panel.bode.phase.viewRange()[1]
    assert -360 <= low and high <= 0, (low, high)
    # Out to the next 45° (and a 2° margin) beyond the phase where the gain is in view, no further.
    data = panel.bode.data()
    shown = data.exact.phase_deg[data.exact.magnitude_db >= data.magnitude_view_db[0]]
    assert shown.min() - 47 <= low <= shown.min() and shown.max() <= high <= shown.max() + 47


def test_a_transimpedance_stage_says_dB_ohm_on_its_gain_axis(qtbot, window):
    window.open_sample("photodiode_tia")
    panel = window.analysis_panel
    panel.runner.wait()
    assert panel.good.analysis.gain_unit == "V/A"
    assert panel.bode.magnitude.getAxis("left").labelText == "Gain (dBΩ)"
    window.open_sample("ce_hydrophone_preamp")
    panel.runner.wait()
    assert panel.bode.magnitude.getAxis("left").labelText == "Gain (dB)"
