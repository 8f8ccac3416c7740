"""The design's sheet as a picture, drawn offscreen by the window's own scene code: for the
report and the exported schematic, from the window or the command line alike.

A scene of its own is made from the document, in the light colours, so the picture is always
the design as drawn: never the window's selection, hover, zoom or a capacitor's test picture.
"""

from __future__ import annotations

from PySide6.QtCore import QBuffer, QByteArray, QIODevice, QRectF, QSize, Qt
from PySide6.QtGui import QImage, QPainter
from PySide6.QtSvg import QSvgGenerator
from PySide6.QtWidgets import QGraphicsItem

from bandsketch.engine.design.document import Document
from bandsketch.engine.design.parts import GRID

from ..engine_link import SheetReading
from ..figures import plain_qt_svg
from ..theme import LIGHT
from .scene import SchematicScene
from .symbols import ResistorStyle

MARGIN = 2 * GRID
"""Paper left around the drawing, scene units."""
CSS_DPI = 96
"""A scene unit is a CSS pixel: 96 to the inch."""


def _scene(doc: Document, style: ResistorStyle | None):
    if style is None:
        from ..preferences import resistor_style

        style = resistor_style()
    scene = SchematicScene(doc, LIGHT, style, SheetReading(doc))
    scene.grid_shown = False
    # A part kept as a picture on screen would reach an SVG as an embedded image.
    for item in scene.items():
        item.setCacheMode(QGraphicsItem.CacheMode.NoCache)
    rect = scene.content_rect()
    if rect.isEmpty():
        rect = QRectF(0, 0, 10 * GRID, 5 * GRID)
    return scene, rect.adjusted(-MARGIN, -MARGIN, MARGIN, MARGIN)


def _paint(scene, rect: QRectF, device, target: QRectF) -> None:
    painter = QPainter(device)
    painter.setRenderHint(QPainter.RenderHint.Antialiasing)
    painter.setRenderHint(QPainter.RenderHint.TextAntialiasing)
    painter.fillRect(target, LIGHT.paper)
    scene.render(painter, target, rect, Qt.AspectRatioMode.KeepAspectRatio)
    painter.end()


def sheet_svg(doc: Document, style: ResistorStyle | None = None) -> str:
    """The sheet of ``doc`` as SVG text (width, height and viewBox in CSS pixels).

    ``style`` is how resistors are drawn (default: the user's preference).
    """
    scene, rect = _scene(doc, style)
    data = QByteArray()
    buf = QBuffer(data)
    buf.open(QIODevice.OpenModeFlag.WriteOnly)
    gen = QSvgGenerator()
    gen.setOutputDevice(buf)
    size = QSize(round(rect.width()), round(rect.height()))
    gen.setSize(size)
    gen.setResolution(CSS_DPI)
    gen.setViewBox(QRectF(0, 0, size.width(), size.height()))
    gen.setTitle(doc.title or "Schematic")
    gen.setDescription("The design's sheet, drawn by Bandsketch")
    _paint(scene, rect, gen, QRectF(0, 0, size.width(), size.height()))
    buf.close()
    return plain_qt_svg(bytes(data).decode("utf-8"), size.width(), size.height())


def sheet_image(doc: Document, dpi: float = 300, style: ResistorStyle | None = None) -> QImage:
    """The sheet of ``doc`` as an image at ``dpi`` (a scene unit is 1/96 inch)."""
    scene, rect = _scene(doc, style)
    scale = dpi / CSS_DPI
    image = QImage(max(1, round(rect.width() * scale)), max(1, round(rect.height() * scale)),
                   QImage.Format.Format_ARGB32)
    image.setDotsPerMeterX(round(dpi / 0.0254))
    image.setDotsPerMeterY(round(dpi / 0.0254))
    _paint(scene, rect, image, QRectF(image.rect()))
    return image
