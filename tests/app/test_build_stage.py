"""Drawing an (invented) common-emitter stage from an empty sheet with the mouse, as a user would."""

import json

from PySide6.QtCore import QMimeData, QPointF, Qt
from PySide6.QtGui import QDropEvent

from bandsketch.app.canvas.view import PART_MIME
from bandsketch.engine.design.netlist import build_netlist, connectivity_problems, design_to_circuit
from sheet import at, click, drag, place, snapshot, wire


def draw_stage(qtbot, window):
    """Place and wire the stage; returns the names the sheet gave the parts, by role."""
    n = {}
    n["vsig"] = place(qtbot, window, "Voltage source", 60, 260)
    n["rs"] = place(qtbot, window, "Resistor", 100, 200, rotate=1)
    n["cin"] = place(qtbot, window, "Capacitor", 180, 200, rotate=1)
    n["r1"] = place(qtbot, window, "Resistor", 240, 120)
    n["r2"] = place(qtbot, window, "Resistor", 240, 280)
    n["q"] = place(qtbot, window, "NPN transistor", 300, 200)
    n["rc"] = place(qtbot, window, "Resistor", 320, 80)
    n["re"] = place(qtbot, window, "Resistor", 320, 300)
    n["ce"] = place(qtbot, window, "Capacitor", 400, 300)
    n["cout"] = place(qtbot, window, "Capacitor", 380, 140, rotate=1)
    n["rl"] = place(qtbot, window, "Resistor", 460, 180)
    for x, y in ((60, 300), (240, 320), (320, 340), (400, 340), (460, 220)):
        place(qtbot, window, "Ground", x, y)
    n["rail"] = place(qtbot, window, "Ground", 280, 40, rotate=2)
    n["out"] = place(qtbot, window, "Output probe", 500, 140)
    wire(qtbot, window, (60, 220), (60, 200))
    wire(qtbot, window, (220, 200), (260, 200))
    wire(qtbot, window, (240, 240), (240, 200))
    wire(qtbot, window, (240, 160), (240, 200))
    wire(qtbot, window, (240, 80), (240, 40), (320, 40))
    wire(qtbot, window, (320, 120), (320, 160))
    wire(qtbot, window, (320, 240), (320, 260))
    wire(qtbot, window, (400, 260), (320, 260))
    wire(qtbot, window, (340, 140), (320, 140))
    wire(qtbot, window, (420, 140), (500, 140))
    return n


def test_stage_drawn_by_mouse_gives_the_intended_netlist(qtbot, window):
    n = draw_stage(qtbot, window)
    doc = window.doc
    assert len(doc.parts) == 18 and len(doc.wires) == 10
    assert doc.input_source == n["vsig"], "the first source placed carries the signal"
    assert doc.parts[n["rs"]].rotation == 90
    assert connectivity_problems(doc) == []
    nets = build_netlist(doc).pin_net
    same = [((n["cin"], "a"), (n["q"], "base"), (n["r1"], "b"), (n["r2"], "a")),
            ((n["q"], "collector"), (n["rc"], "b"), (n["cout"], "b")),
            ((n["q"], "emitter"), (n["re"], "a"), (n["ce"], "a")),
            ((n["cout"], "a"), (n["rl"], "a"), (n["out"], "p")),
            ((n["vsig"], "p"), (n["rs"], "b"))]
    for group in same:
        assert len({nets[pin] for pin in group}) == 1, group
    assert nets[(n["r1"], "a")] == nets[(n["rc"], "a")] == nets[(n["re"], "b")] == "0"
    circuit = design_to_circuit(doc)
    assert circuit is not None
    assert window.scene.problems == []


def test_dragging_the_transistor_keeps_it_wired_and_is_one_undo_step(qtbot, window):
    n = draw_stage(qtbot, window)
    before = snapshot(window.doc)
    steps = window.stack.count()
    q = window.doc.parts[n["q"]]
    drag(qtbot, window, (q.x + 4, q.y), (q.x + 4 + 40, q.y + 20))
    moved = window.doc.parts[n["q"]]
    assert (moved.x, moved.y) == (q.x + 40, q.y + 20)
    assert window.stack.count() == steps + 1
    assert connectivity_problems(window.doc) == []
    assert all(len({a[0] == b[0], a[1] == b[1]} & {True}) for w in window.doc.wires.values()
               for a, b in zip(w.points, w.points[1:])), "wires stay orthogonal"
    window.act_undo.trigger()
    assert snapshot(window.doc) == before


def test_moving_a_part_off_a_wire_adds_a_wire_to_it(qtbot, window):
    n = draw_stage(qtbot, window)
    rl = window.doc.parts[n["rl"]]
    drag(qtbot, window, (rl.x, rl.y), (rl.x + 40, rl.y))
    assert connectivity_problems(window.doc) == []
    nets = build_netlist(window.doc).pin_net
    assert nets[(n["rl"], "a")] == nets[(n["out"], "p")]


def test_dropping_a_part_from_the_palette_places_it_where_dropped(qtbot, window):
    mime = QMimeData()
    mime.setData(PART_MIME, json.dumps({"kind": "bjt", "params": {"polarity": "pnp"}}).encode())
    pos = QPointF(at(window, 101, 59))
    event = QDropEvent(pos, Qt.DropAction.CopyAction, mime, Qt.MouseButton.LeftButton,
                       Qt.KeyboardModifier.NoModifier)
    window.view.dropEvent(event)
    (part,) = window.doc.parts.values()
    assert (part.kind, part.x, part.y, part.params["polarity"]) == ("bjt", 100, 60, "pnp")


def test_rubber_band_and_shift_click_select(qtbot, window):
    n = draw_stage(qtbot, window)
    drag(qtbot, window, (200, 240), (480, 360))
    selected = set(window.scene.selected_names())
    assert {n["re"], n["ce"], n["r2"]} <= selected and n["rc"] not in selected
    rc = window.doc.parts[n["rc"]]
    click(qtbot, window, rc.x, rc.y, modifier=Qt.KeyboardModifier.ShiftModifier)
    assert n["rc"] in window.scene.selected_names()
    click(qtbot, window, rc.x, rc.y, modifier=Qt.KeyboardModifier.ShiftModifier)
    assert n["rc"] not in window.scene.selected_names()


def test_wheel_zoom_keeps_the_point_under_the_cursor(qtbot, window):
    from PySide6.QtCore import QPoint
    from PySide6.QtGui import QWheelEvent

    view = window.view
    anchor = at(window, 300, 200)
    before = view.mapToScene(anchor)
    event = QWheelEvent(QPointF(anchor), QPointF(view.viewport().mapToGlobal(anchor)), QPoint(),
                        QPoint(0, 240), Qt.MouseButton.NoButton, Qt.KeyboardModifier.NoModifier,
                        Qt.ScrollPhase.NoScrollPhase, False)
    view.wheelEvent(event)
    assert view.zoom() > 1.3
    after = view.mapToScene(anchor)
    assert abs(after.x() - before.x()) < 2 and abs(after.y() - before.y()) < 2
