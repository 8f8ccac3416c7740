"""The advisor's suggestions and searches, judged the way a designer judges them.

Every "meets the targets" claim is checked by writing the value into the design and running
the full analysis again, independently of the advisor's own bookkeeping. The two-knob
search is held to a hand calculation; the yield to a plain-numpy Monte Carlo of closed forms.

Sources: the common-emitter gain −g_m·R_C·r_π/(r_π + R_s) and the single output pole
1/(2π R_C C_L) are the textbook hybrid-π results (Sedra & Smith, Microelectronic Circuits,
common-emitter amplifier; from memory); the binomial standard error √(p(1−p)/n) of a
sampled proportion is standard statistics (from memory).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

from bandsketch.engine import analyze
from bandsketch.engine.advise.effect import effect_of
from bandsketch.engine.advise.knobs import is_design_choice, knobs
from bandsketch.engine.advise.search import search
from bandsketch.engine.advise.suggest import suggest, yield_of
from bandsketch.engine.advise.targets import check_targets, parse_targets, with_field
from bandsketch.engine.design.designfile import load_design
from bandsketch.engine.design.document import Document, Part
from bandsketch.engine.design.netlist import design_to_circuit
from bandsketch.engine.design.parts import KINDS

SAMPLES = Path(__file__).resolve().parents[2] / "sample_designs"


def _reanalysed(doc, changes):
    """The design with the suggestion written in, analysed from scratch, every target judged."""
    for c in changes:
        doc = with_field(doc, c.knob.part, c.knob.key, c.text)
    a = analyze(design_to_circuit(doc), bands=dict(doc.band_pins))
    return check_targets(parse_targets(doc.targets), a, a.gain_unit)


@pytest.mark.parametrize("path", sorted(SAMPLES.glob("*.json")), ids=lambda p: p.stem)
def test_suggestions_marked_as_meeting_meet_every_target_when_applied(path):
    doc = load_design(path)
    for target in list(doc.targets):
        doc.set_target(target, None)
    now = effect_of(doc, parse_targets({}))
    # f_H must rise by a quarter while the gain stays within ±1 dB of where it is.
    doc.set_target("f_high_min", f"{1.25 * now.f_high:.6g}")
    doc.set_target("gain", f"{abs(now.gain):.6g}")
    assert effect_of(doc, parse_targets(doc.targets)).failing == ("f_high_min",)
    advice = suggest(doc, parse_targets(doc.targets), with_yield=False)
    assert advice.suggestions, "a rise of f_H by 25 % should be in reach of some knob"
    kinds = {p.name: p.kind for p in doc.parts.values()}
    for s in advice.suggestions:
        # Nothing changes a device's physics: no part here has "I can choose another device".
        # A part value, a rail, a device's size (I_S, K_P, W, L) are the designer's to choose.
        assert all(is_design_choice(kinds[c.knob.part], c.knob.key) for c in s.changes), s.label
        assert not any(c.knob.device for c in s.changes)
        checks = _reanalysed(doc, s.changes)
        assert all(c.passed for c in checks) == s.meets_all, (s.label, [c.text for c in checks])
    ranks = [s.meets_all for s in advice.suggestions]
    assert ranks == sorted(ranks, reverse=True), "rows that meet everything come first"


def test_device_physics_is_offered_only_when_the_designer_can_choose_another_device():
    doc = load_design(SAMPLES / "ce_hydrophone_preamp.json")
    doc.set_target("f_high_min", "1M")
    # Without "I can choose another device", only Q1's size (I_S scales with emitter area).
    assert [k.key for k in knobs(doc) if k.part == "Q1"] == ["isat"]
    doc.replace_part("Q1", doc.parts["Q1"].with_sourcing(knob="yes"))
    assert {k.key for k in knobs(doc) if k.part == "Q1" and k.device} >= {"beta", "va"}
    doc.replace_part("RC", doc.parts["RC"].with_sourcing(knob="no"))
    advice = suggest(doc, parse_targets(doc.targets), only={"Q1", "RC"}, with_yield=False)
    assert advice.suggestions and {c.knob.part for s in advice.suggestions for c in s.changes} == {"Q1"}
    assert any(c.knob.device for s in advice.suggestions for c in s.changes)


# -- a hand-built common-emitter stage ---------------------------------------------------------
def _stage(rs="1k", rc="10k", cl="100p", gm="40m", rpi="2k5"):
    """Vsig -> Rs -> Q1 base; emitter grounded; RC and CL from collector to ground; output there.

    Every pin is tied to its net by a label (or a ground) on the pin itself. Q1 is given by its
    small-signal values with no capacitances of its own, so the collector node has one pole.
    """
    doc = Document("hand-built CE stage (invented)")
    nets = {}

    def put(kind, name, x, params, pins):
        part = Part(kind, name, x, 0, params={**KINDS[kind].default_params(), **params})
        doc.add_part(part)
        for i, (pin, pos) in enumerate(part.pins().items()):
            net = pins[pin]
            tag = f"N{len(doc.parts)}"
            if net == "0":
                doc.add_part(Part("ground", tag, *pos))
            else:
                doc.add_part(Part("label", tag, *pos, params={"net": net}))
            nets.setdefault(net, pos)

    put("vsource", "Vsig", 0, {}, {"p": "in", "n": "0"})
    put("resistor", "Rs", 200, {"value": rs}, {"a": "in", "b": "base"})
    put("bjt", "Q1", 400, {"mode": "small_signal", "gm": gm, "rpi": rpi, "cpi": "", "cmu": ""},
        {"base": "base", "collector": "col", "emitter": "0"})
    put("resistor", "RC", 600, {"value": rc}, {"a": "col", "b": "0"})
    put("capacitor", "CL", 800, {"value": cl}, {"a": "col", "b": "0"})
    doc.add_part(Part("output", "OUT1", *nets["col"]))
    doc.set_meta(input_source="Vsig")
    doc.replace_part("Rs", doc.parts["Rs"].with_sourcing(knob="no"))  # the source's own resistance
    return doc


def test_hand_built_stage_matches_the_closed_forms():
    e = effect_of(_stage(), parse_targets({}))
    gain = 40e-3 * 10e3 * 2.5e3 / (2.5e3 + 1e3)          # g_m R_C r_π / (r_π + R_s) = 285.7
    assert abs(e.gain) == pytest.approx(gain, rel=1e-9)
    assert e.f_high == pytest.approx(1 / (2 * math.pi * 10e3 * 100e-12), rel=1e-6)   # 159.2 kHz
    assert e.f_low is None


def test_two_knob_search_meets_what_no_single_knob_can():
    # Hand calculation. Now |A_m| = g_m R_C r_π/(r_π + R_s) = 0.04 · 10k · 2.5/3.5 = 285.7 V/V
    # (49.1 dB) and f_H = 1/(2π R_C C_L) = 159 kHz. Targets: |A_m| = 400 V/V ± 1 dB and
    # f_H ≥ 300 kHz. The gain needs R_C = 400 · 3.5/(0.04 · 2.5) = 14 kΩ (12.5 k to 15.7 k
    # inside ±1 dB); f_H then needs C_L ≤ 1/(2π · 14k · 300k) = 37.9 pF.
    # One knob alone: C_L does not move the gain (fails the gain); R_C for the gain gives
    # f_H = 1/(2π · 12.5k...15.7k · 100p) = 101...127 kHz (fails f_H). Together: E24 R_C = 13 k
    # (|A_m| = 371 V/V, −0.65 dB) with E6 C_L = 33 pF gives f_H = 371 kHz: both met.
    doc = _stage()
    doc.set_target("gain", "400")
    doc.set_target("f_high_min", "300k")
    targets = parse_targets(doc.targets)
    single = suggest(doc, targets, with_yield=False)
    assert single.suggestions and not any(s.meets_all for s in single.suggestions)
    found = search(doc, targets, ["RC", "CL"], samples=400)
    assert found.found, found.text
    values = {c.knob.part: c.value for c in found.best.changes}
    rc, cl = values["RC"], values["CL"]
    assert 12.5e3 <= rc <= 15.7e3 and cl <= 1 / (2 * math.pi * rc * 300e3)
    assert all(c.passed for c in _reanalysed(doc, found.best.changes))


def test_search_says_when_no_combination_can():
    # f_H ≥ 30 MHz would need R_C·C_L ≤ 5.3 ns: with the gain at 400 V/V (R_C ≥ 12.5 kΩ)
    # that is C_L ≤ 0.42 pF, below the 10 pF the E6 range searched around 100 pF reaches.
    doc = _stage()
    doc.set_target("gain", "400")
    doc.set_target("f_high_min", "30M")
    found = search(doc, parse_targets(doc.targets), ["RC", "CL"], with_yield=False)
    assert not found.found and found.text.startswith("No combination of RC, CL meets every target")
    assert "Closest:" in found.text


def test_yield_agrees_with_a_plain_numpy_monte_carlo():
    # Tolerances: R_C ±5 % and C_L ±10 % (their kinds' defaults), Q1's g_m ±10 % and r_π ±30 %
    # (the BJT defaults); R_s set to 0 % here. Targets chosen to land the yield mid-range.
    doc = _stage()
    doc.replace_part("Rs", doc.parts["Rs"].with_sourcing(tolerance="0 %"))
    doc.set_target("gain", "285.7")
    doc.set_target("gain_tolerance", "8 %")
    doc.set_target("f_high_min", "150k")
    targets = parse_targets(doc.targets)
    n = 4000
    engine = yield_of(doc, targets, samples=n, seed=3)
    rng = np.random.default_rng(12345)
    rc = 10e3 * (1 + 0.05 * rng.uniform(-1, 1, n))
    cl = 100e-12 * (1 + 0.10 * rng.uniform(-1, 1, n))
    gm = 40e-3 * (1 + 0.10 * rng.uniform(-1, 1, n))
    rpi = 2.5e3 * (1 + 0.30 * rng.uniform(-1, 1, n))
    gain = gm * rc * rpi / (rpi + 1e3)
    f_high = 1 / (2 * np.pi * rc * cl)
    ok = (gain >= targets.gain_min) & (gain <= targets.gain_max) & (f_high >= 150e3)
    p = ok.mean()
    assert 0.2 < p < 0.8, "the targets should leave the yield mid-range, where the test is sharpest"
    # Two independent estimates of one proportion: their difference has standard error
    # √(p(1−p)·2/n) = 1.1 % at n = 4000; allow four of those (a 1-in-16,000 false alarm).
    bound = 4 * math.sqrt(p * (1 - p) * 2 / n)
    assert abs(engine.fraction - p) <= bound, (engine.fraction, p, bound)
    assert engine.standard_error == pytest.approx(math.sqrt(engine.fraction * (1 - engine.fraction) / n))


def test_command_line_advise_json_shape(tmp_path, capsys):
    import json

    from bandsketch.app.cli import main
    from bandsketch.engine.design.designfile import save_design

    doc = _stage()
    doc.set_target("gain", "400")
    doc.set_target("f_high_min", "300k")
    path = tmp_path / "ce.json"
    save_design(doc, path)
    assert main(["advise", str(path), "--knobs", "RC,CL", "--json", "--samples", "200"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["suggestions"]
    for row in data["suggestions"]:
        assert {"part", "field", "value", "meets_all", "f_high", "f_low", "gain"} <= set(row)
        assert row["part"] in ("RC", "CL") and row["field"] == "value"
        assert isinstance(row["meets_all"], bool) and row["f_low"] is None  # d.c.-coupled: no f_L
        assert row["f_high"] > 0 and row["gain"] > 0
    assert data["combination"]["found"] and data["combination"]["meets_all"]
    assert main(["advise", str(path), "--knobs", "Q1"]) == 2
    assert "no value the advisor may change" in capsys.readouterr().err
    assert main(["advise", str(path)]) == 0
    assert "RC =" in capsys.readouterr().out
