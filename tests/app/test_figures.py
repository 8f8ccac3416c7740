"""Pictures as files: the Bode plot, the bars and the sheet as SVG a browser and librsvg draw
(checked with Python's XML parser for what a renderer needs: the SVG namespace, version 1.1,
pixel width and height with a matching viewBox, SVG 1.1 elements only, no empty path data) and
as PNG at a chosen resolution or width; from ``bandsketch figure`` and from the window alike.
Where the system has them, GNOME's librsvg and cairo draw each SVG, the step view's too
(tests/app/librsvg.py)."""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from PySide6.QtGui import QColor, QImage, QPainter
from PySide6.QtSvg import QSvgRenderer

from bandsketch.app.cli import main
from bandsketch.app.canvas.items import PartItem
from bandsketch.app.canvas.sheet_picture import sheet_svg
from bandsketch.engine.design.designfile import load_design
import librsvg

SAMPLES = Path(__file__).resolve().parents[2] / "sample_designs"
SVG = "{http://www.w3.org/2000/svg}"
SVG11_ELEMENTS = {"svg", "g", "defs", "title", "desc", "path", "rect", "circle", "ellipse", "line", "polyline",
                  "polygon", "text", "tspan", "image", "clipPath", "use"}


def check_svg(path: Path) -> tuple[float, float]:
    """The SVG at ``path`` is one a browser and librsvg draw; returns its (width, height), px."""
    root = ET.parse(path).getroot()
    assert root.tag == f"{SVG}svg" and root.get("version") == "1.1" and root.get("baseProfile") is None
    width, height = root.get("width"), root.get("height")
    assert float(width) > 0 and float(height) > 0, "pixel sizes, no units a renderer must guess"
    assert root.get("viewBox") == f"0 0 {width} {height}"
    used = {el.tag.replace(SVG, "") for el in root.iter()}
    assert used <= SVG11_ELEMENTS, used - SVG11_ELEMENTS
    assert all(el.get("d") for el in root.iter(f"{SVG}path"))
    return float(width), float(height)


@pytest.mark.parametrize("what", ["bode", "bars", "step", "sheet"])
def test_the_command_writes_each_figure_as_svg_and_png_at_the_chosen_dpi(what, tmp_path, capsys, qapp):
    svg, png, wide = tmp_path / f"{what}.svg", tmp_path / f"{what}.png", tmp_path / f"{what}-wide.png"
    assert main(["figure", "--sample", "ce_hydrophone_preamp", "--what", what, "-o", str(svg)]) == 0
    width, height = check_svg(svg)
    assert main(["figure", "--sample", "ce_hydrophone_preamp", "--what", what, "-o", str(png), "--dpi", "300"]) == 0
    image = QImage(str(png))
    assert image.width() == round(width * 300 / 96)  # a CSS pixel is 1/96 inch (CSS Values 3)
    assert abs(image.height() - height * 300 / 96) <= 1
    assert round(image.dotsPerMeterX() * 0.0254) == 300
    assert main(["figure", "--sample", "ce_hydrophone_preamp", "--what", what, "-o", str(wide), "--width", "1000"]) == 0
    assert QImage(str(wide)).width() == 1000


@pytest.mark.skipif(librsvg.LIBRARIES is None, reason="librsvg and cairo are not installed")
@pytest.mark.parametrize("what", ["bode", "bars", "step", "sheet"])
def test_librsvg_draws_each_figure_as_qt_does(what, tmp_path, capsys, qapp):
    # The renderer itself (GNOME librsvg, through cairo), beside Qt's own PNG of the same figure:
    # same size, and ink where Qt put ink (fonts differ, so pixels are compared in 8 px cells).
    svg, png = tmp_path / f"{what}.svg", tmp_path / f"{what}.png"
    assert main(["figure", "--sample", "ce_hydrophone_preamp", "--what", what, "-o", str(svg)]) == 0
    assert main(["figure", "--sample", "ce_hydrophone_preamp", "--what", what, "-o", str(png), "--dpi", "96"]) == 0
    _same_ink(QImage(str(png)), librsvg.draw(svg.read_bytes(), str(tmp_path / "rsvg.png")))


def _same_ink(expected: QImage, drawn: QImage) -> None:
    assert (drawn.width(), drawn.height()) == (expected.width(), expected.height())

    def inked_cells(image: QImage) -> set:
        background = image.pixelColor(2, 2).lightness()
        return {(x // 8, y // 8) for y in range(0, image.height(), 2) for x in range(0, image.width(), 2)
                if abs(image.pixelColor(x, y).lightness() - background) > 60}

    ours, theirs = inked_cells(expected), inked_cells(drawn)
    assert len(ours) > 50
    assert len(ours & theirs) >= 0.8 * len(ours) and len(theirs - ours) <= 0.2 * len(theirs)


@pytest.mark.skipif(librsvg.LIBRARIES is None, reason="librsvg and cairo are not installed")
def test_librsvg_draws_the_step_views_svg_as_qt_does(window, tmp_path):
    # Qt writes a plot's curves in data units under a scaling transform with a non-scaling
    # pen (SVG Tiny 1.2), which an SVG 1.1 reader would draw 90 px wide; the export bakes the
    # transform into the points, so librsvg and Qt's own renderer draw the same picture.
    window.resize(1400, 1000)
    assert window.open_sample("follower_cable_driver")
    panel = window.analysis_panel
    panel.runner.wait()
    panel.plots.setCurrentWidget(panel.time)
    svg = tmp_path / "step.svg"
    panel.export(str(svg))
    check_svg(svg)
    renderer = QSvgRenderer(str(svg))
    qt_drawn = QImage(renderer.defaultSize(), QImage.Format.Format_ARGB32)
    qt_drawn.fill(QColor("white"))
    painter = QPainter(qt_drawn)
    renderer.render(painter)
    painter.end()
    drawn = librsvg.draw(svg.read_bytes(), str(tmp_path / "rsvg.png"))
    on_white = QImage(drawn.size(), QImage.Format.Format_ARGB32)  # the plot's margin is transparent
    on_white.fill(QColor("white"))
    painter = QPainter(on_white)
    painter.drawImage(0, 0, drawn)
    painter.end()
    _same_ink(qt_drawn, on_white)


def test_a_figure_must_be_svg_or_png(tmp_path, capsys):
    with pytest.raises(SystemExit) as refused:
        main(["figure", "--sample", "ce_hydrophone_preamp", "--what", "bode", "-o", str(tmp_path / "x.jpg")])
    assert refused.value.code == 2
    assert "FILE.svg" in capsys.readouterr().err and not (tmp_path / "x.jpg").exists()


def test_the_window_exports_the_same_drawings(window, tmp_path):
    path = SAMPLES / "ce_hydrophone_preamp.json"
    window.set_document(load_design(path), str(path))
    panel = window.analysis_panel
    panel.runner.wait()
    panel.export(str(tmp_path / "bode.svg"))
    check_svg(tmp_path / "bode.svg")
    panel.export_figure("bars", str(tmp_path / "bars.svg"))
    check_svg(tmp_path / "bars.svg")
    # The sheet as drawn, whatever the window has selected or shows on it.
    assert not panel.select_element("Cin")
    panel.export_figure("sheet", str(tmp_path / "sheet.svg"))
    check_svg(tmp_path / "sheet.svg")
    assert (tmp_path / "sheet.svg").read_text(encoding="utf-8").endswith(sheet_svg(window.doc))
    panel.export(str(tmp_path / "bode.png"))
    assert QImage(str(tmp_path / "bode.png")).width() > 1000


def test_the_step_view_exports_plain_svg_too(window, tmp_path):
    path = SAMPLES / "ce_hydrophone_preamp.json"
    window.set_document(load_design(path), str(path))
    panel = window.analysis_panel
    panel.runner.wait()
    panel.plots.setCurrentWidget(panel.time)
    panel.export(str(tmp_path / "step.svg"))
    check_svg(tmp_path / "step.svg")
    text = (tmp_path / "step.svg").read_text(encoding="utf-8")
    # Drawn as lines and text: no axis or marker pasted in as a bitmap, and no NaN coordinates.
    assert "<image" not in text and not re.search(r"[\s,\"(]nan[\s,\")]", text, re.I)


def test_the_sheet_exports_as_lines_and_text_though_the_window_caches_its_parts(window):
    path = SAMPLES / "two_stage_miller.json"
    window.set_document(load_design(path), str(path))
    assert all(item.cacheMode() != item.CacheMode.NoCache for item in window.scene.items()
               if isinstance(item, PartItem))
    # A cached item reaches Qt's SVG writer as an embedded bitmap (DEVELOPERS.md, known traps).
    assert "<image" not in sheet_svg(window.doc)
