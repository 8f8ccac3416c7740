"""The robustness findings that show on the command line and in the scripting API, as
regression tests: each runs the real ``bandsketch`` command (installed with the package) or
the public API the way a script would.

Common practice, no source: these are properties of our own program (no traceback, a
message naming the part and what to do, files kept as the user had them).
"""

from __future__ import annotations

import json
import os
import shutil
import stat
import subprocess
import sys
from pathlib import Path

import pytest

from bandsketch.app import cli
from bandsketch.engine import analyze
from bandsketch.engine.core.errors import CircuitError
from bandsketch.engine.design.designfile import load_design, save_design
from bandsketch.engine.network.circuit import BLOCK_KEYWORDS, Circuit
from bandsketch.engine.design.parts import KINDS

CE = Path(__file__).parent / "app" / "invented_ce_stage.json"
COMMAND = shutil.which("bandsketch", path=str(Path(sys.executable).parent))


def _run(*args) -> subprocess.CompletedProcess:
    assert COMMAND, "the bandsketch command is installed beside the interpreter"
    return subprocess.run([COMMAND, *map(str, args)], capture_output=True, text=True, timeout=300)


def _variant(tmp_path, name, change) -> Path:
    data = json.loads(CE.read_text(encoding="utf-8"))
    change(data)
    path = tmp_path / name
    path.write_text(json.dumps(data), encoding="utf-8")
    return path


def _part(data, kind):
    return next(p for p in data["parts"] if p["kind"] == kind)


def test_a_bad_transistor_mode_is_named_by_the_command(tmp_path):
    # Finding 2: it used to say "Q1 gm: a value is needed".
    path = _variant(tmp_path, "bogus.json", lambda d: _part(d, "bjt").setdefault("params", {}).update(mode="bogus"))
    done = _run("analyze", path)
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert "bogus.json" in done.stderr and "Model from" in done.stderr and "bogus" in done.stderr


def test_values_beyond_double_precision_are_refused_naming_the_part_and_the_range(tmp_path):
    # Finding 3: 1e-300 and 1e300 crashed analyze, report and spread with tracebacks.
    def tiny(d):
        next(p for p in d["parts"] if p["kind"] == "resistor")["params"]["value"] = "1e-300"
    path = _variant(tmp_path, "tiny.json", tiny)
    for args in (("analyze", path), ("report", path, "-o", tmp_path / "r.html"), ("spread", path, "--samples", 20)):
        done = _run(*args)
        assert done.returncode == 2 and "Traceback" not in done.stderr, done.stderr
        assert "1e-24 to 1e+24" in done.stderr, done.stderr


def test_the_report_names_a_sensitivity_it_cannot_compute(tmp_path):
    # Finding 4: two coupling capacitors in parallel make the low-band port matrix singular;
    # the report used to stop with LinAlgError.
    def parallel(d):
        cin = next(p for p in d["parts"] if p["name"] == "Cin")
        d["parts"].append({**cin, "name": "Cin2", "x": cin["x"], "y": cin["y"] + 0})
    path = _variant(tmp_path, "parallel.json", parallel)
    out = tmp_path / "parallel.html"
    done = _run("report", path, "-o", out, "--samples", 20)
    assert done.returncode == 0, done.stderr
    assert "sensitivities are not shown" in out.read_text(encoding="utf-8")


def test_an_unexpected_failure_is_one_line_with_a_hint_and_status_1(monkeypatch, capsys):
    def broken(*args, **kwargs):
        raise RuntimeError("something nobody foresaw\nsecond line")

    monkeypatch.setattr("bandsketch.engine.analyze", broken)
    assert cli.main(["analyze", str(CE)]) == 1
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "RuntimeError: something nobody foresaw" in err and "report" in err


@pytest.mark.skipif(os.name != "posix", reason="POSIX permission bits")
def test_saving_keeps_the_files_permissions_and_a_new_file_follows_the_umask(tmp_path):
    # Finding 8: saving over a 0644 file left it 0600.
    doc = load_design(CE)
    path = tmp_path / "kept.json"
    path.write_text("{}")
    path.chmod(0o644)
    save_design(doc, path)
    assert stat.S_IMODE(path.stat().st_mode) == 0o644
    path.chmod(0o640)
    save_design(doc, path)
    assert stat.S_IMODE(path.stat().st_mode) == 0o640
    old = os.umask(0o027)
    try:
        save_design(doc, tmp_path / "new.json")
    finally:
        os.umask(old)
    assert stat.S_IMODE((tmp_path / "new.json").stat().st_mode) == 0o640


# -- the scripting API (finding 7) ----------------------------------------------------------

def test_an_unknown_keyword_is_refused_naming_it_and_the_part():
    with pytest.raises(CircuitError, match=r"Q1: bjt\(\) takes no keyword 'cmuu'"):
        Circuit().bjt("Q1", "c", "b", "e", gm="40m", rpi="2k5", cmuu="1p")
    with pytest.raises(CircuitError, match="M1: mosfet"):
        Circuit().mosfet("M1", "d", "g", "s", gm="5m", cgs_="1p")


def test_small_signal_and_operating_point_values_together_are_refused():
    with pytest.raises(CircuitError, match=r"Q1: give small-signal values \(gm, rpi\) or an operating point"):
        Circuit().bjt("Q1", "c", "b", "e", gm="40m", rpi="2k5", ic="1m", beta="100")


@pytest.mark.parametrize("name", ["", "  ", None])
def test_an_empty_part_name_is_refused(name):
    with pytest.raises(CircuitError, match="give every part a name"):
        Circuit().resistor(name, "a", "b", "1k")


def test_pinning_a_low_pass_capacitor_to_the_low_band_is_named_when_nothing_gets_through():
    c = Circuit("RC low-pass (invented)")
    c.vsource("V1", "in", "0")
    c.resistor("R1", "in", "o", "1k")
    c.capacitor("C1", "o", "0", "1n")
    c.output("o")
    with pytest.raises(CircuitError, match="band pins \\(C1 to the low band\\)") as info:
        analyze(c, bands={"C1": "low"})
    assert info.value.parts == ("C1",)


def test_the_block_keywords_are_the_catalogues_fields():
    for kind, modes in BLOCK_KEYWORDS.items():
        # A field may serve several modes (β: typed operating point and bias from the sheet);
        # the choice fields (polarity, mode) are keywords of every mode.
        catalogue = {(f.key, mode) for f in KINDS[kind].fields if f.unit != "choice"
                     for mode in (f.mode if isinstance(f.mode, tuple) else (f.mode,))}
        assert catalogue == {(key, mode) for mode, keys in modes.items() for key in keys
                             if KINDS[kind].field(key).unit != "choice"}
