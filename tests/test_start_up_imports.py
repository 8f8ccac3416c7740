"""What starting up imports: the window and the command line leave the slow modules they do
not need until a feature asks for them (their cost: `python -X importtime`, see
docs/benchmarks.md). Checked in a fresh interpreter each, as a user starts them."""

import json
import os
import subprocess
import sys

import pytest

_SLOW = ("scipy.optimize", "networkx", "bandsketch.engine.advise.search", "bandsketch.engine.advise.suggest",
         "bandsketch.engine.present.report")


def _modules_after(code: str) -> set:
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen"}
    out = subprocess.run([sys.executable, "-c", code + "\nimport json, sys; print(json.dumps(sorted(sys.modules)))"],
                         capture_output=True, text=True, env=env, timeout=120, check=True)
    return set(json.loads(out.stdout.strip().splitlines()[-1]))


def test_the_window_opens_without_the_advisors_searches_or_scipy_optimize():
    loaded = _modules_after("from PySide6.QtWidgets import QApplication\napp = QApplication([])\n"
                            "from bandsketch.app.main_window import MainWindow\nw = MainWindow(keep_recovery=False)\n"
                            "w.open_sample('ce_hydrophone_preamp')\nw.analysis_panel.runner.wait()\n"
                            "w.stack.setClean(); w.analysis_panel.runner.shutdown()")
    assert not loaded & set(_SLOW)


@pytest.mark.parametrize("argv", [["--version"], ["--help"]])
def test_the_command_line_answers_without_the_solvers(argv):
    loaded = _modules_after(f"import sys\nsys.argv = ['bandsketch', *{argv!r}]\nimport runpy\ntry:\n"
                            "    runpy.run_module('bandsketch', run_name='__main__')\nexcept SystemExit:\n    pass")
    assert "numpy" not in loaded and "bandsketch.engine.solve.analysis" not in loaded
