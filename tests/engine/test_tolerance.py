"""Tolerance spread: the batched sample solver against the analysis's own exact corners."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from bandsketch.engine import analyze
from bandsketch.engine.advise import tolerance as T
from bandsketch.engine.design.designfile import load_design
from bandsketch.engine.core.errors import Cancelled
from bandsketch.engine.solve.mna import build_system
from bandsketch.engine.design.netlist import design_to_circuit
from bandsketch.engine.advise.partvalues import coefficients_for, parametric_system, part_values, value_of, with_value
from bandsketch.engine.solve.dcop import operating_point
from bandsketch.engine.advise.targets import Targets
from bandsketch.engine.core.values import parse_value

SAMPLES = Path(__file__).resolve().parents[2] / "sample_designs"


def _design(name):
    doc = load_design(SAMPLES / f"{name}.json")
    c = design_to_circuit(doc)
    return c, analyze(c, bands=dict(doc.band_pins))


@pytest.fixture(scope="module")
def ce():
    return _design("ce_hydrophone_preamp")


def _scaled(tols, k):
    return tuple(T.Tolerance(t.value, t.tolerance * k, t.source) for t in tols)


def test_patterns_rebuild_the_nodal_matrices(ce):
    # Source: bandsketch.engine.solve.mna.build_system itself, on a circuit with every value changed.
    c, _ = ce
    pvs = part_values(c)
    ps = parametric_system(c, [p.element for p in pvs])
    factors = np.linspace(0.7, 1.3, len(pvs))
    changed = c.with_elements({p.element: with_value(c.elements[p.element], p.nominal * f)
                               for p, f in zip(pvs, factors)})
    want = build_system(changed)
    G, C = ps.matrices(coefficients_for(ps, c, factors[None, :]))
    np.testing.assert_allclose(G[0], want.G.toarray(), rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(C[0], want.C.toarray(), rtol=1e-12, atol=1e-24)


@pytest.mark.parametrize("name", ["ce_hydrophone_preamp", "two_stage_miller", "photodiode_tia",
                                  "cascode_line_receiver"])
def test_zero_tolerance_gives_the_nominal(name):
    # Source: analyze()'s brentq corners and its resistive mid-band gain.
    c, a = _design(name)
    s = T.monte_carlo(c, a, _scaled(T.default_tolerances(c), 0.0), samples=20, seed=3)
    np.testing.assert_allclose(s.gain, a.midband_gain, rtol=1e-12)
    for got, want in ((s.f_high, a.f_high_exact), (s.f_low, a.f_low_exact)):
        if want is None:
            assert np.isnan(got).all()
        else:
            np.testing.assert_allclose(got, want, rtol=1e-9)


@pytest.mark.parametrize("name", ["ce_hydrophone_preamp", "cs_partly_bypassed"])
def test_a_sample_is_the_analysis_of_that_circuit(name):
    # Source: analyze() of the design with the sample's transistor parameters (β, I_S or V_th,
    # K_P) written into its fields, its values into its elements, its bias solved again for
    # them (the sample is biased from the sheet), and then each derived value's own tolerance
    # factor applied at that point.
    doc = load_design(SAMPLES / f"{name}.json")
    c = design_to_circuit(doc)
    a = analyze(c, bands=dict(doc.band_pins))
    tols = T.default_tolerances(c)
    assert {t.value.key for t in tols if t.value.element not in c.elements} == (
        {"beta", "isat"} if name.startswith("ce") else {"vth", "kp"})
    s = T.monte_carlo(c, a, tols, samples=5, seed=11)
    u = np.random.default_rng(11).uniform(-1, 1, size=(5, len(tols)))
    for i in (0, 4):
        factors = 1 + u[i] * np.array([t.tolerance for t in tols])
        device = doc.copy()
        for t, f in zip(tols, factors):
            if t.value.element not in c.elements:
                part = device.parts[t.value.part]
                # A MOSFET sized by k′·W/L takes its K_P spread as k′'s.
                key = "kprime" if t.value.key == "kp" and not part.params.get("kp") else t.value.key
                scaled = parse_value(part.params[key]) * f
                device.replace_part(part.name, part.with_params(**{key: f"{scaled:.12g}"}))
        d = design_to_circuit(device)
        in_dc = {el.name for el in d.dc_elements()}
        dc = {t.value.element: f for t, f in zip(tols, factors) if t.value.element in in_dc}
        biased = d.with_elements({n: with_value(d.elements[n], value_of(d.elements[n]) * f) for n, f in dc.items()},
                                 rebias=True)
        operating_point(biased)
        changed = biased.with_elements({t.value.element: with_value(biased.elements[t.value.element],
                                                                    value_of(biased.elements[t.value.element]) * f)
                                        for t, f in zip(tols, factors)
                                        if t.value.element in d.elements and t.value.element not in in_dc})
        b = analyze(changed)
        # The batched and the one-design bias solves agree to about 1e-8 (both stop at 1e-9 of
        # each node's currents), which bounds the agreement here.
        assert s.f_high[i] == pytest.approx(b.f_high_exact, rel=1e-6)
        assert s.f_low[i] == pytest.approx(b.f_low_exact, rel=1e-6)
        assert s.gain[i] == pytest.approx(b.midband_gain, rel=1e-6)


def test_spread_shrinks_with_the_tolerance(ce):
    # Source: first-order error propagation, σ(f) ∝ tolerance for small tolerances.
    c, a = ce
    tols = T.default_tolerances(c)
    wide = T.monte_carlo(c, a, _scaled(tols, 0.2), samples=4000, seed=5)
    narrow = T.monte_carlo(c, a, _scaled(tols, 0.1), samples=4000, seed=5)
    for fig in ("f_high", "f_low", "gain"):
        ratio = np.std(getattr(narrow, fig)) / np.std(getattr(wide, fig))
        assert 0.45 < ratio < 0.55, fig


def test_reproducible_from_the_seed_whatever_the_batch(ce, monkeypatch):
    c, a = ce
    one = T.monte_carlo(c, a, samples=3000, seed=42)
    monkeypatch.setattr(T, "CHUNK", 777)
    two = T.monte_carlo(c, a, samples=3000, seed=42)
    np.testing.assert_array_equal(one.f_high, two.f_high)
    np.testing.assert_array_equal(one.gain, two.gain)
    other = T.monte_carlo(c, a, samples=3000, seed=43)
    assert not np.array_equal(one.f_high, other.f_high)


def test_worst_case_bounds_the_samples(ce):
    # The figures are monotone in each value across these bands, so the box's vertices
    # bound every interior sample (a property of the design, checked, not assumed).
    c, a = ce
    s = T.monte_carlo(c, a, samples=4000, seed=9)
    worst = {(w.figure, w.extreme): w.value for w in s.worst_cases}
    series = {"f_high": s.f_high, "f_low": s.f_low, "gain": np.abs(s.gain)}
    for fig, v in series.items():
        assert worst[(fig, "min")] <= v.min() * (1 + 1e-12)
        assert worst[(fig, "max")] >= v.max() * (1 - 1e-12)


def test_yield_and_histograms(ce):
    c, a = ce
    s0 = T.monte_carlo(c, a, samples=2000, seed=1)
    median = float(np.median(s0.f_high))
    targets = Targets(f_high_min=median)
    s = T.monte_carlo(c, a, samples=2000, seed=1, targets=targets)
    assert s.yields["f_high_min"] == pytest.approx(0.5, abs=0.001)
    assert s.yields["all"] == s.yields["f_high_min"]
    h = next(h for h in s.histograms if h.figure == "f_high")
    assert h.counts.sum() + h.missing == 2000
    assert h.target_lines[0][0] == median
    assert h.nominal == a.f_high_exact


def test_progress_and_cancel(ce):
    c, a = ce
    seen = []
    T.monte_carlo(c, a, samples=5000, seed=1, progress=lambda done, total: seen.append((done, total)))
    assert seen[-1] == (5000, 5000) and [d for d, _ in seen] == sorted(d for d, _ in seen)
    calls = []

    def cancel():
        calls.append(1)
        return len(calls) > 1

    with pytest.raises(Cancelled):
        T.monte_carlo(c, a, samples=5000, seed=1, cancel=cancel)


def test_defaults_say_where_they_come_from(ce):
    c, _ = ce
    tols = T.default_tolerances(c)
    assert all(t.source for t in tols)
    by = {t.value.element: t for t in tols}
    assert by["RC"].tolerance == 0.05 and "IEC 60063" in by["RC"].source
    # A biased transistor's β spreads (its source says so); r_π = β/g_m follows it.
    assert "no source" in by["Q1.beta"].source and by["Q1.beta"].tolerance == 0.30
    assert by["Q1.rpi"].tolerance == 0.0 and "follows" in by["Q1.rpi"].source
    over = T.default_tolerances(c, {"RC": 0.01})
    assert next(t for t in over if t.value.element == "RC").tolerance == 0.01
    with pytest.raises(ValueError, match="RC"):
        T.default_tolerances(c, {"RC": 1.5})
