"""One report, however it is made: the window's report button and ``bandsketch report`` write the
same document, with the design's sheet (never the window's selection), vector plots in the HTML,
pictures of at least 300 dpi in the PDF, headings kept with what follows them, and a one-stage
design on three A4 pages.

Sources: pypdf reads the PDF (pages, text, the images' pixel sizes); Python's XML parser reads the
SVG; hashlib gives the SHA-256 a reader would check with sha256sum. Three pages for one stage and
300 dpi are the issue's own figures (common practice for print, no source).
"""

from __future__ import annotations

import hashlib
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pypdf
import pytest

from bandsketch.app.advisor import export
from bandsketch.app.cli import main
from bandsketch.engine.design.designfile import load_design
from bandsketch.engine.design.samples import load_sample

SAMPLES = Path(__file__).resolve().parents[2] / "sample_designs"
CE = SAMPLES / "ce_hydrophone_preamp.json"
SVG = "{http://www.w3.org/2000/svg}"
SVG11_ELEMENTS = {"svg", "g", "defs", "title", "desc", "path", "rect", "circle", "ellipse", "line", "polyline",
                  "polygon", "text", "tspan", "image", "clipPath", "use"}


def _inline_svgs(html: str) -> list[str]:
    return re.findall(r"<svg\b.*?</svg>", html, flags=re.S)


def test_the_window_and_the_command_line_write_the_same_report(window, tmp_path, capsys):
    window.set_document(load_design(CE), str(CE))
    window.analysis_panel.runner.wait()
    # The window shows Cin's test picture; the report shows the design all the same.
    assert not window.analysis_panel.select_element("Cin")
    by_window, by_command = tmp_path / "window.html", tmp_path / "command.html"
    assert window.advisor.export_report(str(by_window)).startswith("Report written")
    assert main(["report", str(CE), "-o", str(by_command)]) == 0
    text = by_window.read_text(encoding="utf-8")
    assert text == by_command.read_text(encoding="utf-8")
    assert f"SHA-256 <code>{hashlib.sha256(CE.read_bytes()).hexdigest()}</code>" in text
    assert "ce_hydrophone_preamp.json" in text and "bandsketch 0.1.0" in text


def test_the_html_holds_every_picture_as_svg_a_browser_can_draw(tmp_path, qapp):
    path = tmp_path / "r.html"
    export.export_report(load_sample("ce_hydrophone_preamp"), str(path), samples=200)
    svgs = _inline_svgs(path.read_text(encoding="utf-8"))
    assert len(svgs) == 4  # the sheet, the Bode plot, the bars, the step response
    for svg in svgs:
        root = ET.fromstring(svg)
        assert root.tag == f"{SVG}svg" and root.get("version") == "1.1" and root.get("baseProfile") is None
        width, height = float(root.get("width")), float(root.get("height"))
        assert root.get("viewBox") == f"0 0 {root.get('width')} {root.get('height')}" and width > 0 and height > 0
        used = {el.tag.replace(SVG, "") for el in root.iter()}
        assert used <= SVG11_ELEMENTS, used - SVG11_ELEMENTS
        assert all(el.get("d") != "" for el in root.iter(f"{SVG}path"))  # empty path data is an error


def test_the_sheet_in_the_report_is_the_design_drawn_on_paper(qapp):
    from bandsketch.app.canvas.sheet_picture import sheet_svg

    svg = sheet_svg(load_sample("ce_hydrophone_preamp"))
    texts = {t.text for t in ET.fromstring(svg).iter(f"{SVG}text") if t.text}
    assert {"Q1", "Cin", "CE", "Cout", "RC", "RL"} <= {t.strip() for t in texts}


def test_a_one_stage_pdf_is_three_pages_with_its_file_version_and_pictures_at_300_dpi(tmp_path, capsys):
    path = tmp_path / "r.pdf"
    assert main(["report", str(CE), "-o", str(path), "--samples", "500"]) == 0
    pdf = pypdf.PdfReader(path)
    assert len(pdf.pages) <= 3
    text = " ".join(" ".join(page.extract_text().split()) for page in pdf.pages)
    for needed in ("CE hydrophone preamp", "ce_hydrophone_preamp.json", "Bias (DC operating point)",
                   "Bands and time constants", "Targets", "Warnings", "References", "Thornton", "bandsketch 0.1.0"):
        assert needed in text, needed
    digest = hashlib.sha256(CE.read_bytes()).hexdigest()
    assert digest in text.replace(" ", "")
    widths = [obj["/Width"] for page in pdf.pages
              for obj in (o.get_object() for o in page["/Resources"].get("/XObject", {}).values())
              if obj.get("/Subtype") == "/Image"]
    narrowest_mm = 110  # the step plot is printed narrowest
    assert len(widths) >= 4 and min(widths) >= narrowest_mm / 25.4 * export.REPORT_DPI - 1
    # The footer prints at its own size in points (PDF user space is 1/72 inch, ISO 32000-1:2008 §8.3.2.3).
    footers = []

    def visit(text, cm, tm, font, size):
        if "page" in text and " of " in " ".join(text.split()):
            footers.append(size * abs(tm[3]) * abs(cm[3]))

    pdf.pages[0].extract_text(visitor_text=visit)
    assert footers and all(abs(pt - export.FOOTER_PT) < 0.5 for pt in footers), footers


@pytest.mark.parametrize("name", ["ce_hydrophone_preamp", "two_stage_miller", "photodiode_tia"])
def test_no_heading_is_left_at_a_page_foot(name, qapp):
    document = export.report_document(load_sample(name), dict(schematic_svg=None, source=None, spread=None,
                                                             samples=200, seed=1))
    height = document.pageSize().height()
    block, headings = document.begin(), 0
    while block.isValid():
        if block.blockFormat().headingLevel() and block.next().isValid():
            headings += 1
            assert export._page(document, block, height) == export._page(document, block.next(), height), block.text()
        block = block.next()
    assert headings >= 10
