"""The screenshot path: --select with a name the design has no test picture for is bad
input (exit 2, the name said, no picture written); a good one draws the picture; the window
and its worker threads are torn down before the command returns, run after run."""

import subprocess
import sys

from PySide6.QtGui import QImage

from bandsketch.app.cli import main


def test_select_an_unknown_name_exits_2_and_writes_no_picture(qapp, tmp_path, capsys):
    out = tmp_path / "x.png"
    assert main(["--sample", "ce_hydrophone_preamp", "--screenshot", str(out), "--select", "Cnope"]) == 2
    err = capsys.readouterr().err
    assert "Cnope" in err and "Cin" in err, "the message names the bad name and the good ones"
    assert not out.exists()


def test_select_a_part_that_is_not_reactive_exits_2(qapp, tmp_path, capsys):
    out = tmp_path / "x.png"
    assert main(["--sample", "ce_hydrophone_preamp", "--screenshot", str(out), "--select", "RC"]) == 2
    assert "RC is not a capacitor or inductor" in capsys.readouterr().err
    assert not out.exists()


def test_select_a_capacitor_draws_its_picture(qapp, tmp_path):
    out = tmp_path / "cin.png"
    assert main(["--sample", "ce_hydrophone_preamp", "--screenshot", str(out), "--select", "Cin"]) == 0
    assert QImage(str(out)).width() == 1400


def test_the_screenshot_command_exits_cleanly_run_after_run(tmp_path):
    # A crash at exit (a worker or a widget outliving the application) shows as a signal
    # exit code, not 0; each run is a fresh process, as the command line runs it.
    for i, select in enumerate(("Cin", "CE", "Q1.cmu")):
        out = tmp_path / f"shot{i}.png"
        run = subprocess.run([sys.executable, "-m", "bandsketch", "--sample", "ce_hydrophone_preamp",
                              "--screenshot", str(out), "--select", select],
                             capture_output=True, text=True, timeout=120,
                             env={**__import__("os").environ, "QT_QPA_PLATFORM": "offscreen"})
        assert run.returncode == 0, run.stderr
        assert out.exists()
