"""The API reference builds from the docstrings without a warning (pdoc, the ``docs`` extra;
skipped when pdoc is not installed) and holds the scripting API's pages."""

from __future__ import annotations

import importlib.util
from pathlib import Path

import pytest

pytest.importorskip("pdoc")
ROOT = Path(__file__).resolve().parent.parent


def test_the_api_reference_builds_without_warnings(tmp_path):
    spec = importlib.util.spec_from_file_location("build_api", ROOT / "docs" / "build_api.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    index = module.build(tmp_path)
    assert index.is_file()
    analysis = (tmp_path / "bandsketch" / "engine" / "solve" / "analysis.html").read_text(encoding="utf-8")
    assert "def analyze" in analysis or "analyze" in analysis
    assert "to_frame" in analysis and "Parameters" in analysis
    assert (tmp_path / "bandsketch" / "engine" / "network" / "circuit.html").is_file()
