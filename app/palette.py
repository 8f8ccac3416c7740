"""The Parts panel: every kind of part, drawn with its own symbol, to click or drag out."""

from __future__ import annotations

import json
from dataclasses import dataclass

from PySide6.QtCore import QMimeData, QPoint, QSize, Qt, Signal
from PySide6.QtGui import QDrag, QIcon, QPainter, QPen, QPixmap
from PySide6.QtWidgets import (QApplication, QGridLayout, QGroupBox, QSizePolicy, QToolButton, QVBoxLayout,
                               QWidget)

from bandsketch.engine.design.parts import KINDS, PALETTE_GROUPS

from .canvas.controller import Template
from .canvas.symbols import ResistorStyle, build_symbol, frame_transform
from .canvas.view import PART_MIME
from .theme import Theme


@dataclass(frozen=True)
class Entry:
    """One palette button: what it places and the single key that also places it."""

    title: str
    template: Template
    key: str = ""


GROUPS = tuple(
    (group, tuple(Entry(o.title, Template(kind.kind, dict(o.params)), o.key)
                  for kind in KINDS.values() for o in kind.offers if o.group == group))
    for group in PALETTE_GROUPS)
"""The palette's contents, in order; the keys are the canvas's single-key part shortcuts."""

ICON_SIZE = 36


def symbol_icon(template: Template, theme: Theme, style: ResistorStyle) -> QIcon:
    """An icon of a kind's symbol, drawn with the same paths as the canvas."""
    part = template.part("X", 0, 0)
    symbol = build_symbol(part.kind, part.params, style, 18.0).mapped(frame_transform(0, False))
    bounds = symbol.lines.boundingRect().united(symbol.heavy.boundingRect())
    scale_px = 2
    pix = QPixmap(ICON_SIZE * scale_px, ICON_SIZE * scale_px)
    pix.setDevicePixelRatio(scale_px)
    pix.fill(Qt.GlobalColor.transparent)
    p = QPainter(pix)
    p.setRenderHint(QPainter.RenderHint.Antialiasing)
    side = max(bounds.width(), bounds.height(), 1.0) + 4
    k = ICON_SIZE / side
    p.translate(ICON_SIZE / 2, ICON_SIZE / 2)
    p.scale(k, k)
    p.translate(-bounds.center())
    p.setPen(QPen(theme.ink, 1.6 / min(k, 1.0) * 0.8))
    p.drawPath(symbol.lines)
    p.setPen(QPen(theme.ink, 3.0))
    p.drawPath(symbol.heavy)
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(theme.ink)
    p.drawPath(symbol.solid)
    p.end()
    return QIcon(pix)


class _PartButton(QToolButton):
    """A palette button that places on click and starts a drag when pulled."""

    def __init__(self, entry: Entry, palette: "PartsPalette"):
        super().__init__()
        self.entry = entry
        self._palette = palette
        self._press: QPoint | None = None
        self.setText(entry.title)
        tip = f"{entry.title}: click, then click on the sheet; or drag onto the sheet"
        self.setToolTip(tip + (f" (key {entry.key})" if entry.key else ""))
        self.setToolButtonStyle(Qt.ToolButtonStyle.ToolButtonTextUnderIcon)
        self.setIconSize(QSize(ICON_SIZE, ICON_SIZE))
        self.setAutoRaise(True)
        self.setFocusPolicy(Qt.FocusPolicy.NoFocus)
        self.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Preferred)
        self.clicked.connect(lambda: palette.chosen.emit(entry.template))

    def mousePressEvent(self, event):
        self._press = event.position().toPoint()
        super().mousePressEvent(event)

    def mouseMoveEvent(self, event):
        if self._press is not None and (event.position().toPoint() - self._press).manhattanLength() \
                >= QApplication.startDragDistance():
            self._press = None
            self.setDown(False)
            drag = QDrag(self)
            mime = QMimeData()
            mime.setData(PART_MIME, json.dumps({"kind": self.entry.template.kind,
                                                "params": self.entry.template.params}).encode("utf-8"))
            drag.setMimeData(mime)
            drag.setPixmap(self.icon().pixmap(ICON_SIZE, ICON_SIZE))
            drag.exec(Qt.DropAction.CopyAction)
            return
        super().mouseMoveEvent(event)


class PartsPalette(QWidget):
    """Buttons for every part kind, grouped; emits :attr:`chosen` with the template to place."""

    chosen = Signal(object)

    def __init__(self, theme: Theme, style: ResistorStyle):
        super().__init__()
        self.buttons: dict[str, _PartButton] = {}
        layout = QVBoxLayout(self)
        layout.setContentsMargins(4, 4, 4, 4)
        for group, entries in GROUPS:
            box = QGroupBox(group)
            grid = QGridLayout(box)
            grid.setContentsMargins(2, 2, 2, 2)
            grid.setSpacing(0)
            for i, entry in enumerate(entries):
                button = _PartButton(entry, self)
                self.buttons[entry.title] = button
                grid.addWidget(button, i // 2, i % 2)
            layout.addWidget(box)
        layout.addStretch(1)
        self.restyle(theme, style)

    def restyle(self, theme: Theme, style: ResistorStyle) -> None:
        """Redraw the icons (theme or resistor style changed)."""
        for button in self.buttons.values():
            button.setIcon(symbol_icon(button.entry.template, theme, style))
