"""One edit reads the sheet once, and the sensitivities leave the UI thread (issue 10).

Common practice, no source: these check the app's own wiring, not a figure of the method.
"""

from __future__ import annotations

import threading
from pathlib import Path

from bandsketch.app import edits
from bandsketch.app.advisor import panel as advisor_panel
from bandsketch.engine.design import netlist
from bandsketch.engine.design.designfile import load_design

SAMPLE = Path(__file__).resolve().parents[2] / "sample_designs" / "two_stage_miller.json"


def test_one_edit_builds_the_nets_and_the_circuit_once(window, monkeypatch):
    window.set_document(load_design(SAMPLE), str(SAMPLE))
    runner = window.analysis_panel.runner
    runner.wait()
    builds = []
    real = netlist._circuit_and_errors
    monkeypatch.setattr(netlist, "_circuit_and_errors", lambda doc: builds.append(1) or real(doc))
    nets = []
    real_nets = netlist.build_netlist
    monkeypatch.setattr(netlist, "build_netlist", lambda doc: nets.append(1) or real_nets(doc))
    window.editor.patch(edits.edit_field(window.doc, "RL", "value", "12k"), "Set RL")
    runner.wait()
    assert runner.last.doc.parts["RL"].params["value"] == "12k"
    assert window.scene.problems == [] and runner.last.ok
    assert (len(builds), len(nets)) == (1, 1), "the sheet's marks and the analysis read the sheet once"


def test_the_sensitivities_are_worked_out_off_the_ui_thread(window, monkeypatch):
    window.set_document(load_design(SAMPLE), str(SAMPLE))
    window.analysis_panel.runner.wait()
    where = []
    real = advisor_panel.sensitivities
    monkeypatch.setattr(advisor_panel, "sensitivities",
                        lambda *args: where.append(threading.current_thread()) or real(*args))
    advisor = window.advisor
    window.analysis_tabs.setCurrentWidget(advisor)
    advisor.tabs.setCurrentIndex(1)
    assert advisor.sens_jobs.wait()
    assert where and threading.main_thread() not in where
    assert advisor.sens_table.rowCount() > 5
