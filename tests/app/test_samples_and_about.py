"""File > Open sample and Help > About in the window. Common practice, no source."""

from __future__ import annotations

import platform

import numpy
import scipy
from PySide6.QtCore import qVersion
from PySide6.QtGui import QImage

import bandsketch
from bandsketch.app import dialogs, edits
from bandsketch.app.gui import run_gui
from bandsketch.engine.design.samples import list_samples, load_sample


def test_the_file_menu_opens_every_sample_as_an_untitled_copy(window):
    titles = [a.text() for a in window.sample_menu.actions()]
    assert titles == [s.title for s in list_samples()]
    for action, sample in zip(window.sample_menu.actions(), list_samples()):
        assert action.toolTip() == sample.summary
    window.sample_menu.actions()[-1].trigger()
    last = list_samples()[-1]
    assert window.doc.title == last.title
    assert set(window.doc.parts) == set(load_sample(last.name).parts)
    assert window.path is None  # Save asks where: the shipped sample stays as shipped
    assert not window.is_dirty()


def test_opening_a_sample_asks_about_unsaved_changes_first(window, monkeypatch):
    window.open_sample("photodiode_tia")
    window.editor.patch(edits.delete(window.doc, ["Cf"], []), "Delete")
    asked = []
    monkeypatch.setattr(dialogs, "ask_unsaved", lambda parent, name: asked.append(name) or dialogs.Unsaved.CANCEL)
    assert not window.open_sample("ce_hydrophone_preamp")
    assert asked and "Cf" not in window.doc.parts


def test_about_names_the_versions(window, monkeypatch):
    shown = []
    monkeypatch.setattr(dialogs, "show_about", lambda parent, text: shown.append(text))
    window.act_about.trigger()
    (text,) = shown
    for name, version in (("Bandsketch", bandsketch.__version__), ("Python", platform.python_version()),
                          ("Qt", qVersion()), ("numpy", numpy.__version__), ("scipy", scipy.__version__)):
        assert f"<td>{name}</td><td>{version}</td>" in text
    assert "About Bandsketch" in [a.text().replace("&", "") for a in window.menuBar().actions()[-1].menu().actions()]


def test_a_screenshot_of_a_sample(qapp, tmp_path):
    out = tmp_path / "tia.png"
    assert run_gui(None, screenshot=str(out), size=(900, 600), sample="photodiode_tia") == 0
    assert QImage(str(out)).width() == 900
