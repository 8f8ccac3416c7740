"""The ``bandsketch`` command's manners: samples, version, errors that name the file, exit
codes, a console that cannot show every character, progress on long work.

Common practice, no source, except where a check names one (exit status 2 for bad usage is
argparse's own convention, Python documentation, argparse.ArgumentParser.exit).
"""

from __future__ import annotations

import io
import os
import subprocess
import sys

import pytest

import bandsketch
from bandsketch.app import cli, console
from bandsketch.app.cli import EXIT_BAD_INPUT, EXIT_FAILED, EXIT_OK, main
from bandsketch.engine.design.samples import list_samples, load_sample


def run(capsys, *argv):
    try:
        code = main(list(argv))
    except SystemExit as exc:  # argparse ends --version, --help and bad usage this way
        code = exc.code
    out, err = capsys.readouterr()
    return code, out, err


def test_samples_lists_every_shipped_sample_on_one_line_each(capsys):
    code, out, _ = run(capsys, "samples")
    assert code == EXIT_OK
    samples = list_samples()
    assert len(samples) >= 6
    lines = out.splitlines()
    for s in samples:
        (line,) = [ln for ln in lines if ln.startswith(s.name + " ")]
        assert s.title in line and s.summary in line
        assert "invented" in s.summary.lower()  # every sample says it is an invented scenario
    assert "bandsketch --sample" in out


def test_a_sample_by_name_is_analysed(capsys):
    code, out, _ = run(capsys, "analyze", "--sample", "ce_hydrophone_preamp")
    assert code == EXIT_OK
    assert out.startswith(load_sample("ce_hydrophone_preamp").title)
    assert "Upper corner" in out


@pytest.mark.parametrize("command", [c for c in cli.SUBCOMMANDS if c not in ("samples",)])
def test_every_command_on_a_design_takes_a_sample_by_name(command):
    # argparse would otherwise read "--sample" as an abbreviation of "--samples" where a
    # command has that option and no --sample of its own (advise did).
    parser = getattr(cli, f"_{command}_parser")()
    assert not parser.allow_abbrev
    assert any("--sample" in action.option_strings for action in parser._actions)


def test_advise_on_a_sample_prints_its_table(capsys):
    code, out, _ = run(capsys, "advise", "--sample", "ce_hydrophone_preamp", "--samples", "100")
    assert code == EXIT_OK
    assert out.startswith("Advice for CE hydrophone preamp") and "misses minimum f_H" in out


def test_an_unknown_sample_names_the_ones_there_are(capsys):
    code, _, err = run(capsys, "analyze", "--sample", "no_such_stage")
    assert code == EXIT_BAD_INPUT
    assert "no_such_stage" in err and "photodiode_tia" in err


def test_a_file_and_a_sample_together_are_refused(capsys, tmp_path):
    code, _, err = run(capsys, "analyze", str(tmp_path / "x.json"), "--sample", "photodiode_tia")
    assert code == EXIT_BAD_INPUT
    assert "not allowed with" in err


def test_version_names_bandsketch_and_its_libraries(capsys):
    code, out, _ = run(capsys, "--version")
    assert code == EXIT_OK
    assert out.startswith(f"bandsketch {bandsketch.__version__} (Python ")
    for lib in ("numpy", "scipy", "PySide6"):
        assert lib in out
    assert len(out.splitlines()) == 1


def test_help_documents_the_exit_codes(capsys):
    for argv in ([], ["analyze"], ["report"], ["spread"], ["samples"]):
        code, out, _ = run(capsys, *argv, "--help")
        assert code == EXIT_OK
        assert "exit status: 0 done; 1 the work failed" in " ".join(out.split())


def test_a_folder_is_named_and_refused(capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, _, err = run(capsys, "analyze", ".")
    assert code == EXIT_BAD_INPUT
    assert err.startswith(f"bandsketch: {tmp_path}: cannot be read: it is a folder")
    assert "Traceback" not in err


def test_a_missing_file_is_named(capsys, tmp_path):
    code, _, err = run(capsys, "analyze", str(tmp_path / "gone.json"))
    assert code == EXIT_BAD_INPUT
    assert "gone.json: cannot be read" in err


def test_an_output_that_cannot_be_written_is_a_failure_that_names_it(capsys, tmp_path):
    target = tmp_path / "no" / "such" / "folder" / "sweep.csv"
    code, _, err = run(capsys, "analyze", "--sample", "photodiode_tia", "--csv", str(target))
    assert code == EXIT_FAILED
    assert str(target) in err and "could not be written" in err


@pytest.mark.parametrize("name", ["report.txt", "report", "report.pdf.bak"])
def test_a_report_must_be_html_or_pdf(capsys, tmp_path, name):
    code, _, err = run(capsys, "report", "--sample", "photodiode_tia", "-o", str(tmp_path / name))
    assert code == EXIT_BAD_INPUT
    assert "FILE.html" in err and "FILE.pdf" in err
    assert not (tmp_path / name).exists()


def test_a_cp1252_console_gets_ascii_forms_not_a_crash(tmp_path):
    # Windows consoles default to cp1252, which has µ but neither − (U+2212) nor Ω (Microsoft,
    # "Code Page 1252", the published table).
    env = {**os.environ, "PYTHONIOENCODING": "cp1252"}
    done = subprocess.run([sys.executable, "-m", "bandsketch", "analyze", "--sample", "photodiode_tia"],
                          capture_output=True, env=env, cwd=tmp_path, timeout=120)
    assert done.returncode == EXIT_OK, done.stderr.decode("cp1252", "replace")
    out = done.stdout.decode("cp1252")
    assert "Ohm" in out and "−" not in out and "Ω" not in out
    assert "Traceback" not in done.stderr.decode("cp1252", "replace")


def test_the_ascii_forms():
    raw = io.BytesIO()
    stream = io.TextIOWrapper(raw, encoding="ascii")
    console.fall_back_to_ascii(stream)
    stream.write("−84.5 V/V, 97.8 kΩ, 2 µs, τ ≈ 1 ns, ☃")
    stream.flush()
    assert raw.getvalue().decode("ascii") == "-84.5 V/V, 97.8 kOhm, 2 us, tau ~ 1 ns, ?"


class _Clock:
    def __init__(self):
        self.now = 0.0

    def __call__(self):
        return self.now


def test_progress_waits_a_second_then_counts_tenths_when_not_a_terminal():
    clock, out = _Clock(), io.StringIO()
    progress = console.Progress("spread", out, clock)
    progress(100, 1000)
    assert out.getvalue() == ""  # quick work shows nothing
    clock.now = console.PROGRESS_AFTER_S + 0.1
    for done in range(200, 1001, 100):
        progress(done, 1000)
        progress(done, 1000)  # the same tenth again prints nothing new
    assert out.getvalue().splitlines() == [f"spread: {p} %" for p in range(20, 101, 10)]


def test_progress_draws_a_bar_on_a_terminal():
    class Terminal(io.StringIO):
        def isatty(self):
            return True

    clock, out = _Clock(), Terminal()
    clock.now = 5.0
    progress = console.Progress("spread", out, clock)
    progress.start = 0.0
    progress(500, 1000)
    progress(1000, 1000)
    assert out.getvalue() == (f"\rspread [{'#' * 15}{'.' * 15}]  50 %"
                              f"\rspread [{'#' * 30}] 100 %\n")


def test_progress_of_stages_shares_one_clock_and_names_each_stage():
    clock, out = _Clock(), io.StringIO()
    progress = console.Progress("report", out, clock)
    first, second = progress.stage("spread"), progress.stage("suggestions")
    first(1, 2)
    clock.now = console.PROGRESS_AFTER_S + 0.1  # the whole has now run over a second
    first(2, 2)
    second(1, 2)
    second(2, 2)
    assert out.getvalue().splitlines() == ["report (spread): 100 %", "report (suggestions): 50 %",
                                           "report (suggestions): 100 %"]


def test_the_report_reports_progress_on_stderr(capsys, monkeypatch, tmp_path):
    monkeypatch.setattr(console, "PROGRESS_AFTER_S", 0.0)
    code, _, err = run(capsys, "report", "--sample", "ce_hydrophone_preamp", "--samples", "300",
                       "-o", str(tmp_path / "r.html"))
    assert code == EXIT_OK
    assert "report (spread): 100 %" in err and "report (suggestions): 100 %" in err


def test_spread_reports_progress_on_stderr(capsys, monkeypatch):
    monkeypatch.setattr(console, "PROGRESS_AFTER_S", 0.0)
    code, out, err = run(capsys, "spread", "--sample", "ce_hydrophone_preamp", "--samples", "300")
    assert code == EXIT_OK
    assert "spread: 100 %" in err and "%" not in out.split("\n")[0].replace("0.135 %", "")
    assert "samples, seed 1" in out


@pytest.mark.parametrize("name, magic", [("r.pdf", b"%PDF-"), ("r.html", b"<!DOCTYPE html>"), ("R.HTM", b"<!DOCTYPE html>")])
def test_the_report_is_written_in_the_format_its_name_says(capsys, tmp_path, name, magic):
    code, out, _ = run(capsys, "report", "--sample", "ce_hydrophone_preamp", "--samples", "200",
                       "-o", str(tmp_path / name))
    assert code == EXIT_OK and name in out
    assert (tmp_path / name).read_bytes().startswith(magic)


def test_a_sample_named_as_a_file_is_pointed_to_as_a_sample(capsys, monkeypatch, tmp_path):
    monkeypatch.chdir(tmp_path)  # no file of that name here
    code, _, err = run(capsys, "analyze", "ce_hydrophone_preamp")
    assert code == 2
    assert "ce_hydrophone_preamp: cannot be read" in err and "give it as --sample ce_hydrophone_preamp" in err
