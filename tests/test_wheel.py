"""The wheel installs beside anything: built offline, installed into a fresh environment, and used
from a folder that holds its own ``engine.py`` and ``app.py`` (issue 10: "the wheel installs
beside a local engine.py"), and by a user with nothing but the wheel: samples listed and
analysed, a report in HTML and PDF, a figure as SVG (issue 18). Common practice, no source: what a wheel must hold follows from the
packaging (pyproject.toml), checked here by using it.

Fast and offline: the wheel is built with this environment's setuptools (no build isolation,
no dependencies fetched), and the fresh environment has no pip of its own; it sees this
environment's site-packages only through a path file, for numpy, scipy and Qt (and not this
checkout: an editable install's import hook is not run from there).
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import sysconfig
import venv
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
_SKIP = {".git", ".venv", "build", "dist", "__pycache__", ".pytest_cache", ".hypothesis"}

pytestmark = pytest.mark.wheel


def _source_copy(dest: Path) -> Path:
    """The files of the checkout (what git tracks, or everything but build output) in ``dest``,
    so the build writes nothing into the checkout."""
    listed = subprocess.run(["git", "ls-files", "-z"], cwd=ROOT, capture_output=True, timeout=30) \
        if shutil.which("git") else None
    if listed is not None and listed.returncode == 0 and listed.stdout:
        for name in listed.stdout.decode().split("\0"):
            if name and (ROOT / name).is_file():
                (dest / name).parent.mkdir(parents=True, exist_ok=True)
                shutil.copy2(ROOT / name, dest / name)
    else:
        shutil.copytree(ROOT, dest, dirs_exist_ok=True,
                        ignore=lambda _d, names: [n for n in names if n in _SKIP or n.endswith(".egg-info")])
    return dest


def _run(args, **kwargs):
    run = subprocess.run(args, capture_output=True, text=True, timeout=120, **kwargs)
    assert run.returncode == 0, f"{' '.join(map(str, args))}\n{run.stdout}\n{run.stderr}"
    return run


@pytest.fixture(scope="module")
def installed(tmp_path_factory):
    """(python of a fresh environment with the wheel installed, its scripts folder)."""
    work = tmp_path_factory.mktemp("wheel")
    source = _source_copy(work / "source")
    _run([sys.executable, "-m", "pip", "wheel", "--no-build-isolation", "--no-deps", "--no-index", "-q",
          "-w", str(work / "dist"), str(source)])
    wheels = list((work / "dist").glob("bandsketch-*.whl"))
    assert len(wheels) == 1, wheels
    env_dir = work / "env"
    venv.EnvBuilder(with_pip=False).create(env_dir)
    scripts = env_dir / ("Scripts" if os.name == "nt" else "bin")
    python = scripts / ("python.exe" if os.name == "nt" else "python")
    target = Path(_run([str(python), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"]).stdout.strip())
    (target / "test-dependencies.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")
    _run([sys.executable, "-m", "pip", "--python", str(python), "install", "--no-deps", "--no-index", "-q",
          str(wheels[0])])
    return python, scripts


@pytest.fixture
def notebook_folder(tmp_path):
    """A user's folder with modules of their own named engine and app."""
    (tmp_path / "engine.py").write_text("WHOSE = 'the user'\n")
    (tmp_path / "app.py").write_text("WHOSE = 'the user'\n")
    return tmp_path


def test_the_wheel_imports_beside_a_local_engine_and_app(installed, notebook_folder):
    python, _ = installed
    code = ("import bandsketch, bandsketch.engine, engine, app\n"
            "from bandsketch.engine import Circuit, analyze\n"
            "from bandsketch.engine.design.samples import load_sample\n"
            "print(bandsketch.__file__); print(engine.WHOSE, app.WHOSE)\n")
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
    run = _run([str(python), "-c", code], cwd=notebook_folder, env=env)
    where, whose = run.stdout.splitlines()
    assert Path(where).resolve().is_relative_to(python.parent.parent.resolve()), "imported from outside the wheel"
    assert whose == "the user the user", "the user's engine.py and app.py are shadowed"


def test_the_installed_command_and_module_print_the_version(installed, notebook_folder):
    python, scripts = installed
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
    by_module = _run([str(python), "-m", "bandsketch", "--version"], cwd=notebook_folder, env=env).stdout
    by_command = _run([str(scripts / "bandsketch"), "--version"], cwd=notebook_folder, env=env).stdout
    assert "0.1.0" in by_module and by_module == by_command


def test_the_wheel_holds_the_samples_and_no_tests(installed, notebook_folder):
    python, _ = installed
    code = ("import importlib.resources as r, importlib.util as u\n"
            "print(sorted(p.name for p in r.files('bandsketch.samples').iterdir() if p.name.endswith('.json')) != [])\n"
            "print(u.find_spec('bandsketch.tests') is None, u.find_spec('tests') is None)\n")
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
    assert _run([str(python), "-c", code], cwd=notebook_folder, env=env).stdout.split() == ["True", "True", "True"]


def test_the_installed_command_lists_analyses_reports_and_draws_the_samples(installed, tmp_path):
    # A user with the wheel and nothing else: samples listed and analysed, a review-ready report
    # in HTML and PDF, a figure as SVG, all from a folder with no checkout in it.
    import json
    import xml.etree.ElementTree as ET

    import pypdf

    _, scripts = installed
    command = str(scripts / "bandsketch")
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "QT_QPA_PLATFORM")}
    listed = _run([command, "samples"], cwd=tmp_path, env=env).stdout
    assert "ce_hydrophone_preamp" in listed and "two_stage_miller" in listed
    data = json.loads(_run([command, "analyze", "--sample", "ce_hydrophone_preamp", "--json"],
                           cwd=tmp_path, env=env).stdout)
    assert data["format"] == "bandsketch-analysis" and data["f_high_exact"] > 0
    for name in ("review.html", "review.pdf"):
        _run([command, "report", "--sample", "ce_hydrophone_preamp", "-o", name, "--samples", "200"],
             cwd=tmp_path, env=env)
    html = (tmp_path / "review.html").read_text(encoding="utf-8")
    assert html.count("<svg") == 4 and "ce_hydrophone_preamp.json" in html
    pdf = pypdf.PdfReader(tmp_path / "review.pdf")
    assert len(pdf.pages) <= 3 and "CE hydrophone preamp" in " ".join(pdf.pages[0].extract_text().split())
    _run([command, "figure", "--sample", "ce_hydrophone_preamp", "--what", "sheet", "-o", "sheet.svg"],
         cwd=tmp_path, env=env)
    root = ET.parse(tmp_path / "sheet.svg").getroot()
    assert root.tag == "{http://www.w3.org/2000/svg}svg" and root.get("viewBox")
