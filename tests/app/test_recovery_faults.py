"""Faults around the window: a real crash after edits, saves that fail, damaged recovery files.

- A crash: a separate process opens a sample in the main window, edits it, waits for the
  recovery file and kills itself with SIGKILL (no close handler runs). The next window offers
  the recovered work, and accepting restores every edit, the file it belonged to, and the
  unsaved mark.
- A save to a full disk or a read-only place (faults injected: the tests run as root) says so
  in a message, and the design stays open, unsaved and unchanged, its recovery file kept.
- A damaged recovery file is set aside (never deleted) and the window starts normally.

No outside reference (common practice, no source).
"""

from __future__ import annotations

import errno
import json
import os
import signal
import subprocess
import sys
import tempfile
import textwrap
from pathlib import Path

import pytest

from bandsketch.app import dialogs, edits
from bandsketch.app.main_window import MainWindow
from bandsketch.app.recovery import RecoveryKeeper
from bandsketch.engine.design.designfile import document_to_dict, load_design, save_design
from bandsketch.engine.design.document import Document

ROOT = Path(__file__).resolve().parents[2]
SAMPLE = ROOT / "sample_designs" / "ce_hydrophone_preamp.json"

CRASHING = textwrap.dedent("""
    import json, os, signal, sys
    os.environ["QT_QPA_PLATFORM"] = "offscreen"
    root, folder, design, dump = sys.argv[1:5]

    import bandsketch.app.recovery
    bandsketch.app.recovery.CALM_MS = 100
    from PySide6.QtCore import QPointF, QTimer
    from PySide6.QtWidgets import QApplication
    qt = QApplication([])
    qt.setApplicationName("BandsketchCrashTest")
    from bandsketch.app import edits
    from bandsketch.app.canvas.controller import Template
    from bandsketch.app.main_window import MainWindow
    from bandsketch.engine.design.designfile import document_to_dict, load_design
    w = MainWindow(recovery_folder=folder)
    w.show()
    w.set_document(load_design(design), design)
    w.editor.patch(edits.edit_field(w.doc, "RC", "value", "5k6"), "Edit RC")
    w.controller.place_at(Template("resistor", {"value": "22k"}), QPointF(900, 100))
    recovery = os.path.join(folder, "recovery.json")

    def crash_once_written():
        if os.path.exists(recovery):
            with open(dump, "w", encoding="utf-8") as fh:
                json.dump(document_to_dict(w.doc), fh)
            os.kill(os.getpid(), signal.SIGKILL)

    timer = QTimer()
    timer.timeout.connect(crash_once_written)
    timer.start(20)
    QTimer.singleShot(20000, qt.quit)  # never reached unless the recovery file never comes
    qt.exec()
    sys.exit(3)
""")


def test_a_real_crash_after_edits_is_followed_by_a_recovery_offer_that_restores_them(qtbot, tmp_path, monkeypatch):
    folder, dump = tmp_path / "recovery", tmp_path / "drawn.json"
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen",
           "XDG_CONFIG_HOME": str(tmp_path / "config"), "XDG_DATA_HOME": str(tmp_path / "data")}
    proc = subprocess.run([sys.executable, "-c", CRASHING, str(ROOT), str(folder), str(SAMPLE), str(dump)],
                          env=env, capture_output=True, text=True, timeout=120)
    assert proc.returncode == -signal.SIGKILL, proc.stderr
    drawn = json.loads(dump.read_text(encoding="utf-8"))
    assert drawn["parts"][-1]["params"]["value"] == "22k"
    assert next(p for p in drawn["parts"] if p["name"] == "RC")["params"]["value"] == "5k6"

    offers = []
    monkeypatch.setattr(dialogs, "ask_restore", lambda parent, when, name: offers.append((when, name)) or True)
    w = MainWindow(recovery_folder=folder)
    assert w.offer_recovery()
    assert offers and offers[0][1] == SAMPLE.name and offers[0][0].startswith("last written ")
    assert document_to_dict(w.doc) == drawn
    assert w.path == str(SAMPLE) and w.is_dirty() and w.isWindowModified()
    # The restored work is still kept safe until it is saved.
    assert (folder / "recovery.json").exists()
    w.stack.setClean()
    w._restored_unsaved = False
    w.close()
    w.deleteLater()


# -- saves that fail in the window ------------------------------------------------------

def fault(code):
    def raise_it(*args, **kwargs):
        raise OSError(code, os.strerror(code))
    return raise_it


@pytest.mark.parametrize("where, code", [(os, errno.ENOSPC), (tempfile, errno.EROFS), (tempfile, errno.EACCES)],
                         ids=["full disk", "read-only file system", "permission denied"])
def test_a_failed_save_says_so_and_keeps_the_design_open_and_unsaved(window, tmp_path, monkeypatch, where, code):
    target = tmp_path / "design.json"
    save_design(load_design(SAMPLE), target)
    before = target.read_bytes()
    window.set_document(load_design(target), str(target))
    window.editor.patch(edits.edit_field(window.doc, "RC", "value", "5k6"), "Edit RC")
    window.keeper.write()
    held = document_to_dict(window.doc)
    assert window.is_dirty() and (tmp_path / "recovery" / "recovery.json").exists()

    shown = []
    monkeypatch.setattr(dialogs, "show_error", lambda parent, title, message: shown.append((title, message)))
    monkeypatch.setattr(where, "fsync" if where is os else "mkstemp", fault(code))
    assert window.save() is False
    assert len(shown) == 1
    title, message = shown[0]
    assert title == "Cannot save design"
    assert os.strerror(code) in message and "still open and unsaved" in message
    assert window.is_dirty() and window.isWindowModified()
    assert document_to_dict(window.doc) == held
    assert target.read_bytes() == before
    assert (tmp_path / "recovery" / "recovery.json").exists(), "the recovery file must outlive a failed save"
    monkeypatch.undo()
    assert window.save() is True and not window.is_dirty()
    assert document_to_dict(load_design(target)) == held


# -- damaged recovery files ---------------------------------------------------------------

def damaged(design) -> dict:
    good = {"saved_path": None, "written": 0, "design": design}
    return {
        "empty": b"",
        "truncated": json.dumps(good).encode()[:200],
        "not json": b"not json",
        "a list": b"[]",
        "no design": json.dumps({"saved_path": None}).encode(),
        "a bad design": json.dumps({**good, "design": {"format": "x"}}).encode(),
        "not utf-8": b"\xff\xfe\x00",
        "path not text": json.dumps({**good, "saved_path": 42}).encode(),
        "deeply nested": b'{"design": ' + b"[" * 100_000 + b"]" * 100_000 + b"}",
        "written infinite": json.dumps({**good, "written": 1e999}).encode(),
        "written NaN": json.dumps({**good, "written": float("nan")}).encode(),
        "written huge": json.dumps(good).encode().replace(b'"written": 0', b'"written": 1' + b"0" * 400),
    }


@pytest.mark.parametrize("case", sorted(damaged({})))
def test_a_damaged_recovery_file_is_set_aside_and_the_window_starts(qtbot, tmp_path, case):
    folder = tmp_path / "recovery"
    folder.mkdir()
    content = damaged(json.loads(SAMPLE.read_text(encoding="utf-8")))[case]
    (folder / "recovery.json").write_bytes(content)
    keeper = RecoveryKeeper(Document(), lambda: False, lambda: None, folder)
    found = keeper.left_over()
    if not isinstance(found, str):
        found.when()  # what the offer shows must be printable
        assert case.startswith("path not text") or case.startswith("written")
        return
    assert "recovery file cannot be read" in found and "recovery-set-aside.json" in found
    assert not (folder / "recovery.json").exists()
    assert (folder / "recovery-set-aside.json").read_bytes() == content, "set aside, not deleted"
