"""User preferences kept between sessions (QSettings): symbol style, recent files, and where
each design's sheet was last looked at."""

from __future__ import annotations

import hashlib
from pathlib import Path

from PySide6.QtCore import QSettings, Signal
from PySide6.QtWidgets import QDialog, QDialogButtonBox, QGroupBox, QRadioButton, QVBoxLayout, QWidget

from .canvas.symbols import ResistorStyle

RECENT_LIMIT = 8
_STYLE_KEY = "symbols/resistor"
_RECENT_KEY = "files/recent"
_VIEW_GROUP = "sheet_views"
VIEW_LIMIT = 50
"""Designs whose zoom and scroll are remembered; the least recently left are forgotten first."""


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


def sheet_view(design: str) -> tuple[float, float, float] | None:
    """The zoom and the sheet point at the centre (scene units) design ``design`` (a file's
    resolved path, or ``sample:NAME``) was last shown with, or None if it never was."""
    value = QSettings().value(f"{_VIEW_GROUP}/{_view_key(design)}")
    try:
        zoom, x, y = (float(v) for v in str(value).split(","))
    except ValueError:  # never seen, or a setting that is not ours: fit instead
        return None
    return zoom, x, y


def set_sheet_view(design: str, zoom: float, x: float, y: float) -> None:
    """Remember the zoom and centre design ``design`` was shown with."""
    settings = QSettings()
    key = _view_key(design)
    order = [k for k in str(settings.value(f"{_VIEW_GROUP}/order", "")).split(",") if k and k != key]
    for old in order[VIEW_LIMIT - 1:]:
        settings.remove(f"{_VIEW_GROUP}/{old}")
    settings.setValue(f"{_VIEW_GROUP}/order", ",".join([key, *order[:VIEW_LIMIT - 1]]))
    settings.setValue(f"{_VIEW_GROUP}/{key}", f"{zoom:.12g},{x:.12g},{y:.12g}")


def _view_key(design: str) -> str:
    # A path holds characters QSettings reads as groups; its digest does not.
    return hashlib.sha1(design.encode("utf-8")).hexdigest()[:16]


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
