"""Connections a designer can see: a part dropped on a wire goes in series, every joint inside
a wire gets a dot, and a shorted part is said out loud on the sheet, in the banner and by
``bandsketch analyze``. The rules are our own (README, "How parts connect"); the expected nets
are worked out by hand from the drawing (common practice, no source)."""

import json

from PySide6.QtCore import Qt

from bandsketch.app import cli
from bandsketch.app.edits import junctions
from bandsketch.engine.design.designfile import load_design, save_design
from bandsketch.engine.design.document import Part
from bandsketch.engine.design.netlist import build_netlist
from bandsketch.engine.design.parts import KINDS
from sheet import place, snapshot, wire

SAMPLES = __import__("pathlib").Path(__file__).parents[2] / "sample_designs"


def two_resistors_joined(qtbot, window):
    """R at (100, 100) and (100, 300), a wire from the first's lower pin to the second's upper."""
    top = place(qtbot, window, "Resistor", 100, 100)
    bottom = place(qtbot, window, "Resistor", 100, 300)
    a, b = window.doc.parts[top].pins()["b"], window.doc.parts[bottom].pins()["a"]
    wire(qtbot, window, a, b)
    return top, bottom


def test_a_part_dropped_on_a_wire_goes_in_series_in_one_undo_step(qtbot, window):
    top, bottom = two_resistors_joined(qtbot, window)
    before, steps = snapshot(window.doc), window.stack.count()
    c = place(qtbot, window, "Capacitor", 100, 200)
    nets = build_netlist(window.doc).pin_net
    assert nets[(c, "a")] != nets[(c, "b")], "the capacitor is not shorted"
    assert {nets[(c, "a")], nets[(c, "b")]} == {nets[(top, "b")], nets[(bottom, "a")]}
    assert len(window.doc.wires) == 2, "the wire is cut in two at the pins"
    assert not [p for p in window.scene.problems if "shorted" in p.message]
    assert window.stack.count() == steps + 1
    window.act_undo.trigger()
    assert snapshot(window.doc) == before


def test_a_wire_drawn_past_a_pin_joins_it_with_a_dot(qtbot, window):
    r = place(qtbot, window, "Resistor", 200, 200, rotate=1)
    a, b = window.doc.parts[r].pins().values()
    y = a[1]
    left, right = place(qtbot, window, "Ground", 40, y), place(qtbot, window, "Ground", 360, y)
    g1, g2 = window.doc.parts[left].pins()["g"], window.doc.parts[right].pins()["g"]
    wire(qtbot, window, g1, g2)  # straight through both pins of the turned resistor
    dots = set(junctions(window.doc))
    nets = build_netlist(window.doc).pin_net
    for pin in ("a", "b"):
        if nets[(r, pin)] == nets[(left, "g")]:
            assert window.doc.parts[r].pins()[pin] in dots, "a pin joined inside a wire has a dot"
    shorted = [p for p in window.scene.problems if p.parts == (r,)]
    assert shorted and shorted[0].message.startswith(f"{r} is shorted: both pins on net 0")


def shorted_file(tmp_path):
    """The partly bypassed sample with a resistor put down across one of its wires the way
    the old sheet allowed: both pins on the wire's inside, so both on the same net."""
    doc = load_design(SAMPLES / "cs_partly_bypassed.json")
    doc.add_part(Part("resistor", "R9", 60, 300, 0, False, KINDS["resistor"].default_params()))
    path = tmp_path / "shorted.json"
    save_design(doc, path)
    return path, doc


def test_an_old_file_keeps_its_connections_and_its_short_is_ringed_and_listed(qtbot, window, tmp_path):
    path, doc = shorted_file(tmp_path)
    assert window.open_design(str(path))
    window.analysis_panel.runner.wait()
    assert dict(build_netlist(window.doc).pin_net) == dict(build_netlist(doc).pin_net)
    message = "R9 is shorted: both pins on net Vsig.p"
    rings = [item for item in window.scene.items() if getattr(item, "message", "").startswith(message)]
    assert len(rings) == 2, "both pins are ringed"
    banner = window.analysis_panel.banner
    assert message in banner.text()
    assert window.analysis_panel.outcome.ok, "a short does not stop the analysis"
    assert "1 problem" in window.problem_label.text()


def test_the_banner_lists_every_problem_and_each_shows_its_place(qtbot, window):
    r = place(qtbot, window, "Resistor", 200, 200)
    window.analysis_panel.runner.wait()
    banner = window.analysis_panel.banner
    problems = banner.entries()
    assert len(problems) >= 3
    assert f"(and {len(problems) - 1} more problems)" in banner.message.text()
    assert banner.lines.isHidden()
    qtbot.mouseClick(banner.toggle, Qt.MouseButton.LeftButton)
    lines = [banner._lines.itemAt(i).widget() for i in range(banner._lines.count())]
    assert [line.text() for line in lines] == [f"• {p.message}" for p in problems]
    assert "more problem" not in banner.message.text()
    window.scene.clearSelection()
    pointing = next(i for i, p in enumerate(problems) if r in p.parts)
    qtbot.mouseClick(lines[pointing], Qt.MouseButton.LeftButton)
    assert window.scene.selected_names() == [r]
    qtbot.wait(50)
    window.grab().save("/tmp/sheet-banner.png")


def test_analyze_reports_a_short_in_the_table_the_json_and_on_stderr(tmp_path, capsys):
    path, _ = shorted_file(tmp_path)
    message = "R9 is shorted: both pins on net Vsig.p"
    assert cli.main(["analyze", str(path)]) == 0
    out, err = capsys.readouterr()
    assert message in out and message in err
    assert cli.main(["analyze", str(path), "--json"]) == 0
    out, _ = capsys.readouterr()
    assert any(w.startswith(message) for w in json.loads(out)["warnings"])


def test_two_output_probes_give_one_consistent_message(qtbot, window):
    top, bottom = two_resistors_joined(qtbot, window)
    place(qtbot, window, "Output probe", 100, 60)
    place(qtbot, window, "Output probe", 100, 340)
    window.analysis_panel.runner.wait()
    text = window.analysis_panel.banner.text()
    assert "keep one" in text
    assert "No output" not in text
