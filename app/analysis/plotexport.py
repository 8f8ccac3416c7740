"""Saving a plot canvas as a picture: one way for the Bode plot and the time view alike."""

from __future__ import annotations

import pyqtgraph as pg
import pyqtgraph.exporters  # noqa: F401  (registers pg.exporters)
from PySide6.QtCore import QBuffer, QByteArray, QIODevice, QRectF, QSize
from PySide6.QtGui import QPainter
from PySide6.QtSvg import QSvgGenerator
from PySide6.QtWidgets import QGraphicsItem

from ..figures import plain_qt_svg, write_picture


def export_canvas(canvas: pg.GraphicsLayoutWidget, path: str, title: str) -> None:
    """Save every plot on ``canvas`` as PNG or SVG, chosen by the file's suffix.

    Raises
    ------
    ValueError
        The suffix is neither ``.png`` nor ``.svg``.
    """
    suffix = path.lower().rsplit(".", 1)[-1]
    if suffix == "png":
        pg.exporters.ImageExporter(canvas.ci).export(path)
    elif suffix == "svg":
        # Qt's own SVG writer: pyqtgraph's SVG exporter cannot parse the path data that
        # Qt 6.12 writes, and fails on every plot with a curve.
        scene = canvas.scene()
        rect = canvas.ci.sceneBoundingRect()
        width, height = round(rect.width()), round(rect.height())
        data = QByteArray()
        buf = QBuffer(data)
        buf.open(QIODevice.OpenModeFlag.WriteOnly)
        svg = QSvgGenerator()
        svg.setOutputDevice(buf)
        svg.setSize(QSize(width, height))
        svg.setViewBox(QRectF(0, 0, width, height))
        svg.setTitle(title)
        painter = QPainter(svg)
        _render_as_drawing(scene, painter, QRectF(0, 0, width, height), rect)
        painter.end()
        buf.close()
        # Plain SVG 1.1, as every exported picture is, so browsers and librsvg draw it.
        write_picture(plain_qt_svg(bytes(data).decode("utf-8"), width, height), path)
    else:
        raise ValueError(f"{path}: save the plot as .png or .svg")


def _render_as_drawing(scene, painter: QPainter, target: QRectF, source: QRectF) -> None:
    """Render ``scene`` with every item drawing itself: an axis kept as a cached picture
    (:func:`style.gridded`) or a marker stamped from pyqtgraph's symbol atlas would otherwise
    reach the SVG as embedded PNGs instead of lines and text."""
    items = scene.items()
    cached = [(item, item.cacheMode()) for item in items if item.cacheMode() != QGraphicsItem.CacheMode.NoCache]
    exporting = [item for item in items if hasattr(item, "setExportMode")]
    for item, _ in cached:
        item.setCacheMode(QGraphicsItem.CacheMode.NoCache)
    for item in exporting:
        item.setExportMode(True, {"antialias": True, "painter": painter})
    try:
        scene.render(painter, target, source)
    finally:
        for item in exporting:
            item.setExportMode(False)
        for item, mode in cached:
            item.setCacheMode(mode)
