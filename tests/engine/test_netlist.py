"""Nets from drawn geometry, and a drawn design turned into a circuit.

The connection rules (touching ends and T-junctions join, plain crossings do not, equal
labels join, the ground symbol is the reference) are the usual schematic-capture
conventions: common practice, no source. Coordinates are scene units on the 20-unit grid;
a resistor at (x, y) unrotated has pin a at (x, y − 40) and pin b at (x, y + 40).
"""

import numpy as np
import pytest

from bandsketch.engine.network.circuit import Circuit
from bandsketch.engine.design.document import Document, Part, Wire
from bandsketch.engine.network.elements import VCCS, Capacitor, Resistor, VSource
from bandsketch.engine.core.errors import CircuitError
from bandsketch.engine.solve.mna import build_system
from bandsketch.engine.design.netlist import build_netlist, connectivity_problems, design_to_circuit
from bandsketch.engine.design.parts import KINDS, ROTATIONS, pin_positions, transform_point
from bandsketch.engine.solve.response import frequency_response


def _part(kind, name, x, y, rotation=0, mirror=False, **params):
    return Part(kind, name, x, y, rotation, mirror, {**KINDS[kind].default_params(), **params})


def _doc(*parts, wires=()):
    doc = Document("netlist test")
    for p in parts:
        doc.add_part(p)
    for pts in wires:
        doc.add_wire(Wire(doc.new_wire_id(), tuple(pts)))
    return doc


def _same(nets, *pins):
    return len({nets.pin_net[p] for p in pins}) == 1


def test_touching_wire_ends_connect():
    doc = _doc(_part("resistor", "R1", 0, 0), _part("resistor", "R2", 100, 0),
               wires=[[(0, -40), (50, -40)], [(50, -40), (100, -40)]])
    nets = build_netlist(doc)
    assert _same(nets, ("R1", "a"), ("R2", "a"))
    assert not _same(nets, ("R1", "b"), ("R2", "b"))
    assert nets.wire_net[1] == nets.wire_net[2] == nets.pin_net[("R1", "a")]


def test_t_junction_connects():
    # R3's pin b is at (50, −60); its wire ends on the inside of the R1–R2 wire.
    doc = _doc(_part("resistor", "R1", 0, 0), _part("resistor", "R2", 100, 0),
               _part("resistor", "R3", 50, -100),
               wires=[[(0, -40), (100, -40)], [(50, -60), (50, -40)]])
    assert _same(build_netlist(doc), ("R1", "a"), ("R2", "a"), ("R3", "b"))


def test_crossing_wires_do_not_connect():
    # A vertical wire from R3.b (50, −60) to R4.a (50, 0) crosses the R1–R2 wire at (50, −40).
    doc = _doc(_part("resistor", "R1", 0, 0), _part("resistor", "R2", 100, 0),
               _part("resistor", "R3", 50, -100), _part("resistor", "R4", 50, 40),
               wires=[[(0, -40), (100, -40)], [(50, -60), (50, 0)]])
    nets = build_netlist(doc)
    assert _same(nets, ("R1", "a"), ("R2", "a"))
    assert _same(nets, ("R3", "b"), ("R4", "a"))
    assert not _same(nets, ("R1", "a"), ("R3", "b"))


def test_pin_on_the_inside_of_a_wire_connects():
    # R5's pin b sits at (120, −40), inside the wire from R1.a to (200, −40); R6's pin b
    # sits on that wire's bend point (200, −40), its pin a at (200, −120) off the wire.
    doc = _doc(_part("resistor", "R1", 0, 0), _part("resistor", "R5", 120, -80),
               _part("resistor", "R6", 200, -80),
               wires=[[(0, -40), (200, -40), (200, 40), (240, 40)]])
    nets = build_netlist(doc)
    assert _same(nets, ("R1", "a"), ("R5", "b"), ("R6", "b"))
    assert not _same(nets, ("R1", "a"), ("R6", "a"))


def test_equal_net_labels_connect_and_name_the_net():
    doc = _doc(_part("resistor", "R1", 0, 0), _part("resistor", "R2", 100, 0),
               _part("label", "N1", 0, 40, net="x"), _part("label", "N2", 100, 40, net="x"),
               _part("label", "N3", 0, -40, net="y"))
    nets = build_netlist(doc)
    assert nets.pin_net[("R1", "b")] == nets.pin_net[("R2", "b")] == "x"
    assert nets.pin_net[("R1", "a")] == "y"
    assert nets.pin_net[("R2", "a")] != "y"


def test_blank_labels_do_not_join_nets():
    # A label whose name was cleared names nothing, so it joins nothing.
    doc = _doc(_part("resistor", "R1", 0, 0), _part("resistor", "R2", 100, 0),
               _part("label", "N1", 0, 40, net=""), _part("label", "N2", 100, 40, net=" "))
    nets = build_netlist(doc)
    assert not _same(nets, ("R1", "b"), ("R2", "b"))


def test_ground_symbol_is_node_zero():
    doc = _doc(_part("resistor", "R1", 0, 0), _part("resistor", "R2", 100, 0),
               _part("ground", "GND1", 0, 40), _part("ground", "GND2", 100, 40))
    nets = build_netlist(doc)
    assert nets.pin_net[("R1", "b")] == nets.pin_net[("R2", "b")] == "0"
    assert nets.pin_net[("R1", "a")] == "R1.a"  # a net without a label is named by its first pin


@pytest.mark.parametrize("rotation", ROTATIONS)
@pytest.mark.parametrize("mirror", [False, True])
def test_rotation_and_mirror_move_pins_as_transform_point_says(rotation, mirror):
    x0, y0 = 400, 200
    q = _part("bjt", "Q1", x0, y0, rotation, mirror)
    for pin, (px, py) in KINDS["bjt"].pins.items():
        dx, dy = transform_point(px, py, rotation, mirror)
        assert q.pins()[pin] == (x0 + dx, y0 + dy)
    assert q.pins() == pin_positions("bjt", x0, y0, rotation, mirror)
    # And the netlister uses those positions: a resistor wired to the transformed base
    # point joins the base, not the collector.
    base = q.pins()["base"]
    r = _part("resistor", "R1", base[0] - 200, base[1] - 40)  # pin b at (base.x − 200, base.y)
    doc = _doc(q, r, wires=[[(base[0] - 200, base[1]), base]])
    nets = build_netlist(doc)
    assert _same(nets, ("Q1", "base"), ("R1", "b"))
    assert not _same(nets, ("Q1", "collector"), ("R1", "b"))


def test_transform_point_closed_forms():
    # Clockwise on screen with y down: (x, y) -> (−y, x) for 90°; mirror flips x first.
    assert transform_point(1, 2, 0, False) == (1, 2)
    assert transform_point(1, 2, 90, False) == (-2, 1)
    assert transform_point(1, 2, 180, False) == (-1, -2)
    assert transform_point(1, 2, 270, False) == (2, -1)
    assert transform_point(1, 2, 90, True) == (-2, -1)
    with pytest.raises(ValueError):
        transform_point(1, 2, 45, False)


def _common_emitter_design():
    """A hand-laid common-emitter stage (an invented scenario: a contact-microphone preamp).

    Vsig (0, 0): p (0, −40), n (0, 40) on ground. Rs at (60, −80) turned 90°: b (20, −80),
    a (100, −80). Cin at (160, −80) turned 90°: b (120, −80), a (200, −80) = Q1's base.
    Rb (200, 0) from the base to ground; Rc (260, −160) from ground (an AC ground) to the
    collector (260, −120); Re (260, 0) and Ce (320, 0) from the emitter to ground. The
    output probe sits inside the collector wire; a label names that net "out".
    """
    parts = [
        _part("vsource", "Vsig", 0, 0),
        _part("resistor", "Rs", 60, -80, 90, value="600"),
        _part("capacitor", "Cin", 160, -80, 90, value="4u7"),
        _part("bjt", "Q1", 240, -80, gm="80m", rpi="2k5", ro="50k", rb="100", cpi="20p", cmu="2p"),
        _part("resistor", "Rb", 200, 0, value="8k2"),
        _part("resistor", "Rc", 260, -160, value="2k2"),
        _part("resistor", "Re", 260, 0, value="470"),
        _part("capacitor", "Ce", 320, 0, value="100u"),
        _part("ground", "GND1", 0, 40), _part("ground", "GND2", 200, 40),
        _part("ground", "GND3", 260, -200), _part("ground", "GND4", 260, 40),
        _part("ground", "GND5", 320, 40),
        _part("output", "OUT1", 300, -120),
        _part("label", "N1", 340, -120, net="out"),
    ]
    wires = [
        [(0, -40), (0, -80), (20, -80)],      # Vsig.p to Rs.b
        [(100, -80), (120, -80)],             # Rs.a to Cin.b
        [(200, -80), (200, -40)],             # base to Rb.a
        [(260, -40), (320, -40)],             # emitter to Ce.a
        [(260, -120), (340, -120)],           # collector, through the probe, to the label
    ]
    return _doc(*parts, wires=wires)


def test_design_to_circuit_common_emitter():
    doc = _common_emitter_design()
    c = design_to_circuit(doc)
    els = c.elements
    assert els["Vsig"] == VSource("Vsig", "Vsig.p", "0")
    assert els["Rs"] == Resistor("Rs", "Rs.a", "Vsig.p", 600.0)
    assert els["Cin"] == Capacitor("Cin", "Cin.a", "Rs.a", 4.7e-6)
    assert els["Rb"] == Resistor("Rb", "Cin.a", "0", 8200.0)
    assert els["Rc"] == Resistor("Rc", "0", "out", 2200.0)
    assert els["Re"] == Resistor("Re", "Q1.emitter", "0", 470.0)
    assert els["Ce"] == Capacitor("Ce", "Q1.emitter", "0", 100e-6)
    assert els["Q1.rb"] == Resistor("Q1.rb", "Cin.a", "Q1.bi", 100.0, "Q1")
    assert els["Q1.gm"] == VCCS("Q1.gm", "out", "Q1.emitter", "Q1.bi", "Q1.emitter", 0.08, "Q1")
    assert els["Q1.cmu"] == Capacitor("Q1.cmu", "Q1.bi", "out", 2e-12, "Q1")
    assert set(c.nodes()) == {"0", "Vsig.p", "Rs.a", "Cin.a", "Q1.bi", "Q1.emitter", "out"}
    assert c.input_name == "Vsig" and c.output_nodes == ("out", "0")
    # The same stage written as a script gives the same response.
    ref = Circuit("script")
    ref.vsource("Vsig", "sig", "0")
    ref.resistor("Rs", "sig", "x", "600")
    ref.capacitor("Cin", "x", "b", "4u7")
    ref.resistor("Rb", "b", "0", "8k2")
    ref.bjt("Q1", collector="c", base="b", emitter="e", gm="80m", rpi="2k5", ro="50k", rb="100",
            cpi="20p", cmu="2p")
    ref.resistor("Rc", "c", "0", "2k2")
    ref.resistor("Re", "e", "0", "470")
    ref.capacitor("Ce", "e", "0", "100u")
    ref.output("c")
    f = np.logspace(0, 9, 10)
    np.testing.assert_allclose(frequency_response(build_system(c), f),
                               frequency_response(build_system(ref), f), rtol=1e-12)
    assert connectivity_problems(doc) == []


def test_operating_point_block_from_a_design():
    doc = _common_emitter_design()
    q = doc.parts["Q1"].with_params(mode="operating_point", ic="1m", beta="100", ft="300M")
    doc.replace_part("Q1", q)
    c = design_to_circuit(doc)
    assert c.blocks["Q1"].values["gm"] == pytest.approx(1e-3 / 0.025851999786435, rel=1e-9)


def test_dangling_pin_is_marked_with_its_point():
    doc = _common_emitter_design()
    doc.add_part(_part("resistor", "R9", 500, 0))  # touches nothing
    doc.add_wire(Wire(doc.new_wire_id(), ((340, -120), (500, -120), (500, -40))))  # R9.a on out
    found = connectivity_problems(doc)
    dangling = [p for p in found if "R9.b" in p.message]
    assert dangling, [p.message for p in found]
    assert dangling[0].parts == ("R9",) and dangling[0].points == ((500, 40),)
    with pytest.raises(CircuitError, match="R9"):
        design_to_circuit(doc)


def test_bad_value_is_reported_first_naming_part_and_field():
    doc = _common_emitter_design()
    doc.replace_part("Rc", doc.parts["Rc"].with_params(value="4k7k"))
    found = connectivity_problems(doc)
    assert "Rc" in found[0].message and found[0].parts == ("Rc",)
    with pytest.raises(CircuitError, match="Rc"):
        design_to_circuit(doc)


def test_two_sources_and_no_choice_on_a_sheet():
    doc = _common_emitter_design()
    doc.add_part(_part("isource", "I1", 400, -80))
    doc.add_part(_part("ground", "GND6", 400, -40))
    doc.add_wire(Wire(doc.new_wire_id(), ((340, -120), (400, -120))))
    messages = [p.message for p in connectivity_problems(doc)]
    assert any("several sources" in m and "I1" in m and "Vsig" in m for m in messages), messages
    doc.set_meta(input_source="Vsig")
    assert connectivity_problems(doc) == []


def test_two_output_probes_are_refused():
    doc = _common_emitter_design()
    doc.add_part(_part("output", "OUT2", 200, -40))
    found = connectivity_problems(doc)
    assert any({"OUT1", "OUT2"} <= set(p.parts) for p in found)


def test_no_output_probe():
    doc = _common_emitter_design()
    doc.remove_part("OUT1")
    assert any("No output" in p.message for p in connectivity_problems(doc))
