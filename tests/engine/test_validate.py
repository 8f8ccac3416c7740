"""Each validation problem, triggered on purpose, with its message naming where it is.

The rules are the usual solvability conditions of nodal analysis: a reference node, every
node reachable from it, a DC path to it from every node, no loop of ideal voltage sources
(common practice; see e.g. C.-W. Ho, A. E. Ruehli, P. A. Brennan, "The modified nodal
approach to network analysis", IEEE Trans. Circuits and Systems 22(6), 1975).
"""

import pytest

from bandsketch.engine.network.circuit import Circuit
from bandsketch.engine.core.errors import CircuitError
from bandsketch.engine.network.validate import problems, validate
from bandsketch.engine.solve.analysis import analyze


def _rc():
    c = Circuit("ok")
    c.vsource("Vin", "in", "0")
    c.resistor("R1", "in", "out", "1k")
    c.capacitor("C1", "out", "0", "1n")
    c.output("out")
    return c


def _messages(c):
    return [str(e) for e in problems(c)]


def _one(c, *needles):
    """The first problem whose message holds every needle."""
    found = problems(c)
    for exc in found:
        if all(n in str(exc) for n in needles):
            assert isinstance(exc, CircuitError) and isinstance(exc, ValueError)
            return exc
    pytest.fail(f"no problem mentions {needles}: {[str(e) for e in found]}")


def test_a_good_circuit_has_no_problems():
    assert problems(_rc()) == []
    validate(_rc())


def test_no_ground():
    c = Circuit("floating")
    c.vsource("Vin", "a", "b")
    c.resistor("R1", "a", "b", "1k")
    c.output("a", "b")
    _one(c, "no ground")
    with pytest.raises(CircuitError, match="ground"):
        validate(c)


def test_node_with_a_single_connection_names_node_and_part():
    c = _rc()
    c.resistor("Rdangle", "out", "stub", "1k")
    exc = _one(c, "stub", "Rdangle")
    assert exc.nodes == ("stub",) and exc.parts == ("Rdangle",)


def test_single_connection_to_a_block_names_the_block():
    # With r_b, the base pin touches only Q1.rb: the message names Q1 (the part on the
    # sheet), not its internal element.
    c = _rc()
    c.bjt("Q1", collector="out", base="bb", emitter="0", gm="40m", rpi="2k5", rb="100")
    exc = _one(c, "bb", "Q1")
    assert exc.parts == ("Q1",) and exc.nodes == ("bb",)
    assert "Q1.rb" not in str(exc)


def test_disconnected_piece_names_its_parts():
    c = _rc()
    c.resistor("Ra", "p", "q", "1k")
    c.resistor("Rb", "p", "q", "2k")
    exc = _one(c, "not connected")
    assert "Ra" in str(exc) and "Rb" in str(exc)
    assert set(exc.parts) == {"Ra", "Rb"} and set(exc.nodes) == {"p", "q"}


def test_node_between_series_capacitors_has_no_dc_path():
    c = Circuit("series caps")
    c.vsource("Vin", "in", "0")
    c.capacitor("C1", "in", "mid", "1n")
    c.capacitor("C2", "mid", "out", "1n")
    c.resistor("RL", "out", "0", "10k")
    c.output("out")
    # The d.c. nodal matrix has a zero row at "mid": the null space names it (Ho, Ruehli,
    # Brennan, "The Modified Nodal Approach to Network Analysis", 1975: MNA is solvable iff
    # its matrix is regular).
    with pytest.raises(CircuitError, match="no DC path") as info:
        analyze(c)
    exc = info.value
    assert "mid" in str(exc) and set(exc.nodes) == {"mid"}
    assert {"C1", "C2"} <= set(exc.parts)


# The usual current-source-biased follower: in small signal the ideal bias source is open, so
# the output node touches only the load capacitor and the transistor; its transconductance
# (g_m·(v_g − v_o) into the node) makes the nodal matrix regular, so the stage is solvable.
# Its output follows: A = g_m/(g_m + g_mb) at mid band, with g_mb = 0 here, is 1 (Razavi,
# Design of Analog CMOS Integrated Circuits; from memory).
def test_current_source_biased_follower_is_accepted():
    c = Circuit("sensor buffer, source follower (invented)")
    c.vsource("Vin", "in", "0")
    c.resistor("Rsig", "in", "g", "1k")
    c.mosfet("M1", drain="0", gate="g", source="o", gm="2m", cgs="1p", cgd="0.1p")
    c.isource("Ibias", "o", "0")
    c.capacitor("CL", "o", "0", "5p")
    c.input("Vin")
    c.output("o")
    assert problems(c) == []
    a = analyze(c)
    assert a.midband_gain == pytest.approx(1.0, rel=1e-12)
    assert a.f_high_exact is not None


def test_two_sources_in_parallel_form_a_loop():
    c = _rc()
    c.vsource("V2", "in", "0")
    exc = _one(c, "loop")
    assert "Vin" in str(exc) and "V2" in str(exc)
    assert {"Vin", "V2"} <= set(exc.parts)


def test_a_shorted_source():
    c = _rc()
    c.vsource("Vshort", "out", "out")
    exc = _one(c, "Vshort", "shorted")
    assert exc.nodes == ("out",)


def test_loop_through_an_inductor():
    # An inductor across a voltage source fixes the same voltage at DC.
    c = _rc()
    c.inductor("L1", "in", "0", "1m")
    exc = _one(c, "loop")
    assert {"Vin", "L1"} <= set(exc.parts)


def test_no_signal_source():
    c = Circuit("no source")
    c.resistor("R1", "a", "0", "1k")
    c.resistor("R2", "a", "0", "1k")
    c.output("a")
    _one(c, "no signal source")


def test_several_sources_and_none_chosen():
    c = _rc()
    c.isource("I2", "out", "0")
    c.input_name = None  # as the netlister leaves it when a sheet has two sources and no choice
    exc = _one(c, "several sources")
    assert "Vin" in str(exc) and "I2" in str(exc)
    assert set(exc.parts) == {"Vin", "I2"}


def test_input_that_is_not_a_source():
    c = _rc()
    c.input("R1")
    exc = _one(c, "R1", "not an independent source")
    assert "Vin" in str(exc)


def test_no_output():
    c = Circuit("no output")
    c.vsource("Vin", "in", "0")
    c.resistor("R1", "in", "0", "1k")
    _one(c, "No output")


def test_output_on_a_missing_node():
    c = _rc()
    c.output("nowhere")
    exc = _one(c, "nowhere")
    assert exc.nodes == ("nowhere",)


def test_current_controlled_source_sensing_an_unknown_branch():
    c = _rc()
    c.cccs("F1", "out", "0", "Vmissing", "10")
    exc = _one(c, "F1", "Vmissing")
    assert exc.parts == ("F1",)
    c = _rc()
    c.ccvs("H1", "x", "0", "R1", "1k")  # a resistor is not a sensed branch
    c.resistor("Rx", "x", "0", "1k")
    exc = _one(c, "H1", "R1")
    assert exc.parts == ("H1",)


def test_empty_circuit():
    assert "empty" in _messages(Circuit("nothing"))[0]


def test_validate_raises_the_first_problem():
    c = Circuit("two faults")
    c.resistor("R1", "a", "b", "1k")
    found = problems(c)
    assert len(found) >= 2
    with pytest.raises(CircuitError) as info:
        validate(c)
    assert str(info.value) == str(found[0])
