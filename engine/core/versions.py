"""The versions of Bandsketch and of what it runs on, for ``--version``, the About box and reports."""

from __future__ import annotations

import platform
from importlib import metadata

from bandsketch import __version__

_LIBRARIES = (("numpy", "numpy"), ("scipy", "scipy"), ("PySide6", "PySide6-Essentials"),
              ("pyqtgraph", "pyqtgraph"))


def versions() -> dict[str, str]:
    """Bandsketch, Python and each library's installed version, by name ("not installed" if absent).

    Read from the installed distributions' metadata, so nothing (Qt least of all) is imported.
    """
    out = {"Bandsketch": __version__, "Python": platform.python_version()}
    for name, dist in _LIBRARIES:
        try:
            out[name] = metadata.version(dist)
        except metadata.PackageNotFoundError:
            out[name] = "not installed"
    return out


def version_line() -> str:
    """One line: ``bandsketch 0.1.0 (Python 3.11.7, numpy 2.1.0, ...)``."""
    v = versions()
    rest = ", ".join(f"{k} {x}" for k, x in v.items() if k != "Bandsketch")
    return f"bandsketch {v['Bandsketch']} ({rest})"
