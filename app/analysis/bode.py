"""The exact response as a Bode plot, with the time-constant estimates drawn over it.

Every item is made once and updated with ``setData``; the plot draws a
:class:`bandsketch.engine.present.plotdata.BodeData` and computes nothing. The frequency axis labels are set
explicitly (``1 kHz``, ``10 MHz``) because automatic SI prefixes on a log axis read oddly.
"""

from __future__ import annotations

import math

import pyqtgraph as pg
from PySide6.QtCore import QPointF, Qt, Signal
from PySide6.QtGui import QColor
from PySide6.QtWidgets import QVBoxLayout, QWidget

from bandsketch.engine.present.plotdata import BodeData
from bandsketch.engine.present.svgfigures import bode_svg
from bandsketch.engine.core.values import format_value

from ..figures import write_picture
from .style import Restyles, ViewColours, gridded, set_axis_title, view_colours

MARKER_SLOTS = (("high", True), ("high", False), ("low", True), ("low", False))
"""One marker item set per corner and kind; a slot with no corner is hidden."""
PHASE_MAJOR_DEG = 90
"""Labelled phase ticks: every quarter turn."""
LABELS_APART_PX = 8
"""Pixels kept between the f_L and f_H labels of one row when both point into the mid band."""
SPARE_ROOM = {"frequency": 0.5, "magnitude": 20.0, "phase": 90.0}
"""How much room (decades, dB, degrees) an axis may show beyond each end of a new response
and still be kept, so that an edit moving the curve a little moves no axis. An end that must
move goes to half that room beyond the response (a whole step of the axis's own rounding),
so an edit that is taken back moves it no more."""


def _settled_end(shown: float, wanted: float, outward: float, spare: float) -> float:
    """Where an axis end goes for a new response: kept while it lies between the response's
    own end (``wanted``) and ``spare`` beyond it (``outward`` is +1 for a top end, −1 for a
    bottom end), else half the spare beyond the response. Ends are compared to a millionth
    of ``spare``: they come from logarithms."""
    beyond = outward * (shown - wanted)
    if -1e-6 * spare <= beyond <= spare * (1 + 1e-6):
        return shown
    return wanted + outward * spare / 2


class FrequencyAxis(pg.AxisItem):
    """A log frequency axis labelled ``10 Hz``, ``1 kHz``, ``100 MHz``."""

    def logTickStrings(self, values, scale, spacing):
        return [format_value(10 ** v * scale, "Hz", digits=2) for v in values]


class BodePlot(Restyles, QWidget):
    """Magnitude (dB) and phase (degrees) against log frequency, one above the other.

    Signals
    -------
    hovered(str)
        The readout at the cursor (empty when the cursor leaves the curves).
    """

    hovered = Signal(str)

    def __init__(self, parent=None):
        super().__init__(parent)
        self._data: BodeData | None = None
        self._stale = False
        self._zoomed = False
        self._held = False
        self._colours: ViewColours = view_colours()
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        self.canvas = pg.GraphicsLayoutWidget()
        layout.addWidget(self.canvas)
        self.magnitude = self.canvas.addPlot(row=0, col=0, axisItems={"bottom": FrequencyAxis("bottom")})
        self.phase = self.canvas.addPlot(row=1, col=0, axisItems={"bottom": FrequencyAxis("bottom")})
        self.canvas.ci.layout.setRowStretchFactor(0, 3)
        self.canvas.ci.layout.setRowStretchFactor(1, 2)
        self.phase.setXLink(self.magnitude)
        for plot, label in ((self.magnitude, "Gain (dB)"), (self.phase, "Phase (°)")):
            plot.setLogMode(x=True, y=False)
            gridded(plot)
            plot.setLabel("left", label)
            plot.setMenuEnabled(False)
            plot.hideButtons()
            plot.getViewBox().sigRangeChangedManually.connect(self._on_manual_range)
        self.phase.setLabel("bottom", "Frequency")
        # Phase reads in quarter turns, a designer's steps (an inversion, a pole's full lag).
        self.phase.getAxis("left").setTickSpacing(PHASE_MAJOR_DEG, PHASE_MAJOR_DEG / 2)
        self.curves = {key: (self.magnitude.plot(), self.phase.plot()) for key in ("exact", "high", "low")}
        # The exact curve of the design before a change (an applied suggestion, kept until
        # dismissed; a value scrub, kept while it lasts), and how the corners moved since.
        self.before = (self.magnitude.plot(), self.phase.plot())
        self._before_shown = False
        self._before_what = "before the change"
        self.before_note = pg.TextItem(anchor=(0.5, 0))
        self._before_shift = None
        self.before_note.setZValue(2)
        self.magnitude.addItem(self.before_note, ignoreBounds=True)
        self.before_note.hide()
        self.half_power = pg.InfiniteLine(angle=0, movable=False)
        self.magnitude.addItem(self.half_power, ignoreBounds=True)
        self.markers = {}
        for slot in MARKER_SLOTS:
            lines = (pg.InfiniteLine(angle=90, movable=False), pg.InfiniteLine(angle=90, movable=False))
            self.magnitude.addItem(lines[0], ignoreBounds=True)
            self.phase.addItem(lines[1], ignoreBounds=True)
            dot = pg.ScatterPlotItem(size=9)
            self.magnitude.addItem(dot)
            label = pg.TextItem(anchor=(0, 1))
            self.magnitude.addItem(label, ignoreBounds=True)
            self.markers[slot] = (lines, dot, label)
        # The designer's targets: the least f_H and the most f_L allowed, the gain's window.
        # Their labels sit low and point into the mid band, clear of the corner labels above.
        self.target_lines = {corner: pg.InfiniteLine(angle=90, movable=False, label="",
                                                     labelOpts={"position": 0.04, "anchors": [anchor, anchor]})
                             for corner, anchor in (("high", (1, 1)), ("low", (0, 1)))}
        for line in self.target_lines.values():
            line.setZValue(-1)  # under the corner labels, whose filled boxes stay legible
            self.magnitude.addItem(line, ignoreBounds=True)
        self.gain_window = pg.LinearRegionItem(orientation="horizontal", movable=False)
        self.gain_window.setZValue(-2)
        self.magnitude.addItem(self.gain_window, ignoreBounds=True)
        self.gain_label = pg.TextItem(anchor=(0.5, 0.5))
        self.magnitude.addItem(self.gain_label, ignoreBounds=True)
        self._targets = None
        self.cursor = tuple(pg.InfiniteLine(angle=90, movable=False) for _ in range(2))
        self.magnitude.addItem(self.cursor[0], ignoreBounds=True)
        self.phase.addItem(self.cursor[1], ignoreBounds=True)
        self.canvas.scene().sigMouseMoved.connect(self._on_mouse_moved)
        self.magnitude.getViewBox().sigRangeChanged.connect(self._lay_out_labels)
        self.magnitude.getViewBox().sigRangeChanged.connect(self._place_gain_label)
        self.magnitude.getViewBox().sigRangeChanged.connect(self._place_before_note)
        self.magnitude.getViewBox().sigResized.connect(self._lay_out_labels)
        self._style()
        self.show_response(None)

    # -- what is shown --------------------------------------------------------
    def show_response(self, data: BodeData | None, *, stale: bool = False, settle: bool = False) -> None:
        """Draw ``data`` (None: clear); ``stale`` greys a result no longer current.

        With ``settle`` (the next response of the design shown), an axis end that lies within
        :data:`SPARE_ROOM` beyond the new response's stays where it is: the curve moves
        against still axes, which are not re-ticked. Otherwise the axes are fitted to the
        response.
        """
        self._data, self._stale = data, stale
        exact_m, exact_p = self.curves["exact"]
        if data is None:
            for m, p in self.curves.values():
                m.setData([], [])
                p.setData([], [])
            for slot in MARKER_SLOTS:
                self._show_marker(slot, None)
            self.half_power.hide()
            self._set_cursor(None)
            return
        set_axis_title(self.magnitude, "left", data.gain_axis)
        exact_m.setData(data.exact.freq_hz, data.exact.magnitude_db)
        exact_p.setData(data.exact.freq_hz, data.exact.phase_deg)
        for key, curve in (("high", data.high_estimate), ("low", data.low_estimate)):
            m, p = self.curves[key]
            m.setData(curve.freq_hz if curve else [], curve.magnitude_db if curve else [])
            p.setData(curve.freq_hz if curve else [], curve.phase_deg if curve else [])
        by_slot = {(mk.corner, mk.estimated): mk for mk in data.markers}
        for slot in MARKER_SLOTS:
            self._show_marker(slot, by_slot.get(slot))
        self._lay_out_labels()
        level = data.midband_db - 3.0103
        self.half_power.setValue(level)
        self.half_power.show()
        if not self._zoomed:
            self._fit(settle)
        self._style()

    def show_targets(self, marks) -> None:
        """Draw the designer's targets (a :class:`bandsketch.engine.present.plotdata.TargetMarks`;
        None or an empty one draws none)."""
        self._targets = marks
        for corner, line in self.target_lines.items():
            value = None if marks is None else (marks.f_high_min_hz if corner == "high" else marks.f_low_max_hz)
            line.setVisible(value is not None)
            if value is not None:
                line.setValue(math.log10(value))
                line.label.setFormat(marks.f_high_text if corner == "high" else marks.f_low_text)
        window = None if marks is None else marks.gain_db
        self.gain_window.setVisible(window is not None)
        self.gain_label.setVisible(window is not None)
        if window is not None:
            self.gain_window.setRegion(window)
            self.gain_label.setText(marks.gain_text)
            self._place_gain_label()
        self._style()

    def _place_gain_label(self, *_) -> None:
        # Midway (on the log axis) between the corners as far as they are in view, halfway down
        # from the window to the plot's floor: there the curve runs flat inside the window, so
        # below it is empty, and the corner labels, which hug the window at the corners and
        # point into the mid band, are furthest away.
        if self._targets is not None and self._targets.gain_db is not None:
            (left, right), (bottom, _top) = self.magnitude.getViewBox().viewRange()
            ends = {m.corner: math.log10(m.freq_hz) for m in (self._data.markers if self._data else ())
                    if not m.estimated}
            lo, hi = max(left, ends.get("low", left)), min(right, ends.get("high", right))
            floor = self._targets.gain_db[0]
            self.gain_label.setPos((lo + hi) / 2 if lo < hi else (left + right) / 2,
                                   (floor + max(bottom, floor - 60)) / 2)

    def show_before(self, curve, *, what: str = "before the change") -> None:
        """Draw ``curve`` (a :class:`bandsketch.engine.present.plotdata.Curve`) as the design
        before a change, under the present one (``what`` names it in the legend), with no
        note yet; None dismisses it."""
        self._before_shown = curve is not None
        self._before_what = what
        for item, values in zip(self.before, ("magnitude_db", "phase_deg")):
            item.setData(curve.freq_hz if curve else [], getattr(curve, values) if curve else [])
        self.show_before_note(None)

    def show_before_note(self, shift) -> None:
        """Write how the corners moved since the "before" curve (a
        :class:`bandsketch.engine.present.plotdata.CornerShift`): on the exact corners'
        labels, and what they cannot carry at the top of the plot; None takes it away."""
        self._before_shift = shift
        own = {mk.corner: mk.text for mk in self._data.markers if not mk.estimated} if self._data else {}
        for corner, text in own.items():
            moved = None if shift is None else shift.labels.get(corner)
            self.markers[(corner, False)][2].setText(f" {moved or text} ")
        self.before_note.setVisible(bool(shift and shift.note))
        if shift is not None and shift.note:
            self.before_note.setText(f" {shift.note} ")
            self._place_before_note()
        self._lay_out_labels()

    def _place_before_note(self, *_) -> None:
        # Top centre: above the mid band, where neither the curve nor a corner label is.
        if self.before_note.isVisible():
            (left, right), (_, top) = self.magnitude.getViewBox().viewRange()
            self.before_note.setPos((left + right) / 2, top)

    def before_note_text(self) -> str:
        """How the corners moved as the plot writes it ("" when it writes nothing)."""
        shift = self._before_shift
        return "" if shift is None or not self._before_shown else shift.text

    def has_before(self) -> bool:
        """Whether a "before" curve is shown."""
        return self._before_shown

    def fit(self) -> None:
        """Show the whole sweep and the magnitude from the mid band down to the view depth
        (while the range is held, only ever wider)."""
        self._zoomed = False
        self._fit(settle=False)

    def _fit(self, settle: bool) -> None:
        if self._data is None:
            return
        lo, hi = self._data.freq_range
        magnitude, phase = self.magnitude.getViewBox(), self.phase.getViewBox()
        axes = {"frequency": (magnitude, 0), "magnitude": (magnitude, 1), "phase": (phase, 1)}
        wanted = {"frequency": (math.log10(lo), math.log10(hi)),
                  "magnitude": self._data.magnitude_view_db,
                  "phase": self._data.phase_view_deg}
        ranges = {}
        for name, (a, b) in wanted.items():
            box, axis = axes[name]
            now_a, now_b = box.viewRange()[axis]
            if self._held:
                ranges[name] = (min(a, now_a), max(b, now_b))
            elif settle:
                bottom = _settled_end(now_a, a, -1, SPARE_ROOM[name])
                if name == "magnitude":
                    # An axis reaching deeper needs more room above the curve for the labels.
                    b = self._data.magnitude_view_from(bottom)[1]
                ranges[name] = (bottom, _settled_end(now_b, b, +1, SPARE_ROOM[name]))
            else:
                ranges[name] = (a, b)
        # Both of the magnitude's ranges in one call: each call that changes a range moves
        # every item over it and lays the corner labels out again.
        magnitude.setRange(xRange=ranges["frequency"], yRange=ranges["magnitude"], padding=0)
        phase.setRange(yRange=ranges["phase"], padding=0)

    def hold_range(self, held: bool) -> None:
        """While ``held`` (a value scrub), new responses widen the axes where they must and
        never narrow them: the curves move against still axes, beside the ghost, and the
        axes are not re-ticked on every step. Letting go fits the response again."""
        self._held = held
        if not held and not self._zoomed:
            self.fit()

    def _on_manual_range(self, *_) -> None:
        # A zoom or pan the user made is kept while edits update the curves.
        self._zoomed = True

    def _show_marker(self, slot, marker) -> None:
        lines, dot, label = self.markers[slot]
        if marker is None:
            for item in (*lines, dot, label):
                item.hide()
            return
        x = math.log10(marker.freq_hz)
        for line in lines:
            line.setValue(x)
            line.show()
        dot.setData([marker.freq_hz], [marker.level_db])
        dot.show()
        label.setText(f" {marker.text} ")
        label.setPos(x, marker.label_db)
        label.show()

    def _lay_out_labels(self, *_) -> None:
        """Point the corner labels into the mid band, where there is room; where the two
        corners are too close for both there, each points the way that hides least of it
        (overlapping the other label, or running off the plot).

        The estimate sits above its pin (the −3 dB line, or a peak's top) and the exact
        value below the line, so a corner's two labels never overlap; labels of one row
        (the estimates, or the exact values) are what may meet.
        """
        box = self.magnitude.getViewBox()
        for estimated in (True, False):
            row = {corner: self.markers[(corner, estimated)] for corner in ("high", "low")}
            shown = {corner: (lines[0].value(), label) for corner, (lines, _, label) in row.items()
                     if label.isVisible()}
            inward = {corner: True for corner in shown}
            if len(shown) == 2:
                (xh, high), (xl, low) = shown["high"], shown["low"]
                px_h, px_l = box.mapViewToScene(QPointF(xh, 0)).x(), box.mapViewToScene(QPointF(xl, 0)).x()
                edges = box.sceneBoundingRect()
                room = px_h - px_l - LABELS_APART_PX
                w_h, w_l = high.textItem.boundingRect().width(), low.textItem.boundingRect().width()
                beyond = {"low": px_l - edges.left(), "high": edges.right() - px_h}
                widths = {"low": w_l, "high": w_h}

                def hidden(low_in, high_in):
                    # Pixels of label that overlap the other or run off the plot.
                    overlap = max(0.0, low_in * w_l + high_in * w_h - room)
                    return overlap + sum(max(0.0, widths[c] - beyond[c])
                                         for c, keep in (("low", low_in), ("high", high_in)) if not keep)

                # The arrangement that hides the least, pointing inward where it is a tie.
                low_in, high_in = min(((True, True), (True, False), (False, True), (False, False)),
                                      key=lambda pair: hidden(*pair))
                inward = {"low": low_in, "high": high_in}
            for corner, (_, label) in shown.items():
                left = (corner == "high") == inward[corner]
                label.setAnchor((1.0 if left else 0.0, 1.0 if estimated else 0.0))

    def data(self) -> BodeData | None:
        """The response shown."""
        return self._data

    def legend_html(self) -> str:
        """The key to the curves, in their colours, for a label beside the plot (a legend
        inside the plot would cover the corners it is there to show)."""
        c = self._colours
        before = (f" &nbsp; <span style='color:{c.muted.name()}'>┄ {self._before_what}</span>"
                  if self._before_shown else "")
        return (f"<span style='color:{c.ink.name()}'>━ exact</span> &nbsp; "
                f"<span style='color:{c.high.name()}'>╍ A_m/(1 + jω b1)</span> &nbsp; "
                f"<span style='color:{c.low.name()}'>╍ A_m·s/(s + ω_L)</span>{before}")

    def _restyle(self) -> None:
        c = self._colours
        grey = self._stale
        self.canvas.setBackground(c.paper)
        for plot in (self.magnitude, self.phase):
            for side in ("left", "bottom"):
                axis = plot.getAxis(side)
                axis.setPen(c.muted)
                axis.setTextPen(c.ink)
        pens = {"exact": pg.mkPen(c.stale if grey else c.ink, width=2.2),
                "high": pg.mkPen(c.stale if grey else c.high, width=2, style=Qt.PenStyle.DashLine),
                "low": pg.mkPen(c.stale if grey else c.low, width=2, style=Qt.PenStyle.DashLine)}
        for key, (m, p) in self.curves.items():
            m.setPen(pens[key])
            p.setPen(pens[key])
        for item in self.before:
            item.setPen(pg.mkPen(c.muted, width=2, style=Qt.PenStyle.DotLine))
        self.before_note.setColor(c.muted)
        note_fill = QColor(c.paper)
        note_fill.setAlphaF(0.85)
        self.before_note.fill = pg.mkBrush(note_fill)
        self.half_power.setPen(pg.mkPen(c.muted, width=1, style=Qt.PenStyle.DotLine))
        for (corner, estimated), (lines, dot, label) in self.markers.items():
            colour = c.stale if grey else (c.band(corner) if estimated else c.ink)
            style = Qt.PenStyle.DashLine if estimated else Qt.PenStyle.SolidLine
            for line in lines:
                line.setPen(pg.mkPen(colour, width=1, style=style))
            if estimated:
                dot.setSymbol("o")
                dot.setBrush(pg.mkBrush(c.paper))
            else:
                dot.setSymbol("d")
                dot.setBrush(pg.mkBrush(colour))
            dot.setPen(pg.mkPen(colour, width=2))
            label.setColor(colour)
            fill = QColor(c.paper)
            fill.setAlphaF(0.85)
            label.fill = pg.mkBrush(fill)
        for line in self.cursor:
            line.setPen(pg.mkPen(c.selection, width=1))
        for corner, line in self.target_lines.items():
            colour = c.stale if grey else c.band(corner)
            line.setPen(pg.mkPen(colour, width=2, style=Qt.PenStyle.DashDotLine))
            line.label.setColor(colour)
        band = QColor(c.stale if grey else c.muted)
        band.setAlphaF(0.12)
        self.gain_window.setBrush(pg.mkBrush(band))
        edge = QColor(c.stale if grey else c.muted)
        for line in self.gain_window.lines:
            line.setPen(pg.mkPen(edge, width=1, style=Qt.PenStyle.DashDotLine))
        self.gain_label.setColor(edge)

    # -- hover ----------------------------------------------------------------
    def _set_cursor(self, x) -> None:
        for line in self.cursor:
            if x is None:
                line.hide()
            else:
                line.setValue(x)
                line.show()
        text = self._data.readout(10 ** x) if (x is not None and self._data is not None) else ""
        self.hovered.emit(text)

    def _on_mouse_moved(self, pos: QPointF) -> None:
        for plot in (self.magnitude, self.phase):
            if plot.sceneBoundingRect().contains(pos):
                x = plot.getViewBox().mapSceneToView(pos).x()
                self._set_cursor(x if self._data is not None else None)
                return
        self._set_cursor(None)

    # -- export ---------------------------------------------------------------
    def export_image(self, path: str) -> None:
        """Save the response shown (magnitude over phase) as PNG or SVG, chosen by the file's
        suffix: the report's drawing of it (:func:`bandsketch.engine.present.svgfigures.bode_svg`),
        which browsers and librsvg draw, in the light colours for paper.

        Raises
        ------
        ValueError
            The suffix is neither ``.png`` nor ``.svg``.
        """
        if self._data is not None:
            write_picture(bode_svg(self._data), path)
