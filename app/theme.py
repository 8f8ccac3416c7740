"""Canvas colours, light and dark, chosen to follow the system palette.

The colours themselves are :mod:`bandsketch.engine.core.colours` (one source for the window,
the report and the exported figures); here they become Qt colours.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

from PySide6.QtGui import QColor, QGuiApplication, QPalette

from bandsketch.engine.core import colours


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


def _theme(palette: colours.Palette) -> Theme:
    return Theme(dark=palette.dark, **{f.name: QColor(getattr(palette, f.name))
                                       for f in fields(Theme) if f.name != "dark"})


LIGHT = _theme(colours.LIGHT)
DARK = _theme(colours.DARK)


def system_theme() -> Theme:
    """The light or dark theme, whichever matches the palette the widgets are drawn with.

    Reading the palette (not only the colour-scheme hint) keeps the canvas matching the
    panels around it on platforms that report no scheme.
    """
    if QGuiApplication.instance() is None:
        return LIGHT
    window = QGuiApplication.palette().color(QPalette.ColorRole.Window)
    return DARK if window.lightness() < 128 else LIGHT
