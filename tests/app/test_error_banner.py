"""Each ill-posed circuit, drawn on the sheet, shows the banner naming what is wrong and where.

The common-emitter sample is broken in one way at a time — no ground, a dangling pin, a node
with no DC path, a loop of voltage sources, a shorted signal source, no output, a bad value —
and the analysis panel must show the banner with the engine's message, naming the part or
node, without crashing; putting the design back hides it again. No outside reference.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from bandsketch.engine.design.designfile import load_design
from bandsketch.engine.design.document import Part, Wire

SAMPLE = Path(__file__).parents[2] / "sample_designs" / "ce_hydrophone_preamp.json"


def no_ground(doc):
    for name in [n for n, p in doc.parts.items() if p.kind == "ground"]:
        doc.remove_part(name)
    return ["no ground"]


def dangling_pin(doc):
    # A resistor grounded at one end, its other pin touching nothing.
    doc.add_part(Part("resistor", "Rloose", 900, 340, params={"value": "1k"}))
    doc.add_part(Part("ground", "GNDx", 900, 380))
    return ["only one connection", "Rloose"]


def no_dc_path(doc):
    # The load resistor becomes a capacitor: the output node sits between two capacitors.
    old = doc.parts["RL"]
    doc.replace_part("RL", Part("capacitor", "RL", old.x, old.y, old.rotation, old.mirror, {"value": "1n"}))
    return ["no DC path", "Cout"]


def voltage_source_loop(doc):
    # A second source drawn on top of the signal source: the two are in parallel.
    vsig = doc.parts["Vsig"]
    doc.add_part(Part("vsource", "Vx", vsig.x, vsig.y))
    return ["loop of voltage sources", "Vx", "Vsig"]


def shorted_signal_source(doc):
    pins = doc.parts["Vsig"].pins()
    doc.add_wire(Wire(doc.new_wire_id(), (pins["p"], (pins["p"][0] - 40, pins["p"][1]),
                                          (pins["n"][0] - 40, pins["n"][1]), pins["n"])))
    return ["shorted", "Vsig"]


def no_output(doc):
    doc.remove_part(next(n for n, p in doc.parts.items() if p.kind == "output"))
    return ["No output"]


def bad_value(doc):
    doc.replace_part("RC", doc.parts["RC"].with_params(value="4k7k"))
    return ["RC", "4k7k"]


BREAKS = [no_ground, dangling_pin, no_dc_path, voltage_source_loop, shorted_signal_source, no_output, bad_value]


@pytest.mark.parametrize("breaking", BREAKS, ids=lambda f: f.__name__)
def test_each_ill_posed_design_shows_a_banner_naming_it(window, breaking):
    panel = window.analysis_panel
    window.set_document(load_design(SAMPLE), str(SAMPLE))
    panel.runner.wait()
    assert panel.banner.isHidden() and panel.good is not None
    good = panel.good

    broken = load_design(SAMPLE)
    expected = breaking(broken)
    window.set_document(broken, None, unsaved=True)
    panel.runner.wait()
    assert not panel.banner.isHidden(), f"no banner for {breaking.__name__}"
    message = panel.banner.text()
    for words in expected:
        assert words.lower() in message.lower(), message
    assert panel.good is good, "the last good result is kept (greyed)"

    window.set_document(load_design(SAMPLE), str(SAMPLE))
    panel.runner.wait()
    assert panel.banner.isHidden()
