"""The step and pulse responses beside the Bode plot, in the same colours and line styles.

Every item is made once and updated with ``setData``; the plot draws a
:class:`bandsketch.engine.present.stepdata.StepData` and a
:class:`~bandsketch.engine.present.stepdata.PulseData` and computes nothing. As on the Bode
plot the exact response is solid in the ink colour and the time-constant estimates are dashed
in the high band's colour; the pulse's estimated sag is dashed in the low band's colour.
"""

from __future__ import annotations

import html

import pyqtgraph as pg
from PySide6.QtCore import QPointF, Qt, Signal
from PySide6.QtGui import QColor
from PySide6.QtWidgets import QLabel, QVBoxLayout, QWidget

from bandsketch.engine.present.stepdata import PulseData, StepData, TimeTargetLine

from .plotexport import export_canvas
from .style import Restyles, ViewColours, gridded, set_axis_title, view_colours

MARKER_COUNT = 3
"""10 %, 90 % and the overshoot's peak."""
TARGET_COUNT = 3
"""The rise, overshoot and settling targets."""
LEVELS = (0.1, 0.9, 1.0)
"""Reference lines on the step plot, as fractions of the final value."""


class TimePlot(Restyles, QWidget):
    """The step response (above) and a pulse response with its sag (below).

    Signals
    -------
    hovered(str)
        The readout at the cursor (empty when the cursor leaves the step plot).
    """

    hovered = Signal(str)

    def __init__(self, parent=None):
        super().__init__(parent)
        self._step: StepData | None = None
        self._pulse: PulseData | None = None
        self._problem: str | None = None
        self._drawn = True
        self._stale = False
        self._colours: ViewColours = view_colours()
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(2)
        self.summary = QLabel()
        self.summary.setContentsMargins(4, 4, 4, 0)
        self.summary.setWordWrap(True)
        self.summary.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        layout.addWidget(self.summary)
        self.canvas = pg.GraphicsLayoutWidget()
        layout.addWidget(self.canvas, 1)
        # Side by side: the panel is wider than it is tall, and each plot needs its height.
        self.step = self.canvas.addPlot(row=0, col=0)
        self.pulse = self.canvas.addPlot(row=0, col=1)
        self.canvas.ci.layout.setColumnStretchFactor(0, 3)
        self.canvas.ci.layout.setColumnStretchFactor(1, 2)
        for plot in (self.step, self.pulse):
            gridded(plot)
            plot.setLabel("left", "Output ÷ final value")
            plot.setMenuEnabled(False)
            plot.hideButtons()
        self.curves = {key: self.step.plot() for key in ("exact", "first", "second")}
        self.pulse_curve = self.pulse.plot()
        self.sag_curve = self.pulse.plot()
        self.levels = [pg.InfiniteLine(pos=v, angle=0, movable=False) for v in LEVELS]
        for line in self.levels:
            self.step.addItem(line, ignoreBounds=True)
        self.dots = pg.ScatterPlotItem(size=9)
        self.step.addItem(self.dots)
        self.labels = [pg.TextItem(anchor=(0, 1)) for _ in range(MARKER_COUNT)]
        for label in self.labels:
            self.step.addItem(label, ignoreBounds=True)
        # The designer's time targets, dash-dotted as on the Bode plot.
        self.target_lines = [pg.InfiniteLine(angle=90, movable=False, label="",
                                             labelOpts={"position": 0.45, "anchors": [(0, 0.5), (0, 0.5)]})
                             for _ in range(TARGET_COUNT)]
        for line in self.target_lines:
            line.setZValue(-1)
            line.hide()
            self.step.addItem(line, ignoreBounds=True)
        self.cursor = pg.InfiniteLine(angle=90, movable=False)
        self.step.addItem(self.cursor, ignoreBounds=True)
        self.canvas.scene().sigMouseMoved.connect(self._on_mouse_moved)
        self._style()
        self.show_response(None, None)

    def show_response(self, step: StepData | None, pulse: PulseData | None, *, stale: bool = False,
                      problem: str | None = None) -> None:
        """Draw ``step`` and ``pulse`` (None: clear, and say ``problem`` if given, why there is
        no step response); ``stale`` greys a result no longer current. While the view is
        hidden (the Bode plot's tab is on show) it is drawn when it is next shown."""
        self._step, self._pulse, self._stale = step, pulse, stale
        self._problem = problem
        if self.isVisible():
            self._draw()
        else:
            self._drawn = False

    def showEvent(self, event):
        if not self._drawn:
            self._draw()
        super().showEvent(event)

    def _draw(self) -> None:
        self._drawn = True
        step, pulse, problem = self._step, self._pulse, self._problem
        if step is None:
            for curve in (*self.curves.values(), self.pulse_curve, self.sag_curve):
                curve.setData([], [])
            self.dots.setData([], [])
            for label in self.labels:
                label.hide()
            self.cursor.hide()
            self.summary.setText(problem or "")
            return
        self.curves["exact"].setData(step.time, step.exact)
        for key, y in (("first", step.first_order), ("second", step.second_order)):
            self.curves[key].setData(step.time if y is not None else [], y if y is not None else [])
        self.dots.setData([m.time for m in step.markers], [m.level for m in step.markers])
        for i, label in enumerate(self.labels):
            if i < len(step.markers):
                m = step.markers[i]
                label.setText(" " + m.text)
                # The rising curve leaves room below and to the right of the 10 % and 90 %
                # points; the peak's label sits above it.
                label.setAnchor((0.0, 1.0 if m.level > 1 else 0.0))
                label.setPos(m.time, m.level)
                label.show()
            else:
                label.hide()
        set_axis_title(self.step, "bottom", f"Time ({step.time_label}) after an input step")
        lines = [f"{step.summary} · final value {step.final_text}"]
        if pulse is not None:
            self.pulse_curve.setData(pulse.time, pulse.exact)
            self.sag_curve.setData([0.0, pulse.width], list(pulse.sag_line))
            set_axis_title(self.pulse, "bottom", f"Time ({pulse.time_label}), input pulse")
            lines.append(pulse.summary)
        else:
            self.pulse_curve.setData([], [])
            self.sag_curve.setData([], [])
        warn = (self._colours.stale if self._stale else self._colours.problem).name()
        lines += [f"<span style='color:{warn}'>• {html.escape(w)}</span>" for w in step.warnings]
        self.summary.setText("<br>".join(lines))
        self.fit()
        self._style()

    def show_targets(self, lines: tuple[TimeTargetLine, ...]) -> None:
        """Draw the designer's time targets (see
        :func:`bandsketch.engine.present.stepdata.time_target_lines`; empty draws none)."""
        for i, item in enumerate(self.target_lines):
            if i >= len(lines):
                item.hide()
                continue
            line = lines[i]
            item.show()  # first: a hidden line's label ignores its new text
            item.setAngle(90 if line.vertical else 0)
            item.setValue(line.position)
            # A time's label sits halfway up, right of its line, where the edge has already
            # risen past; a level's at the right end, over the settled part of the step.
            item.label.anchors = [(0, 0.5), (0, 0.5)] if line.vertical else [(1, 1), (1, 1)]
            item.label.setPosition(0.45 if line.vertical else 0.97)
            item.label.setFormat(line.text)

    def fit(self) -> None:
        """Show both responses whole."""
        for plot in (self.step, self.pulse):
            plot.enableAutoRange()

    def export_image(self, path: str) -> None:
        """Save both plots as PNG or SVG, chosen by the file's suffix.

        Raises
        ------
        ValueError
            The suffix is neither ``.png`` nor ``.svg``.
        """
        export_canvas(self.canvas, path, "Bandsketch step and pulse response")

    def data(self) -> tuple[StepData | None, PulseData | None]:
        """The responses shown."""
        return self._step, self._pulse

    def legend_html(self) -> str:
        """The key to the curves, in their colours, for a label beside the plot."""
        c = self._colours
        return (f"<span style='color:{c.ink.name()}'>━ exact</span> &nbsp; "
                f"<span style='color:{c.high.name()}'>╍ 1 − e^(−t/b1)</span> &nbsp; "
                f"<span style='color:{c.high.name()}'>┅ pair from b1, b2</span> &nbsp; "
                f"<span style='color:{c.low.name()}'>╍ sag ω_L·t</span>")

    def _restyle(self) -> None:
        c = self._colours
        grey = self._stale
        self.canvas.setBackground(c.paper)
        for plot in (self.step, self.pulse):
            for side in ("left", "bottom"):
                axis = plot.getAxis(side)
                axis.setPen(c.muted)
                axis.setTextPen(c.ink)
        ink = c.stale if grey else c.ink
        high = c.stale if grey else c.high
        low = c.stale if grey else c.low
        self.curves["exact"].setPen(pg.mkPen(ink, width=2.2))
        self.curves["first"].setPen(pg.mkPen(high, width=2, style=Qt.PenStyle.DashLine))
        self.curves["second"].setPen(pg.mkPen(high, width=2, style=Qt.PenStyle.DotLine))
        self.pulse_curve.setPen(pg.mkPen(ink, width=2.2))
        self.sag_curve.setPen(pg.mkPen(low, width=2, style=Qt.PenStyle.DashLine))
        for line in self.levels:
            line.setPen(pg.mkPen(c.muted, width=1, style=Qt.PenStyle.DotLine))
        self.dots.setSymbol("d")
        self.dots.setBrush(pg.mkBrush(ink))
        self.dots.setPen(pg.mkPen(ink, width=2))
        fill = QColor(c.paper)
        fill.setAlphaF(0.85)
        for label in self.labels:
            label.setColor(ink)
            label.fill = pg.mkBrush(fill)
        self.cursor.setPen(pg.mkPen(c.selection, width=1))
        for item in self.target_lines:
            item.setPen(pg.mkPen(high, width=2, style=Qt.PenStyle.DashDotLine))
            item.label.setColor(high)
        self.summary.setStyleSheet(f"color: {ink.name()}")

    def _on_mouse_moved(self, pos: QPointF) -> None:
        if self._step is not None and self.step.sceneBoundingRect().contains(pos):
            x = self.step.getViewBox().mapSceneToView(pos).x()
            self.cursor.setValue(x)
            self.cursor.show()
            self.hovered.emit(self._step.readout(x))
            return
        self.cursor.hide()
        self.hovered.emit("")
