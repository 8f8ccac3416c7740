"""Qt runs offscreen, with settings and recovery files in a throwaway folder, no dialog ever waits."""

import os
import tempfile

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
_HOME = tempfile.mkdtemp(prefix="bandsketch-tests-")
os.environ["XDG_CONFIG_HOME"] = os.path.join(_HOME, "config")
os.environ["XDG_DATA_HOME"] = os.path.join(_HOME, "data")

import pytest  # noqa: E402

from bandsketch.app import dialogs  # noqa: E402


@pytest.fixture(autouse=True)
def no_waiting_dialogs(monkeypatch, qapp):
    """Any dialog a test did not answer fails the test instead of waiting for a click."""
    qapp.setOrganizationName("BandsketchTests")
    qapp.setApplicationName("BandsketchTests")

    def unexpected(name):
        def fail(*args, **kwargs):
            raise AssertionError(f"unexpected dialog {name}{args[1:]}")
        return fail

    for name in ("ask_open_path", "ask_save_path", "ask_unsaved", "ask_restore", "show_error"):
        monkeypatch.setattr(dialogs, name, unexpected(name))


@pytest.fixture(autouse=True)
def no_remembered_views(qapp):
    """Each test opens designs fitted: the zoom another test left a file at is forgotten."""
    from PySide6.QtCore import QSettings

    QSettings().remove("sheet_views")
    yield


@pytest.fixture(autouse=True)
def empty_clipboard(qapp):
    """Leave no copied parts on the clipboard: the offscreen platform crashes at exit if
    the clipboard still owns data when the application is torn down."""
    yield
    qapp.clipboard().clear()


@pytest.fixture
def window(qtbot, tmp_path):
    """A main window with its recovery file in ``tmp_path / "recovery"``."""
    from bandsketch.app.main_window import MainWindow

    w = MainWindow(recovery_folder=tmp_path / "recovery")
    w.resize(1200, 800)
    w.show()
    qtbot.waitExposed(w)
    w.view.resetTransform()
    w.view.centerOn(250, 200)
    yield w
    # Whatever the test left unsaved is thrown away without asking.
    w.stack.setClean()
    w._restored_unsaved = False
    w.close()
    w.deleteLater()
