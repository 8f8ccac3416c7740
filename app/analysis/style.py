"""Colours of the analysis views, taken from the canvas theme so both read as one picture.

The band colours are the canvas's (from the Okabe–Ito set, distinguishable under the common
forms of colour blindness); the exact response is drawn in the ink colour, so the estimates
stand out against it by hue and by their dashes, never by hue alone.
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtGui import QColor
from PySide6.QtWidgets import QGraphicsItem

from bandsketch.engine.core.band import Band
from bandsketch.app.theme import Theme, system_theme

@dataclass(frozen=True)
class ViewColours:
    """Every colour the bars, the Bode plot, the verdict and the test picture use."""

    dark: bool
    paper: QColor
    ink: QColor
    muted: QColor
    grid: QColor
    high: QColor
    low: QColor
    neutral: QColor
    selection: QColor
    problem: QColor
    stale: QColor

    def band(self, band: Band) -> QColor:
        """The colour of a band (neutral for any other)."""
        return {Band.HIGH: self.high, Band.LOW: self.low}.get(band, self.neutral)


def view_colours(theme: Theme | None = None) -> ViewColours:
    """The analysis views' colours for ``theme`` (default: the one matching the app palette)."""
    t = theme or system_theme()
    return ViewColours(dark=t.dark, paper=t.paper, ink=t.ink, muted=t.value, grid=t.grid,
                       high=t.band_high, low=t.band_low, neutral=t.ghost, selection=t.selection,
                       problem=t.problem, stale=t.ghost)


class Restyles:
    """A view that greys its result when it is stale and redraws when the theme changes.

    The view keeps ``_stale`` and ``_colours`` and draws them in ``_restyle``, which
    :meth:`_style` calls only when one of them differs from what was drawn last: new pens
    make pyqtgraph re-tick its axes and re-render its symbols, most of an update's cost.
    """

    def set_stale(self, stale: bool) -> None:
        """Grey the result (the circuit as drawn cannot be analysed) or show it in colour."""
        self._stale = stale
        self._style()

    def set_colours(self, colours: "ViewColours") -> None:
        """Redraw in ``colours`` (the theme changed)."""
        self._colours = colours
        self._style()

    def _style(self) -> None:
        drawn = (self._colours, self._stale)
        if drawn != getattr(self, "_styled", None):
            self._styled = drawn
            self._restyle()


def gridded(plot) -> None:
    """Give a pyqtgraph plot its grid, drawn once: each axis (which draws its share of the
    grid across the plot) is kept as a picture on screen and drawn again only when its
    ticks, range or pens change, not whenever a curve over it moves."""
    plot.showGrid(x=True, y=True, alpha=0.25)
    for side in ("left", "bottom"):
        axis = plot.getAxis(side)
        axis.enableAutoSIPrefix(False)
        axis.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)


def set_axis_title(plot, side: str, text: str) -> None:
    """Title an axis, touching it only when the title changes (a new title re-ticks it)."""
    if plot.getAxis(side).labelText != text:
        plot.setLabel(side, text)
