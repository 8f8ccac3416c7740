"""Before the window starts on X11 the command checks the libraries Qt's xcb platform loads and
names the packages to install, instead of letting Qt abort the process (exit 134). The list of
libraries is Qt 6's xcb plugin's (value from memory); here the loader is stood in for."""

from __future__ import annotations

import ctypes

from bandsketch.app import gui
from bandsketch.app.syslibs import XCB_LIBRARIES, install_hint, missing_xcb_libraries

X11 = {"DISPLAY": ":0"}


def test_a_missing_library_is_found_only_where_the_window_would_use_x11():
    lacks_cursor = lambda soname: soname != "libxcb-cursor.so.0"  # noqa: E731
    assert missing_xcb_libraries(X11, "linux", lacks_cursor) == ["libxcb-cursor.so.0"]
    assert missing_xcb_libraries({**X11, "QT_QPA_PLATFORM": "offscreen"}, "linux", lacks_cursor) == []
    assert missing_xcb_libraries({}, "linux", lacks_cursor) == []  # no X display: Qt says so itself
    assert missing_xcb_libraries(X11, "darwin", lacks_cursor) == []
    assert missing_xcb_libraries(X11, "win32", lacks_cursor) == []


def test_the_hint_names_the_packages_of_three_distributions():
    text = install_hint(["libxcb-cursor.so.0", "libxcb-shape.so.0", "libxcb-randr.so.0"])
    assert "sudo apt install libxcb-cursor0 libxcb-shape0 libxcb-randr0" in text
    assert "sudo dnf install xcb-util-cursor libxcb" in text  # libxcb named once
    assert "sudo pacman -S xcb-util-cursor libxcb" in text
    assert "bandsketch analyze" in text


def test_the_loader_is_asked_by_soname(monkeypatch):
    asked = []

    def cdll(name):
        asked.append(name)
        raise OSError(name)

    monkeypatch.setattr(ctypes, "CDLL", cdll)
    assert missing_xcb_libraries(X11, "linux") == list(XCB_LIBRARIES) == asked


def test_the_window_is_not_started_without_them(monkeypatch, capsys):
    monkeypatch.delenv("QT_QPA_PLATFORM", raising=False)
    monkeypatch.setenv("DISPLAY", ":0")
    monkeypatch.setattr("sys.platform", "linux")
    monkeypatch.setattr("bandsketch.app.syslibs._loads", lambda soname: soname != "libxcb-cursor.so.0")
    monkeypatch.setattr(gui, "_application", lambda: (_ for _ in ()).throw(AssertionError("Qt was started")))
    assert gui.run_gui(None) == 1
    err = capsys.readouterr().err
    assert "libxcb-cursor.so.0" in err and "libxcb-cursor0" in err
