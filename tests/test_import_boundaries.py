"""The engine stays free of Qt and of the app (issue 2: "engine/, no Qt import; a test enforces it")."""

import ast
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
FORBIDDEN = ("PySide6", "shiboken6", "pyqtgraph", "app", "engine")


def _forbidden(module: str) -> bool:
    # "app" and "engine" are forbidden as top-level names too: installed, they exist only as
    # bandsketch.app and bandsketch.engine.
    top = module.split(".")[0]
    return top in FORBIDDEN or top.startswith("PyQt") or module.startswith("bandsketch.app")


def _imports(path: Path, depth: int = 1):
    """(line, module) of every import in a file, including those inside functions; ``depth``
    is how many packages deep the file sits (1 for engine/x.py)."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield node.lineno, alias.name
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            yield node.lineno, node.module
        elif isinstance(node, ast.ImportFrom) and node.level > depth:
            # A relative import climbing out of the engine package (from .. import app).
            for alias in node.names:
                yield node.lineno, f"{node.module or alias.name}"
        elif isinstance(node, ast.Call) and getattr(node.func, "attr", getattr(node.func, "id", "")) in (
                "import_module", "__import__") and node.args and isinstance(node.args[0], ast.Constant):
            yield node.lineno, str(node.args[0].value)


def test_engine_modules_import_no_qt_and_no_app():
    # Scanned with the ast module (static: also catches imports inside functions).
    files = sorted((ROOT / "engine").rglob("*.py"))
    assert files, "no engine modules found"
    bad = [f"{f.relative_to(ROOT)}:{line} imports {mod}" for f in files
           for line, mod in _imports(f, len(f.relative_to(ROOT).parts) - 1) if _forbidden(mod)]
    assert not bad, "\n".join(bad)


def test_the_scan_would_catch_a_qt_import(tmp_path):
    # The checker itself: a file importing Qt in each way is caught.
    sample = tmp_path / "sample.py"
    sample.write_text("import os\nfrom PySide6.QtCore import Qt\nimport PyQt5\n"
                      "def f():\n    import pyqtgraph as pg\n    from app import cli\n"
                      "from .. import app\nfrom . import values\n")
    assert sorted(m for _, m in _imports(sample) if _forbidden(m)) == ["PyQt5", "PySide6.QtCore", "app", "app",
                                                                       "pyqtgraph"]
    assert not _forbidden("appdirs") and not _forbidden("numpy")


def test_import_linter_contract():
    # The import-linter contracts in pyproject.toml (forbidden: engine -> Qt, pyqtgraph, app; and the
    # engine layers core <- network <- design | solve <- advise <- present).
    # Beside the running interpreter first: a virtual environment need not be on PATH.
    beside = Path(sys.executable).with_name("lint-imports")
    exe = str(beside) if beside.exists() else shutil.which("lint-imports")
    if exe is None:
        pytest.skip("lint-imports (import-linter) is not installed; the ast scan above still runs")
    env = dict(os.environ)  # the package is installed (editable or wheel): bandsketch.engine resolves through it
    run = subprocess.run([exe], cwd=ROOT, env=env, capture_output=True, text=True, timeout=120)
    assert run.returncode == 0, run.stdout + run.stderr


def test_importing_the_engine_loads_no_qt():
    # At run time too: a fresh interpreter importing every engine module has no Qt loaded.
    code = ("import sys, pkgutil, importlib, bandsketch.engine as e\n"
            "for m in pkgutil.walk_packages(e.__path__, 'bandsketch.engine.'): importlib.import_module(m.name)\n"
            "bad = [m for m in sys.modules if m.split('.')[0] in ('PySide6', 'shiboken6', 'pyqtgraph')"
            " or m.startswith(('PyQt', 'bandsketch.app'))]\n"
            "print(bad); sys.exit(1 if bad else 0)\n")
    env = dict(os.environ)  # the package is installed (editable or wheel): bandsketch.engine resolves through it
    run = subprocess.run([sys.executable, "-c", code], cwd=ROOT, env=env, capture_output=True, text=True,
                         timeout=120)
    assert run.returncode == 0, run.stdout + run.stderr
