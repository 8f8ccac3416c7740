"""Exporting the design report from the app: HTML as written by the engine, PDF through Qt.

The engine writes the report (:mod:`bandsketch.engine.present.report`); the app adds the pictures only it can
draw (the sheet, and the plots as they look on screen) as PNG bytes.
"""

from __future__ import annotations

from PySide6.QtCore import QBuffer, QByteArray, QIODevice, QMarginsF, QRectF
from PySide6.QtGui import QImage, QPageLayout, QPageSize, QPainter, QPdfWriter, QTextDocument

from bandsketch.engine.present.report import Pictures, build_report


def png_bytes(image: QImage) -> bytes:
    """A QImage as PNG bytes."""
    data = QByteArray()
    buf = QBuffer(data)
    buf.open(QIODevice.OpenModeFlag.WriteOnly)
    image.save(buf, "PNG")
    return bytes(data)


def scene_png(scene, rect: QRectF, scale: float = 2.0) -> bytes:
    """The sheet's ``rect`` (scene units) rendered to PNG at ``scale`` pixels per unit."""
    image = QImage(int(rect.width() * scale), int(rect.height() * scale), QImage.Format.Format_ARGB32)
    image.fill(0xFFFFFFFF)
    painter = QPainter(image)
    painter.setRenderHint(QPainter.RenderHint.Antialiasing)
    scene.render(painter, QRectF(image.rect()), rect)
    painter.end()
    return png_bytes(image)


def widget_png(widget) -> bytes:
    """What ``widget`` shows now, as PNG bytes."""
    return png_bytes(widget.grab().toImage())


PDF_PICTURE_WIDTH = 600
"""Width of a picture in the PDF, in the text layout's pixels: a little under the text width of an A4 page
with 15 mm margins as Qt lays it out at screen resolution."""


def export_report(doc, path: str, pictures: Pictures | None = None, spread=None) -> None:
    """Write the report to ``path``: HTML for ``.html``/``.htm``, else PDF.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
        A snapshot of the design.
    path : str
        Where to write it.
    pictures : bandsketch.engine.present.report.Pictures, optional
        Sheet and plots as the app draws them. The PDF needs them for its plots: Qt's rich
        text engine does not draw the inline SVG the HTML falls back on.
    spread : bandsketch.engine.advise.tolerance.Spread, optional
        The spread the designer ran, reported as is.
    """
    text = build_report(doc, pictures=pictures, spread=spread)
    if path.lower().endswith((".html", ".htm")):
        with open(path, "w", encoding="utf-8") as fh:
            fh.write(text)
        return
    writer = QPdfWriter(path)
    writer.setPageSize(QPageSize(QPageSize.PageSizeId.A4))
    writer.setPageMargins(QMarginsF(15, 15, 15, 15), QPageLayout.Unit.Millimeter)
    writer.setTitle(f"{doc.title} — design report")
    document = QTextDocument()
    # Qt's rich text ignores CSS max-width, so each picture is given the text width outright
    # (its height follows in proportion); otherwise the sheet would run off the page.
    document.setHtml(text.replace("<img ", f'<img width="{PDF_PICTURE_WIDTH}" '))
    document.print_(writer)
