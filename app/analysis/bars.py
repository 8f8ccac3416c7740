"""Time-constant bars: one bar per element, grouped by band, longest share first, and beside
each the exact sensitivity of the corner its band sets (the two answers to "what do I change").

The widget draws a :class:`bandsketch.engine.present.plotdata.BarData` and nothing else. Row geometry is laid
out when the data or the size changes, never in ``paintEvent``. Clicks, hovers and the pin
menu are reported by signal; the panel turns a pin into an undoable edit.
"""

from __future__ import annotations

from dataclasses import dataclass

from PySide6.QtCore import QEvent, QPointF, QRectF, QSize, Qt, Signal
from PySide6.QtGui import QAction, QActionGroup, QColor, QFont, QFontMetricsF, QPainter, QPainterPath, QPen
from PySide6.QtWidgets import QMenu, QSizePolicy, QToolTip, QWidget

from bandsketch.engine.core.band import Band
from bandsketch.engine.present.plotdata import SENSITIVITY_HEADS, BarData, BarRow

from .style import ViewColours, view_colours

ROW_H = 22
HEAD_H = 38
"""A group heading: its title, and beneath it the sum and the estimate it gives."""
GAP = 8
PAD = 8
PIN_W = 14
MIN_BAR_W, SHORT_BAR_W = 40, 12
"""A bar's least length (px); in a pane too narrow for every column, the longest texts are cut
first (down to a usual row's), then the bars shrink to the second."""
USUAL_ROW_TEXT = "888 ps · 88 %"
SENS_SAMPLE = "−0.00"
"""The widest sensitivity text (two decimals), for the column's width."""
SENS_WAIT = "…"
"""Written in the sensitivity column while the worker computes it."""

PIN_CHOICES = ((Band.HIGH, "Pin to the high band"), (Band.LOW, "Pin to the low band"),
               ("", "Automatic band (by the gain test)"))
"""Pin menu entries: the band passed on (``""`` unpins) and the menu text."""


@dataclass(frozen=True)
class _Heading:
    rect: QRectF
    title: str
    total: str
    band: str
    sens_head: str
    head_on_top: bool
    """The sensitivity column's heading goes on the title's line (else on the sum's line)."""


@dataclass(frozen=True)
class _Bar:
    row: BarRow
    rect: QRectF
    name_at: QPointF
    bar: QRectF
    text_at: QPointF
    text: str
    sens_at: QPointF


class TimeConstantBars(QWidget):
    """Bars of each element's share of b1 (high band) or ω_L (low band).

    Signals
    -------
    element_clicked(str)
        An element's bar was clicked.
    pin_requested(str, str)
        The user chose a band for an element: ``"high"``, ``"low"`` or ``""`` (automatic).
    """

    element_clicked = Signal(str)
    pin_requested = Signal(str, str)

    def __init__(self, parent=None):
        super().__init__(parent)
        self.setMouseTracking(True)
        self.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Minimum)
        self._data: BarData | None = None
        self._sens = None  # element -> BarSensitivity, a sentence why none, or None while computed
        self._selected: str | None = None
        self._stale = False
        self._colours: ViewColours = view_colours()
        self._headings: list[_Heading] = []
        self._bars: list[_Bar] = []
        self._height = HEAD_H

    # -- what is shown --------------------------------------------------------
    def show_bars(self, data: BarData | None, *, stale: bool = False) -> None:
        """Draw ``data`` (None: nothing analysed yet); ``stale`` greys a result no longer current.

        The sensitivities beside the bars are cleared until :meth:`show_sensitivities` brings
        those of ``data``: a number of the design before an edit is never shown as current.
        """
        self._data, self._stale = data, stale
        self._sens = None
        self._layout()

    def show_sensitivities(self, sens) -> None:
        """Write the exact sensitivity beside each bar: ``sens`` maps element ->
        :class:`bandsketch.engine.present.plotdata.BarSensitivity`, or is the sentence saying
        why there are none (shown in the bars' tooltips)."""
        self._sens = sens
        self.update()

    def sensitivity_text(self, name: str) -> str:
        """What the sensitivity column says for element ``name``."""
        if isinstance(self._sens, str):
            return "—"
        if self._sens is None:
            return SENS_WAIT
        return self._sens[name].text if name in self._sens else "—"

    def set_stale(self, stale: bool) -> None:
        """Grey the bars (the circuit as drawn cannot be analysed) or show them in colour."""
        self._stale = stale
        self.update()

    def set_selected(self, name: str | None) -> None:
        """Outline the bar of element ``name`` (None: no outline)."""
        self._selected = name
        self.update()

    def set_colours(self, colours: ViewColours) -> None:
        """Redraw in ``colours`` (the theme changed)."""
        self._colours = colours
        self.update()

    def data(self) -> BarData | None:
        """The bars shown."""
        return self._data

    def bar_rect(self, name: str) -> QRectF | None:
        """Where element ``name``'s row is, in widget coordinates (for tests and tooltips)."""
        return next((b.rect for b in self._bars if b.row.name == name), None)

    # -- layout ---------------------------------------------------------------
    def _fonts(self):
        bold = QFont(self.font())
        bold.setBold(True)
        return self.font(), bold

    def _layout(self) -> None:
        self._headings, self._bars = [], []
        y = PAD
        if self._data is not None:
            plain, bold = self._fonts()
            fm, fb = QFontMetricsF(plain), QFontMetricsF(bold)
            rows = [r for g in self._data.groups for r in g.rows]
            name_w = max((fb.horizontalAdvance(r.name) for r in rows), default=0) + 10
            text_w = max((fm.horizontalAdvance(_row_text(r)) for r in rows), default=0) + 10
            sens_w = fm.horizontalAdvance(SENS_SAMPLE) + 8
            # The layout fits the pane: the sensitivity column is never pushed out of sight. A
            # narrow pane shortens the bars first, then cuts the longest texts (their tooltip
            # keeps them whole).
            width = self.width()
            bar_x = PAD + PIN_W + name_w
            room = width - PAD - sens_w - bar_x  # for the bar and the text together
            usual = min(text_w, fm.horizontalAdvance(USUAL_ROW_TEXT) + 10)
            text_w = max(min(text_w, room - MIN_BAR_W), usual)
            bar_w = max(SHORT_BAR_W, room - text_w)
            for g in self._data.groups:
                # The column's heading goes on whichever line of the group's heading has room
                # for it; with room on neither it is left to the tooltip rather than overprint.
                head = SENSITIVITY_HEADS.get(g.band, "")
                room = width - 2 * PAD - fm.horizontalAdvance(head) - 8
                on_top = fb.horizontalAdvance(g.title) <= room
                if not on_top and fm.horizontalAdvance(g.total_text) > room:
                    head = ""
                self._headings.append(_Heading(QRectF(PAD, y, width - 2 * PAD, HEAD_H), g.title,
                                               g.total_text, g.band, head, on_top))
                y += HEAD_H
                for r in g.rows:
                    rect = QRectF(PAD / 2, y, width - PAD, ROW_H)
                    bar = QRectF(bar_x, y + 4, max(1.0, bar_w * r.share) if r.share > 0 else 0.0, ROW_H - 8)
                    base = y + ROW_H / 2 + fm.ascent() / 2 - 1
                    text = fm.elidedText(_row_text(r), Qt.TextElideMode.ElideRight, max(0.0, text_w - 10))
                    self._bars.append(_Bar(r, rect, QPointF(PAD + PIN_W, base), bar,
                                           QPointF(bar_x + bar_w + 8, base), text, QPointF(width - PAD, base)))
                    y += ROW_H
                y += GAP
        self._height = int(y + PAD)
        self.updateGeometry()
        self.update()

    def sizeHint(self) -> QSize:
        return QSize(360, self._height)

    def minimumSizeHint(self) -> QSize:
        return QSize(240, self._height)

    def resizeEvent(self, event):
        super().resizeEvent(event)
        self._layout()

    def changeEvent(self, event):
        if event.type() == QEvent.Type.FontChange:
            self._layout()
        super().changeEvent(event)

    # -- drawing --------------------------------------------------------------
    def paintEvent(self, event):
        c = self._colours
        p = QPainter(self)
        p.setRenderHint(QPainter.RenderHint.Antialiasing)
        plain, bold = self._fonts()
        if self._data is None or not self._bars:
            p.setPen(c.muted)
            p.drawText(self.rect().adjusted(PAD, PAD, -PAD, -PAD), Qt.AlignmentFlag.AlignTop,
                       "No capacitors or inductors to rank yet." if self._data else "")
            return
        # The bars scroll: of a long list, only the rows in the part being painted are drawn.
        exposed = QRectF(event.rect())
        for h in self._headings:
            if not h.rect.intersects(exposed):
                continue
            top, bottom = h.rect.adjusted(0, 0, 0, -h.rect.height() / 2), h.rect.adjusted(0, h.rect.height() / 2, 0, 0)
            p.setFont(bold)
            p.setPen(c.stale if self._stale else c.band(h.band))
            p.drawText(top, Qt.AlignmentFlag.AlignBottom | Qt.AlignmentFlag.AlignLeft, h.title)
            p.setFont(plain)
            p.setPen(c.stale if self._stale else c.muted)
            p.drawText(bottom, Qt.AlignmentFlag.AlignVCenter | Qt.AlignmentFlag.AlignLeft, h.total)
            p.drawText(top if h.head_on_top else bottom,
                       (Qt.AlignmentFlag.AlignBottom if h.head_on_top else Qt.AlignmentFlag.AlignVCenter)
                       | Qt.AlignmentFlag.AlignRight, h.sens_head)
        for b in self._bars:
            if not b.rect.adjusted(-2, -2, 2, 2).intersects(exposed):  # with the selection's outline
                continue
            r = b.row
            colour = QColor(c.stale if self._stale else c.band(r.band))
            if r.name == self._selected:
                p.setPen(QPen(c.selection, 2))
                p.setBrush(Qt.BrushStyle.NoBrush)
                p.drawRoundedRect(b.rect, 3, 3)
            if r.pinned:
                self._draw_pin(p, QPointF(PAD + 5, b.rect.center().y()), colour)
            p.setFont(bold if r.dominant else plain)
            p.setPen(c.stale if self._stale else c.ink)
            p.drawText(b.name_at, r.name)
            if not b.bar.isEmpty():
                fill = QColor(colour)
                # The dominant bar is solid; the rest are lighter, so the limit reads first.
                fill.setAlphaF(1.0 if r.dominant else 0.45)
                p.setPen(Qt.PenStyle.NoPen)
                p.setBrush(fill)
                p.drawRect(b.bar)
            p.setFont(plain)
            p.setPen(c.stale if self._stale else c.muted)
            p.drawText(b.text_at, b.text)
            sens = None if self._sens is None or isinstance(self._sens, str) else self._sens.get(r.name)
            p.setFont(bold if sens is not None and sens.leads else plain)
            p.setPen(c.stale if self._stale else c.ink)
            text = self.sensitivity_text(r.name)
            p.drawText(QPointF(b.sens_at.x() - QFontMetricsF(p.font()).horizontalAdvance(text), b.sens_at.y()), text)

    @staticmethod
    def _draw_pin(p: QPainter, at: QPointF, colour: QColor) -> None:
        """A drawing pin: a round head on a short needle."""
        path = QPainterPath()
        path.addEllipse(QPointF(at.x(), at.y() - 3), 3.2, 3.2)
        p.setPen(QPen(colour, 1.6))
        p.setBrush(colour)
        p.drawPath(path)
        p.drawLine(QPointF(at.x(), at.y()), QPointF(at.x(), at.y() + 5))

    # -- interaction ----------------------------------------------------------
    def _row_at(self, pos) -> BarRow | None:
        return next((b.row for b in self._bars if b.rect.contains(QPointF(pos))), None)

    def mousePressEvent(self, event):
        row = self._row_at(event.position())
        if row is not None and event.button() == Qt.MouseButton.LeftButton:
            self.element_clicked.emit(row.name)
            event.accept()
            return
        super().mousePressEvent(event)

    def event(self, event):
        if event.type() == QEvent.Type.ToolTip:
            row = self._row_at(event.pos())
            if row is None:
                QToolTip.hideText()
                event.ignore()
            else:
                QToolTip.showText(event.globalPos(), f"{row.tooltip}\n{self._sens_tip(row.name)}", self)
            return True
        return super().event(event)

    def _sens_tip(self, name: str) -> str:
        if isinstance(self._sens, str):
            return self._sens
        if self._sens is None:
            return "The exact sensitivity is being computed."
        return self._sens[name].tooltip if name in self._sens else ""

    def pin_menu(self, name: str, parent=None) -> QMenu:
        """The band menu for element ``name``: high, low or automatic, the current one checked."""
        row = self._data.row(name) if self._data else None
        current = row.band if row is not None and row.pinned else ""
        menu = QMenu(parent or self)
        group = QActionGroup(menu)
        for band, text in PIN_CHOICES:
            action = QAction(text, menu, checkable=True, checked=band == current)
            action.triggered.connect(lambda _=False, b=band: self.pin_requested.emit(name, b))
            group.addAction(action)
            menu.addAction(action)
        return menu

    def contextMenuEvent(self, event):
        row = self._row_at(event.pos())
        if row is None:
            return
        self.pin_menu(row.name).exec(event.globalPos())


def _row_text(r: BarRow) -> str:
    return f"{r.value_text} · {r.share_text}" if r.share_text else r.value_text
