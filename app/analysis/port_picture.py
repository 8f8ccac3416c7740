"""An element's test picture drawn over the sheet: how the resistance it sees is found.

The engine says which elements are shorted, opened and zeroed and which two nodes the test
source joins (:meth:`bandsketch.engine.solve.analysis.Analysis.port_picture`). :func:`picture_geometry`
places that on the sheet (plain tuples, no Qt), and :class:`PictureOverlay` draws it: the
element under test replaced by a test-source glyph with its label, open elements faded with
a gap cut through them, shorted elements and zeroed voltage sources bridged by a bold wire.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from PySide6.QtCore import QLineF, QPointF, QRectF, QSizeF, Qt
from PySide6.QtGui import QColor, QFont, QFontMetricsF, QPainterPath, QPen
from PySide6.QtWidgets import QGraphicsItem

from bandsketch.engine.present.plotdata import element_label, part_of

from .style import ViewColours, view_colours

Z_PICTURE = 4.5
"""Above parts, wires and junctions (1–3) and problem marks (4); below previews (5)."""
FADE_HALF_WIDTH = 16
GAP = 10
GLYPH_R = 13
GLYPH_OFFSET = 56
"""How far (scene units) a block-internal element's glyph sits outside its block."""

LABEL_CLEARANCE = 6
"""Space (scene units) the label keeps from parts, wires and the test source's leads."""
AROUND_GAP = 16
"""How far outside the drawing's bounds the label goes when nothing beside the glyph is free."""
SEEN_STEP = 20
"""Spacing (scene units) of the spots the label tries on the sheet in view: the grid's."""
SEEN_CHOICES = 6
"""Free spots in view the label chooses among (by its leader's crossings), nearest first."""
LEADER_AFTER = GLYPH_R + 24
"""A label further than this from the glyph's centre gets a thin leader line to it."""
OWN_TEXT_REACH = GLYPH_R + 28
"""The element's own name and value sit within this of the glyph's centre: a leader
leaving the glyph may cross them, so crossings are counted only beyond it."""

INTERNAL_NODE_PIN = {("bjt", "bi"): "base", ("opamp", "x"): "out", ("opamp", "y"): "out"}
"""A block's internal node -> the pin it is drawn at (b′ sits behind r_b at the base)."""


@dataclass(frozen=True)
class PictureGeometry:
    """Where the parts of a test picture go on the sheet (scene units).

    Attributes
    ----------
    element : str
        The element under test.
    band : str
        Its band (``"high"`` or ``"low"``).
    faded : tuple of ((x, y), (x, y))
        Two-pin parts drawn faded: the pins of each.
    gaps : tuple of ((x, y), (x, y))
        Opened parts (and zeroed current sources): a gap is cut at their middle.
    shorts : tuple of ((x, y), (x, y))
        Shorted parts (and zeroed voltage sources): a bold wire pin to pin.
    test_nodes : ((x, y), (x, y))
        The sheet points the test source joins.
    glyph : (x, y)
        Where the test-source glyph is drawn.
    lines : tuple of str
        The label: the element, its numbers, what the rest of the circuit is doing.
    """

    element: str
    band: str
    faded: tuple
    gaps: tuple
    shorts: tuple
    test_nodes: tuple
    glyph: tuple
    lines: tuple


def _two_pins(part) -> tuple:
    pins = list(part.pins().values())
    return pins[0], pins[1]


def _mid(a, b) -> tuple:
    return ((a[0] + b[0]) / 2, (a[1] + b[1]) / 2)


def _node_point(doc, nets, block, node) -> tuple:
    """Where node ``node`` of block-internal element is drawn: a pin of the block if it is on
    one, the pin an internal node sits behind, else the nearest sheet point of that net."""
    part = doc.parts[block]
    pins = part.pins()
    for pin, pos in pins.items():
        if nets.pin_net.get((block, pin)) == node:
            return pos
    if node.startswith(f"{block}."):
        pin = INTERNAL_NODE_PIN.get((part.kind, node.split(".", 1)[1]))
        if pin in pins:
            return pins[pin]
    centre = (part.x, part.y)
    points = nets.net_points.get(node, ()) or tuple(pins.values())
    return min(points, key=lambda p: math.dist(p, centre))


def _outward(block_part, a, b) -> tuple:
    """A glyph spot beside the segment a–b, on the side away from the block's origin."""
    m = _mid(a, b)
    dx, dy = b[0] - a[0], b[1] - a[1]
    length = math.hypot(dx, dy) or 1.0
    nx, ny = -dy / length, dx / length
    away = (m[0] - block_part.x, m[1] - block_part.y)
    if nx * away[0] + ny * away[1] < 0:
        nx, ny = -nx, -ny
    if (dx, dy) == (0, 0):
        nx, ny = 1.0, 0.0
    return (m[0] + nx * GLYPH_OFFSET, m[1] + ny * GLYPH_OFFSET)


def _state_lines(picture, doc) -> list:
    """What the rest of the circuit is doing, one line per state, sheet parts by name."""
    sheet_open = [n for n in picture.opened if n in doc.parts]
    sheet_short = [n for n in picture.shorted if n in doc.parts]
    inner = [n for n in (*picture.opened, *picture.shorted) if n not in doc.parts]
    lines = []
    if sheet_open:
        lines.append(f"open (gap): {', '.join(sheet_open)}")
    if sheet_short:
        lines.append(f"shorted (bold wire): {', '.join(sheet_short)}")
    zeroed = [n for n in picture.zeroed if n in doc.parts]
    if zeroed:
        lines.append(f"source zeroed: {', '.join(zeroed)}")
    if inner:
        lines.append(f"inside blocks: {len(inner)} more at their mid-band state")
    return lines


def picture_geometry(doc, nets, analysis, element: str) -> PictureGeometry | None:
    """Place ``element``'s test picture on the sheet of ``doc``.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
        The design that was analysed.
    nets : bandsketch.engine.design.netlist.Netlist
        Its nets.
    analysis : bandsketch.engine.solve.analysis.Analysis
    element : str
        A capacitor or inductor of the analysis (``Cin``, ``Q1.cmu``).

    Returns
    -------
    PictureGeometry or None
        None for a neutral element (it sees no resistance that matters) or one not on the sheet.
    """
    if element not in analysis.elements or part_of(element) not in doc.parts:
        return None
    picture = analysis.port_picture(element)
    if picture is None:
        return None
    result = analysis.elements[element]
    faded, gaps, shorts = [], [], []
    for name in picture.opened:
        if name in doc.parts:
            pins = _two_pins(doc.parts[name])
            faded.append(pins)
            gaps.append(pins)
    for name in picture.shorted:
        if name in doc.parts:
            pins = _two_pins(doc.parts[name])
            faded.append(pins)
            shorts.append(pins)
    for name in picture.zeroed:
        part = doc.parts.get(name)
        if part is None or len(part.pins()) < 2:
            # A rail (one pin) is AC ground as drawn; there is no source body to short.
            continue
        pins = _two_pins(part)
        faded.append(pins)
        # A zeroed voltage source is a short, a zeroed current source an open.
        (shorts if part.kind == "vsource" else gaps).append(pins)
    if element in doc.parts:
        ends = _two_pins(doc.parts[element])
        faded.append(ends)
        glyph = _mid(*ends)
    else:
        block = part_of(element)
        ends = tuple(_node_point(doc, nets, block, node) for node in picture.nodes)
        glyph = _outward(doc.parts[block], *ends)
    lines = (f"{element}: a test source in its place", element_label(result),
             *_state_lines(picture, doc))
    return PictureGeometry(element, result.band, tuple(faded), tuple(gaps), tuple(shorts),
                           ends, glyph, tuple(line for line in lines if line))


def _pt(p) -> QPointF:
    return QPointF(float(p[0]), float(p[1]))


class PictureOverlay(QGraphicsItem):
    """The drawn test picture; one item, laid out when a picture is set, hidden when there is none."""

    def __init__(self, colours: ViewColours | None = None):
        super().__init__()
        self.setZValue(Z_PICTURE)
        self.setAcceptedMouseButtons(Qt.MouseButton.NoButton)
        self._colours = colours or view_colours()
        self.geometry: PictureGeometry | None = None
        self._bounds = QRectF()
        self._fade = QPainterPath()
        self._gaps: list = []
        self._shorts: list = []
        self._leads = QPainterPath()
        self._glyph = QRectF()
        self._label = QRectF()
        self._leader: QLineF | None = None
        self._label_lines: list = []
        self._placed: tuple | None = None  # (what the label was placed for, its top left)
        self.setVisible(False)

    def set_colours(self, colours: ViewColours) -> None:
        """Redraw in ``colours`` (the theme changed)."""
        self._colours = colours
        self.update()

    def show_picture(self, geometry: PictureGeometry | None, drawing: QRectF | None = None,
                     occupied=(), visible: QRectF | None = None) -> None:
        """Draw ``geometry`` (None hides the picture).

        The label goes where it covers nothing: beside the glyph if a spot there is free,
        else on a free spot of the sheet the user sees (``visible``, scene units) nearest the
        glyph, else just outside ``drawing`` (the circuit's bounds), nearest the glyph first.
        ``occupied`` are the scene outlines of the parts (with their texts) and wire
        segments, as paths or rectangles. A label set apart from its glyph gets a thin
        leader line.
        """
        before = self.geometry, self._label_area()
        self.geometry = geometry
        if geometry is None:
            if before[0] is not None:
                self.prepareGeometryChange()
                self._bounds = QRectF()
            self.setVisible(False)
            return
        self._fade = QPainterPath()
        for a, b in geometry.faded:
            self._fade.addRect(_span_rect(a, b, FADE_HALF_WIDTH))
        self._gaps = [_gap_rect(a, b) for a, b in geometry.gaps]
        self._shorts = [(_pt(a), _pt(b)) for a, b in geometry.shorts]
        g = _pt(geometry.glyph)
        self._glyph = QRectF(g.x() - GLYPH_R, g.y() - GLYPH_R, 2 * GLYPH_R, 2 * GLYPH_R)
        self._leads = QPainterPath()
        for end in geometry.test_nodes:
            self._leads.moveTo(_pt(end))
            self._leads.lineTo(g)
        fonts = _label_fonts(len(geometry.lines))
        metrics = [QFontMetricsF(f) for f in fonts]
        width = max(m.horizontalAdvance(t) for m, t in zip(metrics, geometry.lines)) + 16
        height = sum(m.height() for m in metrics[:len(geometry.lines)]) + 10
        blocked = list(occupied) + [self._glyph] + _line_boxes(self._leads)
        # While the same element is shown over the same sheet in view (a value scrub, say),
        # the label stays where it was as long as it still covers nothing there: no search,
        # and no label hopping about from step to step.
        key = (geometry.element, geometry.glyph, geometry.test_nodes, _rect_key(drawing), _rect_key(visible))
        kept = QRectF(self._placed[1], QSizeF(width, height)) if self._placed and self._placed[0] == key else None
        if kept is not None and _covers(kept, blocked) == 0:
            self._label = kept
        else:
            self._label = _place_label(g, width, height, drawing, blocked, visible)
        self._placed = (key, self._label.topLeft())
        self._leader = _leader(g, self._label)
        self._label_lines = []
        y = self._label.top() + 5
        for text, font, m in zip(geometry.lines, fonts, metrics):
            self._label_lines.append((QPointF(self._label.left() + 8, y + m.ascent()), text, font))
            y += m.height()
        bounds = self._fade.boundingRect().united(self._label).united(self._glyph).united(self._leads.boundingRect())
        if self._leader is not None:
            bounds = bounds.united(QRectF(self._leader.p1(), self._leader.p2()).normalized())
        bounds = bounds.adjusted(-6, -6, 6, 6)
        self.setVisible(True)
        # The picture spans the circuit: an edit that changes only the label's numbers (or
        # nothing of it) repaints the label, not every part under the veil.
        if bounds != self._bounds:
            self.prepareGeometryChange()
            self._bounds = bounds
        elif before[0] is None or replace(before[0], lines=()) != replace(geometry, lines=()):
            self.update()
        elif before[0].lines != geometry.lines or before[1] != self._label_area():
            self.update(before[1].united(self._label_area()))

    def _label_area(self) -> QRectF:
        """What the label and its leader line cover (scene units), their pens included."""
        area = QRectF(self._label)
        if self._leader is not None:
            area = area.united(QRectF(self._leader.p1(), self._leader.p2()).normalized())
        return area.adjusted(-3, -3, 3, 3)

    def boundingRect(self) -> QRectF:
        return self._bounds

    def label_rect(self) -> QRectF:
        """Where the label is (scene units; empty when no picture is shown)."""
        return QRectF(self._label) if self.geometry is not None else QRectF()

    def glyph_rect(self) -> QRectF:
        """Where the test source's ring is (scene units; empty when no picture is shown)."""
        return QRectF(self._glyph) if self.geometry is not None else QRectF()

    def paint(self, painter, option, widget=None):
        if self.geometry is None:
            return
        c = self._colours
        accent = c.band(self.geometry.band)
        painter.setRenderHint(painter.RenderHint.Antialiasing)
        veil = QColor(c.paper)
        veil.setAlphaF(0.72)
        painter.setPen(Qt.PenStyle.NoPen)
        painter.setBrush(veil)
        painter.drawPath(self._fade)
        painter.setBrush(c.paper)
        for rect in self._gaps:
            painter.drawRect(rect)
        painter.setPen(QPen(c.muted, 1.5, Qt.PenStyle.DashLine))
        painter.setBrush(Qt.BrushStyle.NoBrush)
        for rect in self._gaps:
            painter.drawRect(rect)
        painter.setPen(QPen(c.ink, 5, Qt.PenStyle.SolidLine, Qt.PenCapStyle.RoundCap))
        for a, b in self._shorts:
            painter.drawLine(a, b)
        painter.setPen(QPen(accent, 2.5, Qt.PenStyle.DashLine))
        painter.drawPath(self._leads)
        painter.setPen(QPen(accent, 2.5))
        painter.setBrush(c.paper)
        painter.drawEllipse(self._glyph)
        # A current arrow inside the ring: the test source drives a current and reads the
        # voltage it makes, which is the resistance the element sees.
        ctr = self._glyph.center()
        painter.drawLine(QPointF(ctr.x(), ctr.y() + 7), QPointF(ctr.x(), ctr.y() - 6))
        head = QPainterPath(QPointF(ctr.x(), ctr.y() - 8))
        head.lineTo(ctr.x() - 4, ctr.y() - 2)
        head.lineTo(ctr.x() + 4, ctr.y() - 2)
        head.closeSubpath()
        painter.setBrush(accent)
        painter.drawPath(head)
        if self._leader is not None:
            painter.setPen(QPen(accent, 1.2))
            painter.drawLine(self._leader)
        box = QColor(c.paper)
        box.setAlphaF(0.94)
        painter.setBrush(box)
        painter.setPen(QPen(accent, 2))
        painter.drawRoundedRect(self._label, 5, 5)
        for i, (at, text, font) in enumerate(self._label_lines):
            painter.setFont(font)
            painter.setPen(accent if i == 0 else (c.ink if i == 1 else c.muted))
            painter.drawText(at, text)


def _label_fonts(n: int) -> list:
    """Fonts of the label's lines: the name, the numbers (largest), then the notes."""
    head, body, note = QFont(), QFont(), QFont()
    head.setBold(True)
    body.setBold(True)
    body.setPointSizeF(body.pointSizeF() * 1.15)
    note.setPointSizeF(note.pointSizeF() * 0.9)
    return [head, body] + [note] * max(0, n - 2)


def _line_boxes(path: QPainterPath, step: float = 8.0) -> list:
    """Small squares along the straight lines of ``path`` (the test source's leads)."""
    boxes = []
    for k in range(1, path.elementCount()):
        a, b = path.elementAt(k - 1), path.elementAt(k)
        if not b.isLineTo():
            continue
        n = max(1, int(math.hypot(b.x - a.x, b.y - a.y) // step))
        boxes += [QRectF(a.x + (b.x - a.x) * t / n - 3, a.y + (b.y - a.y) * t / n - 3, 6, 6) for t in range(n + 1)]
    return boxes


def _label_spots(glyph: QPointF, width: float, height: float, drawing: QRectF | None) -> list:
    """Where the label may go, in order of preference: beside the glyph (right of it first),
    then just outside the drawing's bounds, level with the glyph before the drawing's
    corners, the spots nearest the glyph first."""
    near = GLYPH_R + 10
    x, y, w, h = glyph.x(), glyph.y(), width, height
    beside = [QRectF(x + near, y - h / 2, w, h), QRectF(x - near - w, y - h / 2, w, h),
              QRectF(x + near, y - near - h, w, h), QRectF(x + near, y + near, w, h),
              QRectF(x - near - w, y - near - h, w, h), QRectF(x - near - w, y + near, w, h),
              QRectF(x - w / 2, y - near - h, w, h), QRectF(x - w / 2, y + near, w, h)]
    if drawing is None or drawing.isEmpty():
        return beside
    d, gap = drawing, AROUND_GAP
    # Level with the glyph (a straight leader) first, then at the drawing's corners.
    level_y, level_x = min(max(y - h / 2, d.top()), d.bottom() - h), min(max(x - w / 2, d.left()), d.right() - w)
    straight, corners = [], []
    for ys, xs, out in (((level_y,), (level_x,), straight),
                        ((d.top(), d.bottom() - h), (d.left(), d.right() - w), corners)):
        out += [QRectF(d.right() + gap, yy, w, h) for yy in ys] + [QRectF(d.left() - gap - w, yy, w, h) for yy in ys]
        out += [QRectF(xx, d.top() - gap - h, w, h) for xx in xs] + [QRectF(xx, d.bottom() + gap, w, h) for xx in xs]
        out.sort(key=lambda r: _distance(glyph, r))
    return beside + straight + corners


def _distance(p: QPointF, rect: QRectF) -> float:
    """How far ``p`` is from ``rect`` (0 inside it)."""
    dx = max(rect.left() - p.x(), 0.0, p.x() - rect.right())
    dy = max(rect.top() - p.y(), 0.0, p.y() - rect.bottom())
    return math.hypot(dx, dy)


def _seen_spots(glyph: QPointF, width: float, height: float, visible: QRectF) -> list:
    """Spots for the label on the sheet in view, a grid step apart and clear of its edges,
    nearest the glyph first."""
    inner = visible.adjusted(AROUND_GAP, AROUND_GAP, -AROUND_GAP - width, -AROUND_GAP - height)
    if inner.width() < 0 or inner.height() < 0:
        return []
    step = SEEN_STEP
    xs = [inner.left() + i * step for i in range(int(inner.width() // step) + 1)]
    ys = [inner.top() + j * step for j in range(int(inner.height() // step) + 1)]
    spots = [QRectF(x, y, width, height) for y in ys for x in xs]
    return sorted(spots, key=lambda r: _distance(glyph, r))


def _covers(rect: QRectF, blocked) -> int:
    """How many of ``blocked`` (paths or rectangles) the label at ``rect`` would touch."""
    grown = rect.adjusted(-LABEL_CLEARANCE, -LABEL_CLEARANCE, LABEL_CLEARANCE, LABEL_CLEARANCE)
    return sum(b.intersects(grown) for b in blocked)


def _rect_key(rect: QRectF | None) -> tuple | None:
    return None if rect is None else (rect.x(), rect.y(), rect.width(), rect.height())


def _place_label(glyph: QPointF, width: float, height: float, drawing: QRectF | None, blocked,
                 visible: QRectF | None = None) -> QRectF:
    """The first of :func:`_label_spots` that covers none of ``blocked`` (paths or
    rectangles), preferring one whose leader line crosses the fewest of them; failing the
    spots beside the glyph, the free spots in ``visible`` nearest the glyph come before
    those outside the drawing; if every spot covers something, the one covering the
    fewest, nearest first."""
    spots = _label_spots(glyph, width, height, drawing)

    def covers(rect: QRectF) -> int:
        return _covers(rect, blocked)

    def crossed(rect: QRectF) -> int:
        line = _leader(glyph, rect)
        if line is None or line.length() + GLYPH_R <= OWN_TEXT_REACH:
            return 0
        path = QPainterPath(line.pointAt((OWN_TEXT_REACH - GLYPH_R) / line.length()))
        path.lineTo(line.p2())
        return sum(b.intersects(box) for box in _line_boxes(path) for b in blocked)

    free = [spot for spot in spots if covers(spot) == 0]
    if visible is not None:
        # A label the user must scroll to is no help: spots in view come first, the free
        # ones of the sheet in view nearest the glyph among them (a few: the leader's
        # crossings choose).
        seen = [spot for spot in free if visible.contains(spot)]
        for spot in _seen_spots(glyph, width, height, visible):
            if len(seen) >= SEEN_CHOICES:
                break
            if covers(spot) == 0:
                seen.append(spot)
        free = seen or free
    if free:
        return min(free, key=crossed)
    return min(spots, key=lambda r: (covers(r), _distance(glyph, r)))


def _leader(glyph: QPointF, label: QRectF) -> QLineF | None:
    """A line from the glyph's ring to the nearest point of a label set far from it, else None."""
    if _distance(glyph, label) <= LEADER_AFTER:
        return None
    near = QPointF(min(max(glyph.x(), label.left()), label.right()), min(max(glyph.y(), label.top()), label.bottom()))
    line = QLineF(glyph, near)
    start = line.pointAt(GLYPH_R / line.length())
    return QLineF(start, near)


def _span_rect(a, b, half: float) -> QRectF:
    """The rectangle around the segment a–b, ``half`` wide on each side."""
    x0, x1 = sorted((a[0], b[0]))
    y0, y1 = sorted((a[1], b[1]))
    if x0 == x1:
        return QRectF(x0 - half, y0, 2 * half, y1 - y0)
    if y0 == y1:
        return QRectF(x0, y0 - half, x1 - x0, 2 * half)
    return QRectF(x0, y0, x1 - x0, y1 - y0)


def _gap_rect(a, b) -> QRectF:
    """A short cut across the middle of the segment a–b, as wide as the faded symbol."""
    m = _mid(a, b)
    if a[0] == b[0]:
        return QRectF(m[0] - FADE_HALF_WIDTH, m[1] - GAP / 2, 2 * FADE_HALF_WIDTH, GAP)
    return QRectF(m[0] - GAP / 2, m[1] - FADE_HALF_WIDTH, GAP, 2 * FADE_HALF_WIDTH)
