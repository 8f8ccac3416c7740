"""Canvas colours, light and dark, chosen to follow the system palette.

Accents come from the Okabe–Ito set, which stays distinguishable under the common forms of
colour blindness; the ink and paper tones are our own.
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtGui import QColor, QGuiApplication, QPalette


@dataclass(frozen=True)
class Theme:
    """Every colour the canvas draws with."""

    dark: bool
    paper: QColor
    grid: QColor
    ink: QColor
    wire: QColor
    label: QColor
    value: QColor
    selection: QColor
    hover: QColor
    problem: QColor
    input: QColor
    band_low: QColor
    band_high: QColor
    ghost: QColor


def _c(hex_: str) -> QColor:
    return QColor(hex_)


LIGHT = Theme(
    dark=False, paper=_c("#fbfaf6"), grid=_c("#c4c1b8"), ink=_c("#1d232b"), wire=_c("#2b5d7c"),
    label=_c("#1d232b"), value=_c("#4b5563"), selection=_c("#e69f00"), hover=_c("#56b4e9"),
    problem=_c("#d55e00"), input=_c("#009e73"), band_low=_c("#cc79a7"), band_high=_c("#0072b2"),
    ghost=_c("#7d8793"),
)
DARK = Theme(
    dark=True, paper=_c("#1c2026"), grid=_c("#3b424c"), ink=_c("#e4e7eb"), wire=_c("#8fbcd6"),
    label=_c("#e4e7eb"), value=_c("#aab3bd"), selection=_c("#e69f00"), hover=_c("#56b4e9"),
    problem=_c("#ff7b3a"), input=_c("#2fc497"), band_low=_c("#e08fbe"), band_high=_c("#4aa3e0"),
    ghost=_c("#8a939e"),
)


def system_theme() -> Theme:
    """The light or dark theme, whichever matches the palette the widgets are drawn with.

    Reading the palette (not only the colour-scheme hint) keeps the canvas matching the
    panels around it on platforms that report no scheme.
    """
    if QGuiApplication.instance() is None:
        return LIGHT
    window = QGuiApplication.palette().color(QPalette.ColorRole.Window)
    return DARK if window.lightness() < 128 else LIGHT
