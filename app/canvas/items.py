"""Scene items: views of the document's parts and wires, plus junction and problem marks.

Each item shows one value from the document and holds nothing else of its own: its geometry
(symbol paths, label places) is worked out in :meth:`PartItem.show` when the document changes,
so painting only draws what is already laid out.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, replace

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import (QBrush, QColor, QFont, QFontMetricsF, QPainterPath, QPainterPathStroker,
                           QPen)
from PySide6.QtWidgets import QGraphicsItem, QStyle

from bandsketch.engine.design.document import Part, Wire
from bandsketch.engine.design.parts import KINDS

from ..engine_link import kind_fields, shown_value
from ..theme import Theme
from .symbols import ResistorStyle, Symbol, build_symbol, frame_transform

LINE_WIDTH = 1.6
HEAVY_WIDTH = 3.2
WIRE_WIDTH = 1.8
HALO_WIDTH = 7.0
LABEL_GAP = 6.0

Z_WIRE, Z_PART, Z_JUNCTION, Z_PROBLEM, Z_PREVIEW = 1, 2, 3, 4, 5


def name_font() -> QFont:
    """Font of part names on the sheet (scene units, so it scales with zoom)."""
    f = QFont()
    f.setPixelSize(12)
    f.setBold(True)
    return f


def value_font() -> QFont:
    """Font of part values on the sheet."""
    f = QFont()
    f.setPixelSize(11)
    return f


_SUMMARY_FIELD = re.compile(r"\{(\w+)(:bare)?\}")


def value_lines(part: Part) -> list[str]:
    """The value text shown beside a part, one entry a line, from its catalogue ``summary``."""
    fields = {f.key: f for f in kind_fields(part)}
    lines = []
    for template in KINDS[part.kind].summary:
        keys = [m.group(1) for m in _SUMMARY_FIELD.finditer(template)]
        if all(k in fields and part.params.get(k, "").strip() for k in keys):
            lines.append(_SUMMARY_FIELD.sub(
                lambda m: shown_value(part, fields[m.group(1)], unit=not m.group(2)), template))
    return lines


@dataclass(frozen=True)
class _Text:
    text: str
    origin: QPointF
    bold: bool


def _stroke(path: QPainterPath, width: float) -> QPainterPath:
    s = QPainterPathStroker()
    s.setWidth(width)
    s.setCapStyle(Qt.PenCapStyle.RoundCap)
    return s.createStroke(path)


def _place_beside(body: QRectF, size: tuple, blocked: QPainterPath, avoid: list) -> QRectF:
    """The spot beside ``body`` (right, left, above, below, in that preference) that clears
    the leads, pins and ``avoid``; if none is clear, the one that covers the least of them."""
    w, h = size
    c = body.center()
    spots = (
        QRectF(body.right() + LABEL_GAP, c.y() - h / 2, w, h),
        QRectF(body.left() - LABEL_GAP - w, c.y() - h / 2, w, h),
        QRectF(c.x() - w / 2, body.top() - LABEL_GAP - h, w, h),
        QRectF(c.x() - w / 2, body.bottom() + LABEL_GAP, w, h),
    )

    def covered(spot: QRectF) -> float:
        box = QPainterPath()
        box.addRect(spot)
        hit = blocked.intersected(box).boundingRect()
        return hit.width() * hit.height() + sum(1e4 for r in avoid if spot.intersects(r))

    for spot in spots:
        if covered(spot) == 0:
            return spot
    return min(spots, key=covered)


def _blocked(symbol: Symbol, pins) -> QPainterPath:
    """Where labels must not go: the leads and outline, and a ring round each pin."""
    blocked = _stroke(symbol.lines, 4).united(_stroke(symbol.heavy, 4))
    for x, y in pins:
        blocked.addEllipse(QPointF(x, y), 8, 8)
    return blocked


class _Lit:
    """An item that lights up under the pointer, its bounds and outline laid out beforehand
    (in ``_bounds`` and ``_shape``) so that Qt's queries and painting compute nothing."""

    def boundingRect(self) -> QRectF:
        return self._bounds

    def shape(self) -> QPainterPath:
        return self._shape

    def hoverEnterEvent(self, event):
        self._hover = True
        self.update()

    def hoverLeaveEvent(self, event):
        self._hover = False
        self.update()


class PartItem(_Lit, QGraphicsItem):
    """The view of one part: its symbol, name and value, hover, selection and marks."""

    def __init__(self, part: Part, theme: Theme, style: ResistorStyle, *, ghost: bool = False):
        super().__init__()
        self._theme = theme
        self._style = style
        self._ghost = ghost
        self._hover = False
        self._accent: QColor | None = None
        self._problem: str | None = None
        self._outline = False
        self._is_input = False
        self.part = part
        self.setZValue(Z_PREVIEW if ghost else Z_PART)
        if not ghost:
            self.setFlag(QGraphicsItem.GraphicsItemFlag.ItemIsSelectable)
            self.setAcceptHoverEvents(True)
            # Kept as a picture: a part is drawn again only when it changes, not whenever a
            # label, veil or halo over it does (a scrub repaints the test picture's label
            # over the parts beneath it at every step).
            self.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
        self.show(part)

    # -- what the item shows ---------------------------------------------------
    @property
    def name(self) -> str:
        return self.part.name

    def show(self, part: Part, *, is_input: bool | None = None) -> None:
        """Lay the item out for ``part`` (and whether it is the design's signal input)."""
        laid_out = hasattr(self, "_symbol")
        if (laid_out and (is_input is None or is_input == self._is_input)
                and replace(part, x=self.part.x, y=self.part.y) == self.part):
            # Only moved: the layout is the part's own, relative to its origin (a drag step).
            self.part = part
            self.setPos(part.x, part.y)
            return
        self.prepareGeometryChange()
        self.part = part
        if is_input is not None:
            self._is_input = is_input
        self.setPos(part.x, part.y)
        nf, vf = QFontMetricsF(name_font()), QFontMetricsF(value_font())
        inside = KINDS[part.kind].inside
        text_width = nf.horizontalAdvance(part.params.get(inside, "")) if inside else 0.0
        own = build_symbol(part.kind, part.params, self._style, text_width)
        self._symbol: Symbol = own.mapped(frame_transform(part.rotation, part.mirror))
        self._texts: list[_Text] = []
        self._badge: QRectF | None = None
        blocked = _blocked(self._symbol, [(x - part.x, y - part.y) for x, y in part.pins().values()])
        rects = []
        if inside:
            self._place_inside(part.params.get(inside, ""), nf)
        else:
            lines = ([(part.name, True)] if KINDS[part.kind].named else []) + \
                    [(t, False) for t in value_lines(part)]
            if lines:
                rects.append(self._place_lines(lines, blocked, nf, vf))
        if self._is_input and not self._ghost:
            size = (nf.horizontalAdvance("IN") + 8, nf.height())
            self._badge = _place_beside(self._symbol.body, size, blocked, rects)
            rects.append(self._badge)
        outline = blocked.united(self._body_path())
        for r in rects:
            outline.addRect(r)
        self._shape = outline
        # A vertical tag writes its name beside itself, outside the outline: the bounds
        # hold every text, or the part's picture would cut it off.
        drawn = outline.boundingRect()
        for text in self._texts:
            m = nf if text.bold else vf
            drawn = drawn.united(QRectF(text.origin.x(), text.origin.y() - m.ascent(),
                                        m.horizontalAdvance(text.text), m.height()))
        self._bounds = drawn.adjusted(-HALO_WIDTH, -HALO_WIDTH, HALO_WIDTH, HALO_WIDTH)
        self.update()

    def _body_path(self) -> QPainterPath:
        p = QPainterPath()
        p.addRect(self._symbol.body)
        return p

    def _place_lines(self, lines, blocked, nf: QFontMetricsF, vf: QFontMetricsF) -> QRectF:
        metrics = [nf if bold else vf for _, bold in lines]
        w = max(m.horizontalAdvance(t) for (t, _), m in zip(lines, metrics))
        h = sum(m.height() for m in metrics)
        spot = _place_beside(self._symbol.body, (w, h), blocked, [])
        right_aligned = spot.right() < self._symbol.body.left()
        centred = spot.bottom() <= self._symbol.body.top() or spot.top() >= self._symbol.body.bottom()
        y = spot.top()
        for (text, bold), m in zip(lines, metrics):
            tw = m.horizontalAdvance(text)
            x = spot.right() - tw if right_aligned else (spot.center().x() - tw / 2 if centred else spot.left())
            self._texts.append(_Text(text, QPointF(x, y + m.ascent()), bold))
            y += m.height()
        return spot

    def _place_inside(self, text: str, nf: QFontMetricsF) -> None:
        # The text sits inside the tag, upright whichever way the tag points.
        body = self._symbol.body
        w = nf.horizontalAdvance(text)
        c = body.center()
        self._texts.append(_Text(text, QPointF(c.x() - w / 2 + (3 if body.width() > body.height() else 0),
                                               c.y() + nf.ascent() - nf.height() / 2), True))
        if body.height() > body.width():
            # A vertical tag is too narrow for the text; write it beside the tag instead.
            self._texts[-1] = _Text(text, QPointF(body.right() + LABEL_GAP,
                                                  c.y() + nf.ascent() - nf.height() / 2), True)

    def name_rect(self) -> QRectF | None:
        """Where the part's name is written (item coordinates), or None if it shows none."""
        if KINDS[self.part.kind].inside or not KINDS[self.part.kind].named or not self._texts:
            return None
        text, nf = self._texts[0], QFontMetricsF(name_font())
        return QRectF(text.origin.x(), text.origin.y() - nf.ascent(), nf.horizontalAdvance(text.text), nf.height())

    def set_theme(self, theme: Theme, style: ResistorStyle) -> None:
        """Redraw in new colours or with another resistor style."""
        self._theme = theme
        if style is not self._style:
            self._style = style
            self.show(self.part)
        self.update()

    def set_accent(self, colour: QColor | None) -> None:
        """Colour the symbol (a band's colour), or None for plain ink."""
        # Every analysis colours every part again; only a part whose colour changed is
        # repainted, not the whole sheet.
        if colour != self._accent:
            self._accent = colour
            self.update()

    def set_problem(self, message: str | None, *, outline: bool = True) -> None:
        """Give the part the engine's message as tooltip, or clear it.

        ``outline`` rings the part; it is left off when the fault is already marked at its
        pins, so a half-wired sketch is not boxed all over.
        """
        outline = bool(message) and outline
        self.setToolTip(message or "")
        # Asked of every part after every edit: only a change repaints.
        if (message, outline) != (self._problem, self._outline):
            self._problem, self._outline = message, outline
            self.update()

    @property
    def problem(self) -> str | None:
        return self._problem

    @property
    def is_input(self) -> bool:
        """Whether the item shows the design's signal-input badge."""
        return self._is_input

    # -- QGraphicsItem ---------------------------------------------------------
    def paint(self, painter, option, widget=None):
        t = self._theme
        selected = bool(option.state & QStyle.StateFlag.State_Selected)
        halo = t.selection if selected else (t.hover if self._hover else None)
        painter.setRenderHint(painter.RenderHint.Antialiasing)
        sym = self._symbol
        if halo is not None:
            c = QColor(halo)
            c.setAlpha(150 if selected else 90)
            pen = QPen(c, HALO_WIDTH, Qt.PenStyle.SolidLine, Qt.PenCapStyle.RoundCap, Qt.PenJoinStyle.RoundJoin)
            painter.setPen(pen)
            painter.setBrush(Qt.BrushStyle.NoBrush)
            painter.drawPath(sym.lines)
            painter.drawPath(sym.heavy)
        ink = t.ghost if self._ghost else (self._accent or t.ink)
        painter.setPen(QPen(ink, LINE_WIDTH, Qt.PenStyle.SolidLine, Qt.PenCapStyle.RoundCap, Qt.PenJoinStyle.RoundJoin))
        painter.drawPath(sym.lines)
        painter.setPen(QPen(ink, HEAVY_WIDTH, Qt.PenStyle.SolidLine, Qt.PenCapStyle.FlatCap))
        painter.drawPath(sym.heavy)
        painter.setPen(Qt.PenStyle.NoPen)
        painter.setBrush(QBrush(ink))
        painter.drawPath(sym.solid)
        if self._outline:
            painter.setBrush(Qt.BrushStyle.NoBrush)
            painter.setPen(QPen(t.problem, 1.5, Qt.PenStyle.DashLine))
            painter.drawRoundedRect(sym.body.adjusted(-5, -5, 5, 5), 4, 4)
        nf, vf = name_font(), value_font()
        for text in self._texts:
            painter.setFont(nf if text.bold else vf)
            painter.setPen(t.ghost if self._ghost else (t.label if text.bold else t.value))
            painter.drawText(text.origin, text.text)
        if self._badge is not None:
            painter.setPen(Qt.PenStyle.NoPen)
            painter.setBrush(t.input)
            painter.drawRoundedRect(self._badge, 3, 3)
            painter.setFont(nf)
            painter.setPen(t.paper)
            painter.drawText(self._badge, Qt.AlignmentFlag.AlignCenter, "IN")


class WireItem(_Lit, QGraphicsItem):
    """The view of one wire: an orthogonal polyline."""

    def __init__(self, wire: Wire, theme: Theme):
        super().__init__()
        self._theme = theme
        self._hover = False
        self.setFlag(QGraphicsItem.GraphicsItemFlag.ItemIsSelectable)
        self.setAcceptHoverEvents(True)
        self.setZValue(Z_WIRE)
        self.show(wire)

    def show(self, wire: Wire) -> None:
        """Lay the item out for ``wire``."""
        self.prepareGeometryChange()
        self.wire = wire
        path = QPainterPath(QPointF(*wire.points[0]))
        for pt in wire.points[1:]:
            path.lineTo(QPointF(*pt))
        self._path = path
        self._shape = _stroke(path, 9)
        self._bounds = self._shape.boundingRect().adjusted(-HALO_WIDTH, -HALO_WIDTH, HALO_WIDTH, HALO_WIDTH)
        self.update()

    def set_theme(self, theme: Theme) -> None:
        self._theme = theme
        self.update()

    def paint(self, painter, option, widget=None):
        t = self._theme
        painter.setRenderHint(painter.RenderHint.Antialiasing)
        painter.setBrush(Qt.BrushStyle.NoBrush)
        selected = bool(option.state & QStyle.StateFlag.State_Selected)
        if selected or self._hover:
            c = QColor(t.selection if selected else t.hover)
            c.setAlpha(150 if selected else 90)
            painter.setPen(QPen(c, HALO_WIDTH, Qt.PenStyle.SolidLine, Qt.PenCapStyle.RoundCap, Qt.PenJoinStyle.RoundJoin))
            painter.drawPath(self._path)
        painter.setPen(QPen(t.wire, WIRE_WIDTH, Qt.PenStyle.SolidLine, Qt.PenCapStyle.RoundCap, Qt.PenJoinStyle.RoundJoin))
        painter.drawPath(self._path)


class JunctionItem(QGraphicsItem):
    """A dot where three or more connections meet."""

    RADIUS = 3.6

    def __init__(self, point: tuple, theme: Theme):
        super().__init__()
        self._theme = theme
        self.setPos(*point)
        self.setZValue(Z_JUNCTION)

    def set_theme(self, theme: Theme) -> None:
        self._theme = theme
        self.update()

    def boundingRect(self) -> QRectF:
        r = self.RADIUS + 1
        return QRectF(-r, -r, 2 * r, 2 * r)

    def paint(self, painter, option, widget=None):
        painter.setRenderHint(painter.RenderHint.Antialiasing)
        painter.setPen(Qt.PenStyle.NoPen)
        painter.setBrush(self._theme.wire)
        painter.drawEllipse(QPointF(0, 0), self.RADIUS, self.RADIUS)


class ProblemItem(QGraphicsItem):
    """A ring at a sheet position the engine reports a connectivity problem at."""

    RADIUS = 7.0

    def __init__(self, point: tuple, message: str, theme: Theme):
        super().__init__()
        self._theme = theme
        self.message = message
        self.setPos(*point)
        self.setZValue(Z_PROBLEM)
        self.setToolTip(message)

    def set_theme(self, theme: Theme) -> None:
        self._theme = theme
        self.update()

    def boundingRect(self) -> QRectF:
        r = self.RADIUS + 2
        return QRectF(-r, -r, 2 * r, 2 * r)

    def paint(self, painter, option, widget=None):
        painter.setRenderHint(painter.RenderHint.Antialiasing)
        c = QColor(self._theme.problem)
        painter.setPen(QPen(c, 2.0))
        fill = QColor(c)
        fill.setAlpha(45)
        painter.setBrush(fill)
        painter.drawEllipse(QPointF(0, 0), self.RADIUS, self.RADIUS)
