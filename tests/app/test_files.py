"""Saving, reopening, refusing damaged files, asking before losing work, recovering after a crash."""

import json
from pathlib import Path

from bandsketch.app import dialogs
from bandsketch.app.main_window import MainWindow
from bandsketch.app.recovery import RecoveryKeeper
from sheet import place, snapshot, wire

CE_DESIGN = Path(__file__).with_name("invented_ce_stage.json")


def test_save_reopen_gives_the_same_design(qtbot, window, tmp_path, monkeypatch):
    place(qtbot, window, "Voltage source", 60, 200)
    place(qtbot, window, "Resistor", 160, 160, rotate=1)
    wire(qtbot, window, (60, 160), (120, 160))
    drawn = snapshot(window.doc)
    target = tmp_path / "sketch"
    monkeypatch.setattr(dialogs, "ask_save_path", lambda parent, suggestion: str(target))
    assert window.save()
    assert window.path == str(target) + ".json" and not window.is_dirty()
    assert "sketch.json" in window.windowTitle() and not window.isWindowModified()

    window.new_design()
    assert window.doc.is_empty()
    assert window.open_design(window.path or str(target) + ".json")
    assert snapshot(window.doc) == drawn
    assert not window.stack.canUndo(), "an opened design starts a fresh history"


def test_title_marks_unsaved_changes(qtbot, window):
    assert not window.isWindowModified()
    place(qtbot, window, "Resistor", 100, 100)
    assert window.isWindowModified() and "Untitled design" in window.windowTitle()
    window.act_undo.trigger()
    assert not window.isWindowModified()


def test_corrupt_file_is_refused_by_name_and_the_design_stays(qtbot, window, tmp_path, monkeypatch):
    place(qtbot, window, "Resistor", 100, 100)
    before = snapshot(window.doc)
    bad = tmp_path / "damaged.json"
    bad.write_text('{"format": "bandsketch-design", "version": 1, "parts": [', encoding="utf-8")
    shown = []
    monkeypatch.setattr(dialogs, "show_error", lambda parent, title, message: shown.append(message))
    monkeypatch.setattr(dialogs, "ask_unsaved", lambda parent, name: dialogs.Unsaved.DISCARD)
    assert not window.open_design(str(bad))
    assert len(shown) == 1 and "damaged.json" in shown[0] and "not valid JSON" in shown[0]
    assert "has not been changed" in shown[0]
    assert snapshot(window.doc) == before and window.is_dirty()


def test_newer_format_is_refused_with_advice(qtbot, window, tmp_path, monkeypatch):
    newer = tmp_path / "future.json"
    newer.write_text(json.dumps({"format": "bandsketch-design", "version": 99, "parts": []}), encoding="utf-8")
    shown = []
    monkeypatch.setattr(dialogs, "show_error", lambda parent, title, message: shown.append(message))
    assert not window.open_design(str(newer))
    assert "future.json" in shown[0] and "newer" in shown[0]


def test_closing_with_changes_asks_and_cancel_keeps_the_window(qtbot, window, monkeypatch):
    place(qtbot, window, "Resistor", 100, 100)
    asked = []
    monkeypatch.setattr(dialogs, "ask_unsaved", lambda parent, name: asked.append(name) or dialogs.Unsaved.CANCEL)
    assert not window.close()
    assert asked == ["Untitled design"] and window.isVisible()


def test_recovery_after_a_crash_is_offered_and_restores(qtbot, tmp_path, monkeypatch):
    folder = tmp_path / "recovery"
    crashed = MainWindow(recovery_folder=folder)
    place_via = crashed.controller
    from bandsketch.app.canvas.controller import Template
    from PySide6.QtCore import QPointF
    place_via.place_at(Template("resistor", {"value": "22k"}), QPointF(100, 100))
    place_via.place_at(Template("capacitor"), QPointF(200, 100))
    crashed.keeper.write()
    drawn = snapshot(crashed.doc)
    assert (folder / "recovery.json").exists()
    # A crash: the window is gone without its close handler removing the recovery file.
    crashed.keeper.stop()
    crashed.keeper = None
    crashed.stack.setClean()
    crashed.close()

    offers = []
    monkeypatch.setattr(dialogs, "ask_restore", lambda parent, when, name: offers.append(name) or True)
    fresh = MainWindow(recovery_folder=folder)
    assert fresh.offer_recovery()
    assert offers == ["an untitled design"]
    assert snapshot(fresh.doc) == drawn and fresh.is_dirty()
    fresh.stack.setClean()
    fresh._restored_unsaved = False
    fresh.close()
    assert not (folder / "recovery.json").exists(), "a deliberate close removes the recovery file"


def test_declined_recovery_is_set_aside_not_deleted(qtbot, tmp_path, monkeypatch):
    folder = tmp_path / "recovery"
    folder.mkdir()
    (folder / "recovery.json").write_text(json.dumps(
        {"saved_path": None, "written": 0, "design": json.loads(CE_DESIGN.read_text(encoding="utf-8"))}),
        encoding="utf-8")
    monkeypatch.setattr(dialogs, "ask_restore", lambda parent, when, name: False)
    w = MainWindow(recovery_folder=folder)
    assert not w.offer_recovery() and w.doc.is_empty()
    assert (folder / "recovery-set-aside.json").exists() and not (folder / "recovery.json").exists()
    w.close()


def test_burst_of_edits_is_written_once_calm(qtbot, tmp_path, monkeypatch):
    monkeypatch.setattr("bandsketch.app.recovery.CALM_MS", 50)
    w = MainWindow(recovery_folder=tmp_path / "rec")
    from bandsketch.app.canvas.controller import Template
    from PySide6.QtCore import QPointF
    for i in range(5):
        w.controller.place_at(Template("resistor"), QPointF(40 * i, 0))
    qtbot.waitUntil(lambda: (tmp_path / "rec" / "recovery.json").exists(), timeout=3000)
    saved = json.loads((tmp_path / "rec" / "recovery.json").read_text(encoding="utf-8"))
    assert len(saved["design"]["parts"]) == 5
    w.stack.setClean()
    w.close()


def test_keeper_removes_the_file_when_nothing_is_unsaved(qtbot, tmp_path):
    from bandsketch.engine.design.document import Document
    keeper = RecoveryKeeper(Document(), lambda: False, lambda: None, tmp_path)
    (tmp_path / "recovery.json").write_text("{}", encoding="utf-8")
    keeper.write()
    assert not (tmp_path / "recovery.json").exists()
