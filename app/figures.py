"""Figures as files: the Bode plot, the time-constant bars and the design's sheet as SVG (plain
SVG 1.1 with pixel width, height and viewBox, which browsers and librsvg draw) or as PNG at a
chosen resolution, from the window's Export menu and ``bandsketch figure`` alike.

The Bode plot and the bars are the engine's drawings (:mod:`bandsketch.engine.present.svgfigures`,
the report's own); the sheet is drawn by the scene code (:mod:`bandsketch.app.canvas.sheet_picture`).
A PNG is the SVG drawn by Qt's SVG renderer, so both files show the same picture.
"""

from __future__ import annotations

import re

from PySide6.QtCore import QByteArray, QRectF, Qt
from PySide6.QtGui import QImage, QPainter
from PySide6.QtSvg import QSvgRenderer

DEFAULT_DPI = 192
"""A PNG's resolution unless one is chosen: twice a screen's 96 dpi."""
CSS_DPI = 96


_EMPTY_PATH = re.compile(r'<path[^>]*\sd=""\s*/>')
_SCALED_GROUP = re.compile(r'(<g\b[^>]*?)\stransform="matrix\(([^)]*)\)"([^>]*>)(.*?)(</g>)', re.S)
_ELEMENT = re.compile(r"<(\w+)\b[^>]*>")
_POINTS = re.compile(r'\s(d|points)="([^"]*)"')
_FONT_FAMILY = re.compile(r'font-family="([^"]*)"')
_PAIR = re.compile(r"(-?[\d.]+(?:e[-+]?\d+)?),(-?[\d.]+(?:e[-+]?\d+)?)")


def plain_qt_svg(text: str, width: int, height: int) -> str:
    """What Qt's SVG generator wrote, with a root browsers and librsvg size alike: SVG 1.1 with
    pixel ``width`` and ``height`` and the matching viewBox (Qt writes millimetres and declares
    SVG Tiny 1.2), without the empty paths Qt writes for an empty stroke (path data an SVG
    reader must treat as an error), with curves' transforms baked into their points and a
    generic family behind Qt's font names."""
    _head, _sep, rest = text.partition("<svg")
    _tag, close, body = rest.partition(">")
    root = (f' xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" version="1.1" '
            f'width="{width}" height="{height}" viewBox="0 0 {width} {height}"')
    return "<svg" + root + close + _generic_font(_bake_non_scaling(_EMPTY_PATH.sub("", body)))


def _generic_font(body: str) -> str:
    """Qt names the font as Qt knows it ("Sans Serif"), which no browser does, so a browser fell
    back to a serif face; the CSS generic family after it keeps the text sans-serif."""
    return _FONT_FAMILY.sub(lambda m: m.group(0) if "sans-serif" in m.group(1)
                            else f'font-family="{m.group(1)}, sans-serif"', body)


def _bake_non_scaling(body: str) -> str:
    """Qt draws a plot's curve as data-space path data under a scaling group transform with
    ``vector-effect="non-scaling-stroke"`` (SVG Tiny 1.2); SVG 1.1 readers such as librsvg
    then scale the pen by the transform as well (a 2 px line 90 px wide). Where a group holds
    only such paths, its transform is applied to their points instead."""

    def bake(group):
        start, matrix, rest, inside, end = group.groups()
        elements = _ELEMENT.findall(inside)
        if inside.count("non-scaling-stroke") != len(elements) or not set(elements) <= {"path", "polyline"}:
            return group.group(0)
        a, b, c, d, e, f = (float(v) for v in matrix.replace(" ", "").split(","))

        def point(m):
            x, y = float(m.group(1)), float(m.group(2))
            return f"{a * x + c * y + e:.6g},{b * x + d * y + f:.6g}"

        def coordinates(m):
            return f' {m.group(1)}="{_PAIR.sub(point, m.group(2))}"'

        return start + rest + _POINTS.sub(coordinates, inside) + end

    return _SCALED_GROUP.sub(bake, body)


def svg_image(svg: str, width_px: int) -> QImage:
    """``svg`` drawn by Qt's SVG renderer into an image ``width_px`` wide (height in proportion),
    on white."""
    renderer = QSvgRenderer(QByteArray(svg.encode("utf-8")))
    size = renderer.defaultSize()
    height = max(1, round(width_px * size.height() / max(1, size.width())))
    image = QImage(width_px, height, QImage.Format.Format_ARGB32)
    image.fill(Qt.GlobalColor.white)
    painter = QPainter(image)
    painter.setRenderHint(QPainter.RenderHint.Antialiasing)
    renderer.render(painter, QRectF(0, 0, width_px, height))
    painter.end()
    return image


def write_picture(svg: str, path: str, dpi: float = DEFAULT_DPI, width_px: int | None = None) -> None:
    """Write ``svg`` to ``path``: as is for ``.svg``, drawn for ``.png`` at ``dpi`` (a CSS pixel
    of the SVG is 1/96 inch) or ``width_px`` pixels wide.

    Raises
    ------
    ValueError
        ``path`` ends in neither ``.svg`` nor ``.png``.
    OSError
        The file cannot be written.
    """
    lower = path.lower()
    if lower.endswith(".svg"):
        with open(path, "w", encoding="utf-8") as fh:
            fh.write('<?xml version="1.0" encoding="UTF-8"?>\n' + svg)
        return
    if not lower.endswith(".png"):
        raise ValueError(f"{path}: save the picture as FILE.svg or FILE.png")
    if width_px is None:
        width_px = max(1, round(QSvgRenderer(QByteArray(svg.encode("utf-8"))).defaultSize().width() * dpi / CSS_DPI))
    image = svg_image(svg, width_px)
    image.setDotsPerMeterX(round(dpi / 0.0254))
    image.setDotsPerMeterY(round(dpi / 0.0254))
    if not image.save(path, "PNG"):
        raise OSError(0, "could not be written", path)


def figure_svg(doc, what: str) -> str:
    """The figure ``what`` (one of :data:`bandsketch.app.cli.FIGURES`) of the design ``doc`` as SVG text."""
    if what == "sheet":
        from .canvas.sheet_picture import sheet_svg

        return sheet_svg(doc)
    from bandsketch.engine import analyze
    from bandsketch.engine.design.netlist import design_to_circuit
    from bandsketch.engine.present.plotdata import bar_data, bode_data
    from bandsketch.engine.present.stepdata import step_data
    from bandsketch.engine.present.svgfigures import bars_svg, bode_svg, step_svg

    analysis = analyze(design_to_circuit(doc), bands=dict(doc.band_pins))
    if what == "step":
        return step_svg(step_data(analysis.step_response()))
    return bode_svg(bode_data(analysis)) if what == "bode" else bars_svg(bar_data(analysis))
