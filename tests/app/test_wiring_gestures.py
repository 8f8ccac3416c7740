"""Wiring gestures driven as a user does: pins start wires, near misses land on the pin,
the floating part turns before it is put down (common practice, no source)."""

from PySide6.QtCore import Qt

from bandsketch.engine.design.netlist import build_netlist
from sheet import at, click, drag, place


def test_a_press_on_a_pin_of_the_part_just_placed_starts_a_wire(qtbot, window):
    r = place(qtbot, window, "Resistor", 200, 200)
    assert window.scene.selected_names() == [r], "the part just placed is selected"
    g = place(qtbot, window, "Ground", 300, 300)
    window.scene.select([r])
    drag(qtbot, window, (200, 240), (300, 240))  # press on R's lower pin, release in empty sheet
    click(qtbot, window, 300, 300)  # finish on the ground's pin
    part = window.doc.parts[r]
    assert (part.x, part.y) == (200, 200), "the part did not move"
    assert len(window.doc.wires) == 1
    nets = build_netlist(window.doc).pin_net
    assert nets[(r, "b")] == nets[(g, "g")]


def test_a_part_still_moves_when_dragged_by_its_body(qtbot, window):
    r = place(qtbot, window, "Resistor", 200, 200)
    drag(qtbot, window, (202, 200), (262, 200))
    part = window.doc.parts[r]
    assert (part.x, part.y) == (260, 200)
    assert not window.doc.wires


def test_the_turn_key_turns_the_floating_part_before_it_is_put_down(qtbot, window):
    qtbot.mouseClick(window.palette_panel.buttons["Capacitor"], Qt.MouseButton.LeftButton)
    window.view.setFocus()
    qtbot.mouseMove(window.view.viewport(), at(window, 200, 200))
    qtbot.keyClick(window.view, Qt.Key.Key_T)
    assert window.controller._ghost.part.rotation == 90, "the floating part turned"
    click(qtbot, window, 200, 200)
    (c,) = window.doc.parts
    assert window.doc.parts[c].kind == "capacitor" and window.doc.parts[c].rotation == 90
    assert window.stack.count() == 1, "turning before the drop is no separate step"


def test_the_part_keys_still_choose_the_part_while_one_floats(qtbot, window):
    qtbot.mouseClick(window.palette_panel.buttons["Capacitor"], Qt.MouseButton.LeftButton)
    window.view.setFocus()
    qtbot.keyClick(window.view, Qt.Key.Key_R)
    click(qtbot, window, 200, 200)
    (r,) = window.doc.parts
    assert window.doc.parts[r].kind == "resistor"


def free_ends(doc):
    """Wire ends that touch no pin and no other wire (a dangling stub)."""
    pins = {pt for p in doc.parts.values() for pt in p.pins().values()}
    ends = [pt for w in doc.wires.values() for pt in (w.points[0], w.points[-1])]
    return [pt for pt in ends if pt not in pins and ends.count(pt) == 1]


def test_a_click_a_few_pixels_off_a_pin_ends_the_wire_on_the_pin(qtbot, window):
    r = place(qtbot, window, "Resistor", 200, 200)
    g = place(qtbot, window, "Ground", 100, 300)
    window.act_wire_mode.trigger()
    click(qtbot, window, 100, 300)
    click(qtbot, window, 211, 246)  # 11 px beside and below R's lower pin at (200, 240)
    (w,) = window.doc.wires.values()
    assert w.points[-1] == (200, 240)
    assert free_ends(window.doc) == []
    nets = build_netlist(window.doc).pin_net
    assert nets[(r, "b")] == nets[(g, "g")]


def test_a_run_that_overshoots_a_pin_by_a_grid_step_stops_on_it(qtbot, window):
    r = place(qtbot, window, "Resistor", 200, 200)
    place(qtbot, window, "Ground", 100, 300)
    window.act_wire_mode.trigger()
    click(qtbot, window, 100, 300)
    click(qtbot, window, 100, 240)
    click(qtbot, window, 216, 240)  # past R's pin (200, 240), out of reach of it
    (w,) = window.doc.wires.values()
    assert w.points == ((100, 300), (100, 240), (200, 240))
    assert free_ends(window.doc) == []
    assert window.controller.mode.name == "WIRE" and not window.controller._wire, "the wire is done"
