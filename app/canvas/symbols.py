"""Schematic symbols drawn as painter paths in each part's own frame.

Shapes follow the IEEE 315 / IEC 60617 conventions; every lead ends exactly on the pin
position the catalogue gives (:mod:`bandsketch.engine.design.parts`), so what is drawn and what connects agree.
Paths are built once per change of a part, never while painting.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from enum import Enum
from typing import Mapping

from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QPainterPath, QTransform

from bandsketch.engine.design.parts import GRID, KINDS, transform_point


class ResistorStyle(Enum):
    """How a resistor is drawn: the zig-zag or the rectangular box."""

    ZIGZAG = "zigzag"
    BOX = "box"


@dataclass(frozen=True)
class Symbol:
    """A symbol's outline: ``lines`` stroked, ``solid`` filled, ``heavy`` stroked thick.

    ``body`` bounds the symbol without its leads, for placing labels beside it. ``signs``
    are polarity marks (x, y, "+" or "-", half-size): they move with the symbol but stay
    upright, since a minus turned a quarter would read as a bar.
    """

    lines: QPainterPath
    solid: QPainterPath
    heavy: QPainterPath
    body: QRectF
    signs: tuple = ()

    def mapped(self, t: QTransform) -> "Symbol":
        """The symbol in another frame (the sheet's axes after mirror and rotation), signs drawn in."""
        lines = t.map(self.lines)
        for x, y, sign, size in self.signs:
            c = t.map(QPointF(x, y))
            lines.moveTo(c.x() - size, c.y())
            lines.lineTo(c.x() + size, c.y())
            if sign == "+":
                lines.moveTo(c.x(), c.y() - size)
                lines.lineTo(c.x(), c.y() + size)
        return Symbol(lines, t.map(self.solid), t.map(self.heavy), t.mapRect(self.body))


def frame_transform(rotation: int, mirror: bool) -> QTransform:
    """The linear map a part's own frame goes through, built from the catalogue's own rule."""
    ax, ay = transform_point(1, 0, rotation, mirror)
    bx, by = transform_point(0, 1, rotation, mirror)
    return QTransform(ax, ay, bx, by, 0, 0)


class _Pen:
    """Collects the three paths of a symbol while it is being drawn."""

    def __init__(self):
        self.lines = QPainterPath()
        self.solid = QPainterPath()
        self.heavy = QPainterPath()
        self.signs = []

    def line(self, *pts):
        self.lines.moveTo(*pts[0])
        for p in pts[1:]:
            self.lines.lineTo(*p)

    def bar(self, *pts):
        self.heavy.moveTo(*pts[0])
        for p in pts[1:]:
            self.heavy.lineTo(*p)

    def circle(self, cx, cy, r):
        self.lines.addEllipse(QPointF(cx, cy), r, r)

    def arrow(self, tail, tip, head=7.0, width=3.5, shaft=True):
        """A line from ``tail`` to ``tip`` with a filled head at ``tip``."""
        (x0, y0), (x1, y1) = tail, tip
        length = math.hypot(x1 - x0, y1 - y0)
        ux, uy = (x1 - x0) / length, (y1 - y0) / length
        bx, by = x1 - ux * head, y1 - uy * head
        if shaft:
            self.line(tail, (bx, by))
        head_path = QPainterPath(QPointF(x1, y1))
        head_path.lineTo(bx - uy * width, by + ux * width)
        head_path.lineTo(bx + uy * width, by - ux * width)
        head_path.closeSubpath()
        self.solid.addPath(head_path)

    def plus(self, cx, cy, s=4.0):
        self.signs.append((cx, cy, "+", s))

    def minus(self, cx, cy, s=4.0):
        self.signs.append((cx, cy, "-", s))

    def done(self, body: QRectF) -> Symbol:
        return Symbol(self.lines, self.solid, self.heavy, body, tuple(self.signs))


G = GRID


@dataclass(frozen=True)
class Look:
    """What a drawing may depend on: the part's field texts, the resistor style, the width
    of a name it writes (scene units)."""

    params: Mapping
    style: ResistorStyle
    text_width: float = 0.0


SYMBOLS: dict = {}
"""Symbol drawings by the catalogue's ``symbol`` key: ``draw(pen, look)`` draws into the pen
and returns the body's bounds (without leads)."""


def _draws(key: str):
    def register(draw):
        SYMBOLS[key] = draw
        return draw
    return register


@_draws("resistor")
def _resistor(p: _Pen, look: Look):
    p.line((0, -2 * G), (0, -G))
    p.line((0, G), (0, 2 * G))
    if look.style is ResistorStyle.BOX:
        p.lines.addRect(QRectF(-6, -G, 12, 2 * G))
    else:
        zig = [(0, -G)]
        for i in range(6):
            zig.append(((7 if i % 2 == 0 else -7), -G + (2 * i + 1) * G / 6))
        zig.append((0, G))
        p.line(*zig)
    return QRectF(-8, -G, 16, 2 * G)


@_draws("capacitor")
def _capacitor(p: _Pen, look: Look):
    p.line((0, -2 * G), (0, -4))
    p.line((0, 4), (0, 2 * G))
    p.bar((-12, -4), (12, -4))
    p.bar((-12, 4), (12, 4))
    return QRectF(-12, -6, 24, 12)


@_draws("inductor")
def _inductor(p: _Pen, look: Look):
    p.line((0, -2 * G), (0, -G))
    p.line((0, G), (0, 2 * G))
    p.lines.moveTo(0, -G)
    for i in range(4):
        p.lines.arcTo(QRectF(-5, -G + i * 10, 10, 10), 90, -180)
    return QRectF(-2, -G, 8, 2 * G)


def _source_ring(p: _Pen, cx=0.0, r=16.0):
    p.line((cx, -2 * G), (cx, -r))
    p.line((cx, r), (cx, 2 * G))
    p.circle(cx, 0, r)
    return QRectF(cx - r, -r, 2 * r, 2 * r)


@_draws("vsource")
def _vsource(p: _Pen, look: Look):
    body = _source_ring(p)
    p.plus(0, -7)
    p.minus(0, 8)
    return body


@_draws("isource")
def _isource(p: _Pen, look: Look):
    body = _source_ring(p)
    # The source pushes current out of its top pin ("into" the net there).
    p.arrow((0, 10), (0, -10))
    return body


def _diamond(p: _Pen, cx: float, r=16.0):
    p.line((cx, -2 * G), (cx, -r))
    p.line((cx, r), (cx, 2 * G))
    p.line((cx, -r), (cx + r, 0), (cx, r), (cx - r, 0), (cx, -r))
    return QRectF(cx - r, -r, 2 * r, 2 * r)


def _control_port(p: _Pen):
    """The sensing terminals of a voltage-controlled source: two short leads marked + and −."""
    p.line((-2 * G, -G), (-G - 4, -G))
    p.line((-2 * G, G), (-G - 4, G))
    p.plus(-G - 12, -G + 9, 3)
    p.minus(-G - 12, G - 9, 3)


@_draws("vccs")
def _vccs(p: _Pen, look: Look):
    _control_port(p)
    body = _diamond(p, G)
    p.arrow((G, -9), (G, 9))
    return body.united(QRectF(-2 * G, -G, G, 2 * G))


@_draws("vcvs")
def _vcvs(p: _Pen, look: Look):
    _control_port(p)
    body = _diamond(p, G)
    p.plus(G, -6, 3.5)
    p.minus(G, 7, 3.5)
    return body.united(QRectF(-2 * G, -G, G, 2 * G))


@_draws("cccs")
def _cccs(p: _Pen, look: Look):
    body = _diamond(p, 0)
    p.arrow((0, -9), (0, 9))
    return body


@_draws("ccvs")
def _ccvs(p: _Pen, look: Look):
    body = _diamond(p, 0)
    p.plus(0, -6, 3.5)
    p.minus(0, 7, 3.5)
    return body


@_draws("bjt")
def _bjt(p: _Pen, look: Look):
    pnp = look.params.get("polarity") == "pnp"
    p.circle(4, 0, 22)
    p.line((-2 * G, 0), (-8, 0))
    p.bar((-8, -13), (-8, 13))
    p.line((-8, -6), (G, -20), (G, -2 * G))
    p.line((-8, 6), (G, 20), (G, 2 * G))

    # The emitter arrow sits on the slanted emitter lead: out of the base for npn, into it for pnp.
    def along(t):
        return (-8 + t * (G + 8), 6 + t * 14)

    if pnp:
        p.arrow(along(0.7), along(0.3), shaft=False)
    else:
        p.arrow(along(0.3), along(0.8), shaft=False)
    return QRectF(-18, -22, 44, 44)


@_draws("mosfet")
def _mosfet(p: _Pen, look: Look):
    pmos = look.params.get("polarity") == "p"
    p.line((-2 * G, 0), (-14, 0))
    p.bar((-14, -14), (-14, 14))
    for y0, y1 in ((-17, -9), (-4, 4), (9, 17)):
        p.bar((-7, y0), (-7, y1))
    p.line((-7, -13), (G, -13), (G, -2 * G))
    p.line((-7, 13), (G, 13), (G, 2 * G))
    p.line((G, 0), (G, 13))
    if pmos:
        p.line((-7, 0), (G, 0))
        p.arrow((2, 0), (G - 2, 0), shaft=False)
    else:
        p.line((-7, 0), (G, 0))
        p.arrow((G - 4, 0), (-6, 0), shaft=False)
    return QRectF(-16, -18, 38, 36)


@_draws("opamp")
def _opamp(p: _Pen, look: Look):
    p.line((-2 * G, -G), (-24, -G))
    p.line((-2 * G, G), (-24, G))
    p.line((26, 0), (2 * G, 0))
    p.line((-24, -30), (26, 0), (-24, 30), (-24, -30))
    p.minus(-16, -G, 3.5)
    p.plus(-16, G, 3.5)
    return QRectF(-24, -30, 50, 60)


@_draws("ground")
def _ground(p: _Pen, look: Look):
    p.line((0, 0), (0, 8))
    p.line((-12, 8), (12, 8))
    p.line((-7, 13), (7, 13))
    p.line((-2.5, 18), (2.5, 18))
    return QRectF(-12, 6, 24, 14)


@_draws("rail")
def _rail(p: _Pen, look: Look):
    """A supply rail: a lead up from the pin to a bar (IEEE 315 / IEC 60617 style); its name
    and voltage are written beside it."""
    p.line((0, 0), (0, -14))
    p.bar((-11, -14), (11, -14))
    return QRectF(-11, -16, 22, 4)


@_draws("output")
def _output(p: _Pen, look: Look):
    p.line((0, 0), (12, 0))
    p.circle(16, 0, 4)
    return QRectF(12, -4, 8, 8)


@_draws("label")
def _label(p: _Pen, look: Look):
    """A tag pointing at its pin, wide enough for the net name."""
    w = look.text_width + 12
    p.line((0, 0), (7, -8), (7 + w, -8), (7 + w, 8), (7, 8), (0, 0))
    return QRectF(0, -8, 7 + w, 16)


def build_symbol(kind: str, params, style: ResistorStyle, text_width: float = 0.0) -> Symbol:
    """The symbol of a part in its own frame (pins where :data:`bandsketch.engine.design.parts.KINDS` puts them).

    Parameters
    ----------
    kind : str
        Part kind key.
    params : Mapping[str, str]
        The part's field texts (polarity picks the transistor arrow).
    style : ResistorStyle
        Resistor drawing preference.
    text_width : float
        Width of the net name (scene units), for a part that writes its name (a net label).
    """
    p = _Pen()
    body = SYMBOLS[KINDS[kind].symbol](p, Look(params, style, text_width))
    return p.done(body)
