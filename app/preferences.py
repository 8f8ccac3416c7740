"""User preferences kept between sessions (QSettings): symbol style and recent files."""

from __future__ import annotations

from pathlib import Path

from PySide6.QtCore import QSettings, Signal
from PySide6.QtWidgets import QDialog, QDialogButtonBox, QGroupBox, QRadioButton, QVBoxLayout, QWidget

from .canvas.symbols import ResistorStyle

RECENT_LIMIT = 8
_STYLE_KEY = "symbols/resistor"
_RECENT_KEY = "files/recent"


def resistor_style() -> ResistorStyle:
    """The resistor drawing the user chose (zig-zag unless they picked the box)."""
    value = QSettings().value(_STYLE_KEY, ResistorStyle.ZIGZAG.value)
    return ResistorStyle.BOX if value == ResistorStyle.BOX.value else ResistorStyle.ZIGZAG


def set_resistor_style(style: ResistorStyle) -> None:
    QSettings().setValue(_STYLE_KEY, style.value)


def recent_files() -> list[str]:
    """Recently opened or saved designs that still exist, newest first."""
    value = QSettings().value(_RECENT_KEY, [])
    paths = [value] if isinstance(value, str) else list(value or [])
    return [p for p in paths if Path(p).is_file()][:RECENT_LIMIT]


def add_recent(path: str) -> None:
    """Put ``path`` at the top of the recent files."""
    path = str(Path(path).resolve())
    paths = [path] + [p for p in recent_files() if p != path]
    QSettings().setValue(_RECENT_KEY, paths[:RECENT_LIMIT])


class PreferencesDialog(QDialog):
    """Symbol style; a change applies at once (``style_chosen``)."""

    style_chosen = Signal(object)

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        self.setWindowTitle("Preferences")
        layout = QVBoxLayout(self)
        box = QGroupBox("Resistor symbol")
        inner = QVBoxLayout(box)
        self.zigzag = QRadioButton("Zig-zag")
        self.box = QRadioButton("Rectangle")
        inner.addWidget(self.zigzag)
        inner.addWidget(self.box)
        (self.box if resistor_style() is ResistorStyle.BOX else self.zigzag).setChecked(True)
        self.box.toggled.connect(self._toggled)
        layout.addWidget(box)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        buttons.rejected.connect(self.close)
        layout.addWidget(buttons)

    def _toggled(self, box_on: bool) -> None:
        style = ResistorStyle.BOX if box_on else ResistorStyle.ZIGZAG
        set_resistor_style(style)
        self.style_chosen.emit(style)
