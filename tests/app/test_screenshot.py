"""The --screenshot path: the real window, offscreen, grabbed whole."""

from pathlib import Path

from PySide6.QtGui import QImage

from bandsketch.app.gui import run_gui

CE_DESIGN = Path(__file__).with_name("invented_ce_stage.json")


def _distinct_colours(image: QImage, step: int = 7) -> int:
    return len({image.pixel(x, y) for x in range(0, image.width(), step) for y in range(0, image.height(), step)})


def test_screenshot_of_a_design_is_not_blank(qapp, tmp_path):
    out = tmp_path / "ce.png"
    assert run_gui(str(CE_DESIGN), screenshot=str(out), size=(1000, 700)) == 0
    image = QImage(str(out))
    assert (image.width(), image.height()) == (1000, 700)
    assert _distinct_colours(image) > 20


def test_screenshot_of_a_damaged_design_fails_with_a_message(qapp, tmp_path, capsys):
    bad = tmp_path / "bad.json"
    bad.write_text("not json", encoding="utf-8")
    assert run_gui(str(bad), screenshot=str(tmp_path / "x.png")) == 2
    assert "bad.json" in capsys.readouterr().err
    assert not (tmp_path / "x.png").exists()
