"""What the analysis views draw: estimated curves against their closed forms, sweep, bars, verdict."""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest

from bandsketch.engine.present import plotdata
from bandsketch.engine.present.plotdata import (HALF_POWER_DB, HISTOGRAM_TICKS, bar_data, bode_data, histogram_axis, sweep_range,
                             verdict_data)
from bandsketch.engine.advise.tolerance import Histogram


def _element(name, band, r, c, share, pinned=False):
    return SimpleNamespace(name=name, band=band, resistance=r, capacitance=c, time_constant=r * c,
                           share=share, pinned=pinned, reason=f"reason for {name}",
                           state="short" if band == "low" else "open", state_reason=f"state of {name}",
                           pole_zero_pair=False)


def _two_corner(am=-40.0, f_l=20.0, f_h=1e6, **extra):
    """A stand-in analysis of A_m·s/(s+ω_L)/(1+s·b1): its estimates are exact by construction."""
    b1, wl = 1 / (2 * math.pi * f_h), 2 * math.pi * f_l

    def response(f):
        s = 2j * np.pi * np.asarray(f, dtype=float)
        return am * s / (s + wl) / (1 + s * b1)

    caps = {"Cmu": _element("Cmu", "high", 74.9e3, 2e-12, 0.84),
            "Cl": _element("Cl", "high", 2e3, b1 * 0.16 / 2e3, 0.16),
            "Cin": _element("Cin", "low", 1e3, 1e-5, 0.3),
            "Ce": _element("Ce", "low", 30.0, 1e-4, 0.7, pinned=True),
            "Cn": _element("Cn", "neutral", 1e3, 1e-9, 0.0)}
    fields = dict(gain_unit="V/V", midband_gain=am, capacitors=caps, inductors={}, elements=caps,
                  b1=b1, b2=0.0, high_time_constants=(b1,), f_high_estimate=f_h, f_high_estimate_2nd=f_h,
                  omega_low_estimate=wl, f_low_estimate=f_l, f_high_exact=f_h * 0.98,
                  f_low_exact=f_l * 1.02, dominant_high="Cmu", dominant_low="Ce", warnings=["a warning"],
                  response=response)
    fields.update(extra)
    return SimpleNamespace(**fields)


def _at(curve, f):
    return np.interp(math.log10(f), np.log10(curve.freq_hz), curve.magnitude_db)


def test_high_estimate_is_half_power_at_one_over_two_pi_b1():
    # |A_m/(1 + jωb1)| = |A_m|/√2 at ω = 1/b1 (common practice, no source).
    am, b1 = -37.5, 1.7e-7
    h = plotdata.high_estimate_response(am, b1, [1 / (2 * math.pi * b1)])
    assert abs(h[0]) == pytest.approx(abs(am) / math.sqrt(2), rel=1e-12)
    assert np.degrees(np.angle(h[0] / am)) == pytest.approx(-45.0, abs=1e-9)


def test_low_estimate_is_half_power_at_omega_l():
    # |A_m·s/(s + ω_L)| = |A_m|/√2 at ω = ω_L, phase lead 45° (common practice, no source).
    am, wl = 12.0, 2 * math.pi * 35.0
    h = plotdata.low_estimate_response(am, wl, [35.0])
    assert abs(h[0]) == pytest.approx(am / math.sqrt(2), rel=1e-12)
    assert np.degrees(np.angle(h[0] / am)) == pytest.approx(45.0, abs=1e-9)


def test_bode_curves_match_the_closed_forms_and_meet_in_the_mid_band():
    a = _two_corner()
    d = bode_data(a)
    mid = 20 * math.log10(40.0)
    assert d.midband_db == pytest.approx(mid)
    # Well inside the mid band every curve reads A_m (20·log10 40 = 32.04 dB).
    assert _at(d.exact, 4.5e3) == pytest.approx(mid, abs=0.01)
    assert _at(d.high_estimate, 1e6) == pytest.approx(mid - HALF_POWER_DB, abs=0.02)
    assert _at(d.low_estimate, 20.0) == pytest.approx(mid - HALF_POWER_DB, abs=0.02)
    split = math.sqrt(20.0 * 1e6)
    assert d.high_estimate.freq_hz.min() >= split and d.low_estimate.freq_hz.max() <= split
    # An inverting stage reads −180° in the mid band; the high estimate lags by atan(f/f_H) and
    # the low estimate leads by atan(f_L/f) (first-order phase, common practice, no source).
    mid_phase = np.interp(math.log10(4.5e3), np.log10(d.exact.freq_hz), d.exact.phase_deg)
    assert mid_phase == pytest.approx(-180.0, abs=0.5)
    fh, fl = d.high_estimate.freq_hz, d.low_estimate.freq_hz
    assert d.high_estimate.phase_deg == pytest.approx(-180 - np.degrees(np.arctan(fh / 1e6)))
    assert d.low_estimate.phase_deg == pytest.approx(-180 + np.degrees(np.arctan(20.0 / fl)))


def test_markers_sit_at_the_corners_three_db_down():
    d = bode_data(_two_corner())
    got = {(m.corner, m.estimated): m for m in d.markers}
    assert set(got) == {("high", True), ("high", False), ("low", True), ("low", False)}
    assert got[("high", True)].freq_hz == 1e6
    assert got[("low", False)].freq_hz == pytest.approx(20.4)
    assert all(m.level_db == pytest.approx(d.midband_db - 3.0103, abs=1e-4) for m in d.markers)
    assert got[("high", True)].text == "f_H ≈ 1 MHz"
    assert got[("high", False)].text == "f_H = 980 kHz"


def test_sweep_spans_a_decade_beyond_the_outermost_corner_or_pole():
    # The lowest is Cin's own 1/(2π·1 kΩ·10 µF) = 15.9 Hz, below f_L; the highest is f_H.
    # A decade beyond each, 1.59 Hz and 10 MHz, out to the quarter decade: 1 Hz and 10 MHz.
    lo, hi = sweep_range(_two_corner())
    assert lo == pytest.approx(1.0) and hi == pytest.approx(1e7)
    # A corner moved a little leaves the span as it was.
    assert sweep_range(_two_corner(f_h=0.95e6)) == (lo, hi)
    # A far parasitic pole does not squeeze the corners into a corner of the plot.
    far = _two_corner(high_time_constants=(1 / (2 * math.pi * 1e6), 1 / (2 * math.pi * 1e9)))
    assert sweep_range(far)[1] == pytest.approx(1e7)


def test_dc_coupled_sweep_keeps_decades_of_mid_band_below_the_corner():
    high_only = {k: v for k, v in _two_corner().capacitors.items() if v.band == "high"}
    a = _two_corner(f_low_estimate=None, f_low_exact=None, omega_low_estimate=None,
                    capacitors=high_only, elements=high_only, dominant_low=None)
    lo, hi = sweep_range(a)
    assert hi == pytest.approx(1e7) and math.log10(hi / lo) == pytest.approx(plotdata.MIN_DECADES)
    d = bode_data(a)
    assert d.low_estimate is None
    assert {m.corner for m in d.markers} == {"high"}


def test_no_corner_at_all_uses_the_default_range():
    a = _two_corner(f_low_estimate=None, f_low_exact=None, f_high_estimate=None, f_high_exact=None,
                    high_time_constants=None, elements={})
    assert sweep_range(a) == plotdata.DEFAULT_RANGE_HZ


def test_bars_sorted_by_share_with_dominant_and_pinned_marked():
    bars = bar_data(_two_corner())
    assert [g.band for g in bars.groups] == ["high", "low", "neutral"]
    high, low, neutral = bars.groups
    assert [r.name for r in high.rows] == ["Cmu", "Cl"]
    assert [r.name for r in low.rows] == ["Ce", "Cin"]
    assert high.rows[0].dominant and not high.rows[1].dominant
    assert low.rows[0].dominant and low.rows[0].pinned
    assert high.rows[0].value == pytest.approx(74.9e3 * 2e-12)
    assert high.rows[0].value_text == "150 ns" and high.rows[0].share_text == "84 %"
    # A low-band bar reads 1/τ as a frequency: 1/(2π·30 Ω·100 µF) = 53.1 Hz.
    assert low.rows[0].value == pytest.approx(1 / (2 * math.pi * 3e-3))
    assert low.rows[0].value_text == "53.1 Hz" and low.rows[0].share_text == "70 %"
    assert neutral.rows[0].share == 0 and not neutral.rows[0].dominant
    tiny = bar_data(_two_corner(elements={"Cx": _element("Cx", "high", 1.0, 1e-15, 0.004)}))
    assert tiny.groups[0].rows[0].share_text == "<1 %"
    assert high.total_text == "b1 = 159 ns → f_H ≈ 1 MHz"
    assert low.total_text == "ω_L = 126 rad/s → f_L ≈ 20 Hz"
    assert bars.row("Cin").band == "low" and bars.row("nothing") is None


def test_port_picture_label_and_tooltip_carry_the_elements_own_numbers():
    a = _two_corner()
    assert plotdata.element_label(a.capacitors["Cmu"]) == "R = 74.9 kΩ · τ = 150 ns · 84 % of b1"
    tip = plotdata.element_tooltip(a.capacitors["Ce"])
    assert "low band" in tip and "(pinned)" in tip and "Why: reason for Ce" in tip
    assert "R = 30 Ω" in tip


def test_block_internal_elements_belong_to_their_block():
    assert plotdata.part_of("Q1.cmu") == "Q1" and plotdata.part_of("Cin") == "Cin"


def test_verdict_reads_gain_corners_errors_and_the_limiting_element():
    v = verdict_data(_two_corner())
    assert v.gain_text == "A_m = \u221240 V/V (32.0 dB)"
    assert v.high_text == "f_H ≈ 1 MHz estimated, 980 kHz exact (+2.0 %)"
    assert v.low_text == "f_L ≈ 20 Hz estimated, 20.4 Hz exact (−2.0 %)"
    assert v.dominant_text == "Cmu sets f_H (84 % of b1); Ce sets f_L (70 % of the 3 dB at f_L)"
    assert v.warnings == ("a warning",)


def test_verdict_says_plainly_when_a_corner_is_missing():
    v = verdict_data(_two_corner(f_low_estimate=None, f_low_exact=None, f_high_exact=None))
    assert v.low_text == "f_L: none (no element sets this corner)"
    assert "never falls 3 dB" in v.high_text


def test_hover_readout_reads_the_nearest_swept_point():
    d = bode_data(_two_corner())
    f = d.exact.freq_hz
    i = int(np.argmin(np.abs(f - 1e6)))
    assert d.readout(f[i] * 1.001) == (f"f = {plotdata.format_value(f[i], 'Hz')} · "
                                      f"{d.exact.magnitude_db[i]:.1f} dB · ∠ {d.exact.phase_deg[i]:.1f}°")
    assert d.readout(1e12) == ""


def test_magnitude_view_keeps_the_corners_in_sight():
    d = bode_data(_two_corner())
    bottom, top = d.magnitude_view_db
    step = plotdata.VIEW_STEP_DB
    # Both ends on whole steps, so a small edit leaves the axis as it was.
    assert bottom % step == 0 and top % step == 0
    # Room above the mid band for the corner labels: a share of the span, at least 6 dB.
    assert top - d.midband_db >= max(6.0, plotdata.PEAK_ROOM * (top - step - bottom))
    assert top - d.midband_db < max(6.0, plotdata.PEAK_ROOM * (top - bottom)) + step
    # The sweep reaches about a decade beyond each corner, some 20 dB down: all of it is in view.
    low = d.exact.magnitude_db.min() - 6.0
    assert low - step < bottom <= low
    assert bottom > d.midband_db - plotdata.VIEW_DEPTH_DB - step
    # A zero on the swept frequency reads as the floor, a finite number, not −∞, and the
    # view stops VIEW_DEPTH_DB below the mid band.
    notch = bode_data(_two_corner(response=lambda f: np.zeros(len(f))))
    assert np.all(notch.exact.magnitude_db == plotdata.DB_FLOOR)
    deepest = notch.midband_db - plotdata.VIEW_DEPTH_DB - 6.0
    assert deepest - step < notch.magnitude_view_db[0] <= deepest


def test_response_csv_has_every_swept_point_both_magnitudes_and_the_estimates_where_drawn(tmp_path):
    import csv

    d = bode_data(_two_corner())
    path = tmp_path / "curves.csv"
    plotdata.write_response_csv(d, path)
    with path.open(encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert list(rows[0]) == plotdata.response_csv_columns("V/V")
    assert len(rows) == len(d.exact.freq_hz)
    assert float(rows[0]["frequency_hz"]) == pytest.approx(d.exact.freq_hz[0], rel=1e-8)
    last = rows[-1]
    assert float(last["magnitude_db"]) == pytest.approx(d.exact.magnitude_db[-1], abs=1e-6)
    # Linear and dB agree: 20·log10 of the linear magnitude is the dB column (the definition).
    assert 20 * np.log10(float(last["magnitude_v_per_v"])) == pytest.approx(float(last["magnitude_db"]), abs=1e-6)
    assert float(last["high_estimate_db"]) == pytest.approx(d.high_estimate.magnitude_db[-1], abs=1e-6)
    assert last["low_estimate_db"] == "" and rows[0]["high_estimate_db"] == ""
    assert float(rows[0]["low_estimate_db"]) == pytest.approx(d.low_estimate.magnitude_db[0], abs=1e-6)
    assert "−" not in path.read_text(encoding="utf-8")  # machine output: the ASCII minus only


def test_histogram_axis_labels_ticks_with_prefixes_and_spans_the_targets():
    # The spread of a corner near 250 kHz with a 300 kHz target: every bin and the target
    # line are in view, ticks sit on round steps inside it, each written as format_value does.
    edges = np.linspace(160e3, 290e3, 41)
    hist = Histogram("f_high", "Hz", edges, np.ones(40, dtype=int), 209e3, ((300e3, "f_H ≥ 300 kHz"),), 0)
    axis = histogram_axis(hist)
    assert axis.low < 160e3 and axis.high > 300e3
    values = [v for v, _ in axis.ticks]
    assert all(axis.low <= v <= axis.high for v in values) and 2 <= len(values) <= HISTOGRAM_TICKS
    steps = np.diff(values)
    assert np.allclose(steps, steps[0]) and steps[0] in (25e3, 50e3)
    assert dict(axis.ticks)[250e3] == "250 kHz"
    assert all("Hz" in text and "000" not in text for _, text in axis.ticks)


def test_histogram_axis_keeps_close_ticks_apart():
    # Ticks a fraction of a per cent apart need a fourth digit, or two would both read "1 MHz".
    edges = np.linspace(1.000e6, 1.012e6, 11)
    axis = histogram_axis(Histogram("f_high", "Hz", edges, np.ones(10, dtype=int), None, (), 0))
    texts = [t for _, t in axis.ticks]
    assert len(set(texts)) == len(texts) >= 2


def test_a_peak_above_the_mid_band_stays_in_view_with_the_label_over_it():
    # A second-order low-pass with Q = 2 at 1 MHz peaks by Q/sqrt(1 - 1/(4Q²)) (the textbook
    # resonant-peak closed form, 6.3 dB here); the axis keeps room above it and the f_H
    # estimate's label is pinned over the peak, not across it.
    q, w0, wl, am = 2.0, 2 * math.pi * 1e6, 2 * math.pi * 20.0, -40.0

    def response(f):
        s = 2j * np.pi * np.asarray(f, dtype=float)
        return am * s / (s + wl) * w0 ** 2 / (s * s + s * w0 / q + w0 ** 2)

    d = bode_data(_two_corner(am=am, response=response))
    rise = 20 * math.log10(q / math.sqrt(1 - 1 / (4 * q * q)))
    assert d.peak is not None and d.peak[1] - d.midband_db == pytest.approx(rise, abs=0.05)
    bottom, top = d.magnitude_view_db
    assert plotdata.PEAK_ROOM * (top - bottom) - plotdata.VIEW_STEP_DB <= top - d.peak[1] < (
        plotdata.PEAK_ROOM * (top - bottom) + plotdata.VIEW_STEP_DB)
    by_kind = {(m.corner, m.estimated): m for m in d.markers}
    assert by_kind["high", True].label_db == d.peak[1]
    assert by_kind["high", False].label_db == by_kind["low", True].label_db == d.midband_db - HALF_POWER_DB
    assert bode_data(_two_corner()).peak is None


def test_a_voltage_gain_below_one_reads_as_a_plain_ratio():
    # Common practice, no source: a follower's gain is written 0.895 V/V, not 895 mV/V.
    from bandsketch.engine.present.plotdata import _gain_text

    assert _gain_text(0.8954, "V/V").startswith("A_m = 0.895 V/V")
    assert _gain_text(-1e5, "V/A").startswith("A_m = \u2212100 kΩ")  # V/A is Ω (SI brochure, BIPM 2019)


# -- how the corners moved (the value scrub's note beside its ghost) ---------------------

def test_corner_shift_names_the_corner_that_moved():
    # Stand-in analyses whose exact corners are 0.98 f_H and 1.02 f_L by construction.
    before = bode_data(_two_corner(f_h=772.4e3 / 0.98))
    after = bode_data(_two_corner(f_h=828.6e3 / 0.98))
    shift = plotdata.corner_shift(before, after)
    assert shift.text == "f_H 772 → 829 kHz"
    assert dict(shift.labels) == {"high": "f_H 772 → 829 kHz"} and shift.note == ""


def test_corner_shift_writes_both_corners_and_prefixes_apart():
    before = bode_data(_two_corner(f_l=20.0, f_h=998e3 / 0.98))
    after = bode_data(_two_corner(f_l=10.0, f_h=1.02e6 / 0.98))
    assert plotdata.corner_shift(before, after).text == "f_H 998 kHz → 1.02 MHz · f_L 20.4 → 10.2 Hz"


def test_corner_shift_without_a_move_says_the_gain():
    # 20·log10(40) = 32.04 dB, 20·log10(44) = 32.87 dB (closed form).
    before, after = bode_data(_two_corner(am=-40.0)), bode_data(_two_corner(am=-44.0))
    shift = plotdata.corner_shift(before, after)
    assert shift.text == shift.note == "A_m 32.0 → 32.9 dB" and not shift.labels


def test_a_gain_window_below_0_db_reads_with_true_minus_signs_and_to():
    # A follower's window, 0.86–0.94 V/V, lies below 0 dB: "−1.31–−0.54" would read as three
    # minus signs; the label says "to" and writes U+2212 (common practice, no source).
    from bandsketch.engine.advise.targets import Targets
    marks = plotdata.target_marks(Targets(gain=0.9, gain_min=0.86, gain_max=0.94))
    assert marks.gain_text == "gain \u22121.31 to \u22120.537 dB"
    assert plotdata.target_marks(Targets(gain=100, gain_min=84.1, gain_max=119)).gain_text == "gain 38.5–41.5 dB"
