"""Driving the canvas as a user does: palette clicks, sheet clicks, drags, keys."""

from PySide6.QtCore import QPoint, QPointF, Qt
from PySide6.QtTest import QTest


def at(window, x, y) -> QPoint:
    """The viewport pixel showing sheet point (x, y)."""
    return window.view.mapFromScene(QPointF(x, y))


def click(qtbot, window, x, y, button=Qt.MouseButton.LeftButton, modifier=Qt.KeyboardModifier.NoModifier):
    qtbot.mouseMove(window.view.viewport(), at(window, x, y))
    qtbot.mouseClick(window.view.viewport(), button, modifier, at(window, x, y))


def place(qtbot, window, title, x, y, rotate=0):
    """Click a Parts button, turn the part ``rotate`` quarters, click the sheet; its name."""
    qtbot.mouseClick(window.palette_panel.buttons[title], Qt.MouseButton.LeftButton)
    for _ in range(rotate):
        window.act_rotate.trigger()
    before = set(window.doc.parts)
    click(qtbot, window, x, y)
    (name,) = set(window.doc.parts) - before
    return name


def wire(qtbot, window, *points):
    """Draw a wire through sheet points in Wire mode; the last point must be a pin or wire."""
    window.act_wire_mode.trigger()
    for x, y in points:
        click(qtbot, window, x, y)
    window.controller.escape()
    window.controller.escape()


def drag(qtbot, window, start, end, steps=4):
    """Press at sheet point ``start``, move in steps, release at ``end``."""
    vp = window.view.viewport()
    qtbot.mousePress(vp, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, at(window, *start))
    for i in range(1, steps + 1):
        x = start[0] + (end[0] - start[0]) * i / steps
        y = start[1] + (end[1] - start[1]) * i / steps
        QTest.mouseMove(vp, at(window, x, y))
    qtbot.mouseRelease(vp, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, at(window, *end))


def snapshot(doc):
    """A comparable picture of a document: parts by name, wires as point lists, settings."""
    return (
        {n: (p.kind, p.x, p.y, p.rotation, p.mirror, dict(p.params)) for n, p in doc.parts.items()},
        sorted(w.points for w in doc.wires.values()),
        doc.input_source, dict(doc.band_pins), doc.title, doc.description, dict(doc.targets),
    )
