"""Build the API reference of the scripting engine (``bandsketch.engine``) from its numpydoc
docstrings, with pdoc, into ``docs/api`` (or the folder given)::

    pip install -e ".[docs]"
    python docs/build_api.py [FOLDER]

Any warning pdoc raises (a reference it cannot resolve, a docstring it cannot read) fails the
build; ``tests/test_api_docs.py`` runs it. The app (``bandsketch.app``) is left out: it is Qt
widgets, not an API to script.
"""

from __future__ import annotations

import sys
import warnings
from pathlib import Path

DEFAULT_FOLDER = Path(__file__).resolve().parent / "api"


def build(folder: Path = DEFAULT_FOLDER) -> Path:
    """Write the reference into ``folder``; returns its index page. Raises on any warning."""
    import pkgutil

    import pdoc
    import pdoc.render

    import bandsketch.engine as engine

    # The package's __all__ lists the scripting API, which hides its layers; name each layer
    # (pdoc walks the modules inside it).
    modules = ["bandsketch.engine"] + sorted(m.name for m in pkgutil.iter_modules(engine.__path__, "bandsketch.engine.")
                                             if m.ispkg)
    pdoc.render.configure(docformat="numpy", show_source=False,
                          footer_text="Bandsketch: the scripting engine's API reference")
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        pdoc.pdoc(*modules, output_directory=Path(folder))
    return Path(folder) / "index.html"


if __name__ == "__main__":
    print(build(Path(sys.argv[1]) if len(sys.argv) > 1 else DEFAULT_FOLDER))
