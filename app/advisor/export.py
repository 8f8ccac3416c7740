"""Writing the design report, from the window and from the command line alike: the engine's one
builder (:mod:`bandsketch.engine.present.report`) fed with the sheet drawn offscreen by the
scene code; HTML as the builder writes it, PDF through Qt.

In the PDF every picture is an image at :data:`REPORT_DPI` (Qt's rich text draws no SVG), laid
out at its printed width on A4, and no heading is left at the foot of a page without what
follows it.
"""

from __future__ import annotations

import errno

from PySide6.QtCore import QMarginsF, QRectF, QSizeF, Qt, QUrl
from PySide6.QtGui import (QFont, QImage, QPageLayout, QPageSize, QPainter, QPdfWriter, QTextBlockFormat,
                           QTextCursor, QTextDocument, QTextFormat, QTextTable)

from bandsketch.engine.core.versions import version_line
from bandsketch.engine.present.report import SPREAD_SAMPLES, DesignSource, ReportFigure, build_report

from ..canvas.sheet_picture import sheet_svg
from ..figures import svg_image

REPORT_DPI = 300
"""Resolution of the PDF's pictures, dots per inch."""
MARGIN_MM = 15
"""Page margins of the PDF, mm."""
FOOTER_MM = 7
"""Room kept at the foot of each page for its footer line, mm."""
FOOTER_PT = 7
"""Size of the footer's text, points."""
_LAYOUT_DPI = 96  # the text layout's pixels: a CSS pixel, as the pictures are sized
_MM = _LAYOUT_DPI / 25.4
REPORT_SUFFIXES = {".html": "HTML", ".htm": "HTML", ".pdf": "PDF"}
"""What a report file's name may end in, and what each writes."""


def export_report(doc, path: str, *, source: DesignSource | None = None, spread=None,
                  samples: int = SPREAD_SAMPLES, seed: int = 1, progress=None) -> None:
    """Write the report of ``doc`` to ``path``: HTML for ``.html``/``.htm``, PDF for ``.pdf``.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
        A snapshot of the design.
    path : str
        Where to write it.
    source : bandsketch.engine.present.report.DesignSource, optional
        The design file's name and hash.
    spread : bandsketch.engine.advise.tolerance.Spread, optional
        The spread the designer ran, reported as is; otherwise one of ``samples`` with ``seed``.
    progress : callable, optional
        ``progress(stage)`` gives the ``progress(done, total)`` callback of each stage of the
        work (see :func:`bandsketch.engine.present.report.build_report`).

    Raises
    ------
    ValueError
        ``path`` ends in none of :data:`REPORT_SUFFIXES`.
    """
    kind = next((k for s, k in REPORT_SUFFIXES.items() if path.lower().endswith(s)), None)
    if kind is None:
        raise ValueError(f"{path}: name the report FILE.html (HTML) or FILE.pdf (PDF)")
    options = dict(schematic_svg=sheet_svg(doc), source=source, spread=spread, samples=samples, seed=seed,
                   progress=progress)
    if kind == "HTML":
        text = build_report(doc, **options)
        with open(path, "w", encoding="utf-8") as fh:
            fh.write(text)
        return
    _write_pdf(doc, path, options)


def report_document(doc, options: dict) -> QTextDocument:
    """The report laid out on A4 pages for print: its pictures as images at :data:`REPORT_DPI`."""
    images: dict[str, QImage] = {}

    def as_image(figure: ReportFigure) -> str:
        name = f"bandsketch-figure:{figure.key}"
        image = svg_image(figure.svg, round(figure.width_mm / 25.4 * REPORT_DPI))
        images[name] = image
        width = figure.width_mm * _MM
        # A line's height is a share of its tallest item: the picture's line keeps it at 100 %.
        return (f'<p align="center" style="line-height:100%"><img src="{name}" width="{width:.0f}" '
                f'height="{width * image.height() / image.width():.0f}"></p>')

    text = build_report(doc, figure_html=as_image, **options)
    document = QTextDocument()
    document.setDocumentMargin(0)
    document.setDefaultFont(QFont("DejaVu Sans", 9))
    for name, image in images.items():
        document.addResource(QTextDocument.ResourceType.ImageResource.value, QUrl(name), image)
    document.setHtml(text)
    page = QPageSize(QPageSize.PageSizeId.A4).size(QPageSize.Unit.Millimeter)
    document.setPageSize(QSizeF((page.width() - 2 * MARGIN_MM) * _MM,
                                (page.height() - 2 * MARGIN_MM - FOOTER_MM) * _MM))
    _repeat_table_heads(document)
    _keep_headings_with_content(document)
    return document


def _repeat_table_heads(document: QTextDocument) -> None:
    """A table that runs onto another page repeats its head row there."""
    for frame in document.rootFrame().childFrames():
        if isinstance(frame, QTextTable):
            fmt = frame.format()
            fmt.setHeaderRowCount(1)
            frame.setFormat(fmt)


def _top(document: QTextDocument, block) -> float:
    """Where the first line of ``block`` is laid out, in the document's coordinates (a line
    that does not fit at a page's foot is moved to the next page; the block's own top is not).
    Inside a table: the first line of its first cell."""
    table = QTextCursor(block).currentTable()
    if table is not None:
        block = table.cellAt(0, 0).firstCursorPosition().block()
    rect = document.documentLayout().blockBoundingRect(block)
    lines = block.layout()
    return rect.top() + (lines.lineAt(0).y() if lines.lineCount() else 0.0)


def _page(document: QTextDocument, block, height: float) -> int:
    # Half a pixel of slack: a line moved to a page's top lands there within rounding.
    return int((_top(document, block) + 0.5) // height)


def _keep_headings_with_content(document: QTextDocument) -> None:
    """Start a heading on a new page when what follows it would begin on the next one."""
    height = document.pageSize().height()
    moved = set()
    changed = True
    while changed:
        changed = False
        block = document.begin()
        while block.isValid():
            after = block.next()
            if (block.blockFormat().headingLevel() and after.isValid() and block.blockNumber() not in moved
                    and _page(document, after, height) > _page(document, block, height)):
                fmt = QTextBlockFormat()
                fmt.setPageBreakPolicy(QTextFormat.PageBreakFlag.PageBreak_AlwaysBefore)
                QTextCursor(block).mergeBlockFormat(fmt)
                # Lay the whole document out again: the change alone relays only its block.
                document.markContentsDirty(0, document.characterCount())
                moved.add(block.blockNumber())
                changed = True
                break
            block = after


def paint_page(painter: QPainter, document: QTextDocument, page: int, scale: float, footer: str) -> None:
    """Page ``page`` (from 0) of ``document`` and its footer, at ``scale`` device pixels per layout pixel."""
    size = document.pageSize()
    painter.save()
    painter.scale(scale, scale)
    painter.translate(0, -page * size.height())
    document.drawContents(painter, QRectF(0, page * size.height(), size.width(), size.height()))
    painter.restore()
    painter.save()
    painter.scale(scale, scale)
    # In layout pixels: a point size would be resolved at the writer's own resolution and
    # then scaled again, printing the footer six times too large over itself.
    font = QFont("DejaVu Sans")
    font.setPixelSize(round(FOOTER_PT * _LAYOUT_DPI / 72))
    painter.setFont(font)
    painter.setPen(Qt.GlobalColor.darkGray)
    painter.drawText(QRectF(0, size.height() + 2 * _MM, size.width(), (FOOTER_MM - 2) * _MM),
                     Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignBottom, footer)
    painter.drawText(QRectF(0, size.height() + 2 * _MM, size.width(), (FOOTER_MM - 2) * _MM),
                     Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignBottom,
                     f"page {page + 1} of {document.pageCount()}")
    painter.restore()


def _write_pdf(doc, path: str, options: dict) -> None:
    document = report_document(doc, options)
    writer = QPdfWriter(path)
    writer.setPageSize(QPageSize(QPageSize.PageSizeId.A4))
    writer.setPageMargins(QMarginsF(MARGIN_MM, MARGIN_MM, MARGIN_MM, MARGIN_MM), QPageLayout.Unit.Millimeter)
    writer.setResolution(REPORT_DPI * 2)
    title = f"{doc.title or 'Untitled design'} — design report"
    writer.setTitle(title)
    writer.setCreator(version_line())
    painter = QPainter(writer)
    if not painter.isActive():
        raise OSError(errno.EIO, "Qt could not open it for writing", path)
    scale = writer.width() / document.pageSize().width()
    for page in range(document.pageCount()):
        if page:
            writer.newPage()
        paint_page(painter, document, page, scale, title)
    painter.end()
