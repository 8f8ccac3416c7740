"""A drag is one undo step that ends exactly where the pointer ended (common practice, no
source: Qt's undo framework example merges the moves of one drag into one command)."""

from PySide6.QtCore import Qt
from PySide6.QtTest import QTest

from sheet import at, place, snapshot


def press_move_release(qtbot, window, points):
    vp = window.view.viewport()
    qtbot.mousePress(vp, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, at(window, *points[0]))
    for pt in points[1:]:
        QTest.mouseMove(vp, at(window, *pt))
    qtbot.mouseRelease(vp, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, at(window, *points[-1]))


def test_a_drag_out_and_back_leaves_the_part_where_it_was_and_fires_edited(qtbot, window):
    place(qtbot, window, "Resistor", 200, 200)
    before, steps = snapshot(window.doc), window.stack.count()
    fired = []
    window.doc.edited.connect(lambda: fired.append(1))
    press_move_release(qtbot, window, [(204, 200), (214, 200), (224, 200), (214, 200), (204, 200)])
    assert snapshot(window.doc) == before
    assert window.stack.count() == steps, "no empty Move step is left behind"
    assert fired, "views hear that the drag is over"


def test_a_drag_ends_where_the_pointer_came_up(qtbot, window):
    r = place(qtbot, window, "Resistor", 200, 200)
    steps = window.stack.count()
    vp = window.view.viewport()
    qtbot.mousePress(vp, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, at(window, 204, 200))
    QTest.mouseMove(vp, at(window, 244, 200))
    # The release comes at a point the last move event did not report.
    qtbot.mouseRelease(vp, Qt.MouseButton.LeftButton, Qt.KeyboardModifier.NoModifier, at(window, 264, 220))
    part = window.doc.parts[r]
    assert (part.x, part.y) == (260, 220)
    assert window.stack.count() == steps + 1
    window.act_undo.trigger()
    part = window.doc.parts[r]
    assert (part.x, part.y) == (200, 200)
