"""The operating point written small on the sheet: each net's DC voltage, each device's bias.

A view of the latest analysis's :class:`~bandsketch.engine.present.biasdata.BiasMarks`; the
texts come decided from the engine, and the items are kept and updated in place.
"""

from __future__ import annotations

from PySide6.QtCore import QPointF
from PySide6.QtGui import QBrush, QFont, QFontMetricsF
from PySide6.QtWidgets import QGraphicsScene, QGraphicsSimpleTextItem

from ..theme import Theme

Z_NOTE = 6
NOTE_OFFSET = QPointF(5, -15)
"""Where a net's voltage sits from its topmost pin (scene units)."""


def note_font() -> QFont:
    """Small text, in scene units so it scales with the sheet."""
    f = QFont()
    f.setPixelSize(10)
    return f


class BiasNotes:
    """The bias notes of one scene; :meth:`show` replaces what they say."""

    def __init__(self, scene: QGraphicsScene, theme: Theme):
        self.scene = scene
        self.theme = theme
        self.visible = True
        self._items: list[QGraphicsSimpleTextItem] = []
        self._marks = None

    def set_visible(self, on: bool) -> None:
        """Show or hide every note (the View menu's toggle)."""
        self.visible = on
        for item in self._items:
            item.setVisible(on)

    def set_theme(self, theme: Theme) -> None:
        self.theme = theme
        self.show(self._marks)

    def show(self, marks) -> None:
        """Write ``marks`` (or nothing, for None) on the sheet."""
        self._marks = marks
        wanted = []
        if marks is not None:
            wanted += [(QPointF(x, y) + NOTE_OFFSET, text, None) for x, y, text in marks.nodes]
            for name, note in marks.devices.items():
                item = self._part_item(name)
                if item is None:
                    continue
                box = item.sceneBoundingRect()
                text = "\n".join(note.lines)
                # Above: lifted by the note's own height, so its last line ends just over the part.
                at = QPointF(box.left(), box.top() - 1 - self._height(text)) if note.above else \
                    QPointF(box.left(), box.bottom() + 1)
                wanted.append((at, text, note.warning))
        while len(self._items) < len(wanted):
            text = QGraphicsSimpleTextItem()
            text.setFont(note_font())
            text.setZValue(Z_NOTE)
            self.scene.addItem(text)
            self._items.append(text)
        for item, (pos, text, warning) in zip(self._items, wanted):
            # Each setter repaints its note even when nothing changes, and an edit seldom
            # moves the bias: only what differs is set.
            text += "  ⚠" if warning else ""
            if item.text() != text:
                item.setText(text)
            if item.pos() != pos:
                item.setPos(pos)
            colour = self.theme.problem if warning else self.theme.input
            if item.brush().color() != colour:
                item.setBrush(QBrush(colour))
            item.setToolTip(warning or "")
            item.setVisible(self.visible)
        for item in self._items[len(wanted):]:
            item.setVisible(False)

    @staticmethod
    def _height(text: str) -> float:
        return QFontMetricsF(note_font()).lineSpacing() * (text.count("\n") + 1)

    def texts(self) -> list[str]:
        """What the visible notes say (for tests and screen readers)."""
        return [item.text() for item in self._items if item.isVisible()]

    def _part_item(self, name):
        try:
            return self.scene.part_item(name)
        except KeyError:
            return None
