"""The system libraries Qt's X11 (xcb) platform loads, checked before the window starts.

Without one of them Qt prints a line about the "xcb" plugin and aborts the process (exit 134);
the command checks first and says which packages to install instead. Each library is tried by
its soname with the dynamic loader, as Qt's plugin would load it. The packages named are those
of Qt 6's xcb plugin on Debian/Ubuntu, Fedora and Arch (from each distribution's package
lists; value from memory).
"""

from __future__ import annotations

import ctypes
import os
import sys

XCB_LIBRARIES = {
    # soname: (Debian/Ubuntu, Fedora, Arch)
    "libxcb-cursor.so.0": ("libxcb-cursor0", "xcb-util-cursor", "xcb-util-cursor"),
    "libxcb-icccm.so.4": ("libxcb-icccm4", "xcb-util-wm", "xcb-util-wm"),
    "libxcb-image.so.0": ("libxcb-image0", "xcb-util-image", "xcb-util-image"),
    "libxcb-keysyms.so.1": ("libxcb-keysyms1", "xcb-util-keysyms", "xcb-util-keysyms"),
    "libxcb-randr.so.0": ("libxcb-randr0", "libxcb", "libxcb"),
    "libxcb-render-util.so.0": ("libxcb-render-util0", "xcb-util-renderutil", "xcb-util-renderutil"),
    "libxcb-shape.so.0": ("libxcb-shape0", "libxcb", "libxcb"),
    "libxcb-xkb.so.1": ("libxcb-xkb1", "libxcb", "libxcb"),
    "libxkbcommon-x11.so.0": ("libxkbcommon-x11-0", "libxkbcommon-x11", "libxkbcommon-x11"),
}
"""Each library the xcb platform plugin needs, and the package that holds it on Debian/Ubuntu,
Fedora and Arch."""
DISTRIBUTIONS = (("Debian/Ubuntu", "sudo apt install"), ("Fedora", "sudo dnf install"), ("Arch", "sudo pacman -S"))


def _loads(soname: str) -> bool:
    try:
        ctypes.CDLL(soname)
    except OSError:
        return False
    return True


def missing_xcb_libraries(environ=None, platform: str | None = None, loads=None) -> list[str]:
    """The xcb libraries that cannot be loaded, when the window would start on X11: on Linux,
    with a ``DISPLAY`` and no platform chosen in ``QT_QPA_PLATFORM``. Empty otherwise."""
    environ = os.environ if environ is None else environ
    platform = sys.platform if platform is None else platform
    loads = loads or _loads
    if not platform.startswith("linux") or environ.get("QT_QPA_PLATFORM") or not environ.get("DISPLAY"):
        return []
    return [soname for soname in XCB_LIBRARIES if not loads(soname)]


def install_hint(missing: list[str]) -> str:
    """What to tell the user who lacks ``missing``: the libraries, the packages to install on
    each distribution, and how to work without the window."""
    lines = [f"the window cannot start: Qt's X11 platform needs {', '.join(missing)}, which "
             "the system does not have. Install:"]
    for i, (name, command) in enumerate(DISTRIBUTIONS):
        packages = list(dict.fromkeys(XCB_LIBRARIES[s][i] for s in missing))
        lines.append(f"  {name}: {command} {' '.join(packages)}")
    lines.append("Without a window, the command line still analyses and reports (bandsketch analyze -h), "
                 "and QT_QPA_PLATFORM=wayland chooses Qt's Wayland platform on a Wayland desktop.")
    return "\n".join(lines)
