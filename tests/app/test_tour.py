"""The README's tour, driven as a user does and counted: an (invented) degenerated
common-source stage built from an empty sheet, every click, key and typed text one action.
The count is the one the README states (common practice, no source: counting user actions
to complete a task is how interaction cost is usually compared)."""

import re
from pathlib import Path

from PySide6.QtCore import Qt

from bandsketch.engine.design.netlist import build_netlist, connectivity_problems
from sheet import at

README = Path(__file__).parents[2] / "README.md"


class Tour:
    """A user at the window, counting what they do."""

    def __init__(self, qtbot, window):
        self.qtbot, self.window, self.actions = qtbot, window, 0
        window.view.setFocus()

    def key(self, key):
        self.actions += 1
        self.qtbot.keyClick(self.window.view, key)

    def click(self, x, y, modifier=Qt.KeyboardModifier.NoModifier):
        self.actions += 1
        vp = self.window.view.viewport()
        self.qtbot.mouseMove(vp, at(self.window, x, y))
        self.qtbot.mouseClick(vp, Qt.MouseButton.LeftButton, modifier, at(self.window, x, y))

    def double_click(self, x, y):
        self.actions += 1
        self.qtbot.mouseDClick(self.window.view.viewport(), Qt.MouseButton.LeftButton,
                               Qt.KeyboardModifier.NoModifier, at(self.window, x, y))

    def type(self, text):
        self.actions += 2  # the text, then Enter
        self.qtbot.keyClicks(self.window.inplace, text)
        self.qtbot.keyClick(self.window.inplace, Qt.Key.Key_Return)

    def place(self, key, *spots, turn=False):
        """A part key, T to turn it, then a click for each copy (Shift keeps placing)."""
        self.key(key)
        if turn:
            self.key(Qt.Key.Key_T)
        for i, spot in enumerate(spots):
            last = i == len(spots) - 1
            self.click(*spot, Qt.KeyboardModifier.NoModifier if last else Qt.KeyboardModifier.ShiftModifier)

    def wire(self, start, end):
        """Press a pin, click the other end: an orthogonal wire, one bend at most."""
        self.click(*start)
        self.click(*end)

    def name_at(self, part):
        item = self.window.scene.part_item(part)
        spot = item.mapToScene(item.name_rect().center())
        return spot.x(), spot.y()


def build_stage(tour):
    doc = tour.window.doc
    tour.place(Qt.Key.Key_V, (80, 280))
    tour.place(Qt.Key.Key_R, (160, 240), turn=True)
    tour.place(Qt.Key.Key_C, (260, 240), turn=True)
    tour.place(Qt.Key.Key_R, (320, 160))
    tour.place(Qt.Key.Key_R, (320, 320))
    tour.place(Qt.Key.Key_M, (400, 240))
    tour.place(Qt.Key.Key_R, (420, 120))
    tour.place(Qt.Key.Key_R, (420, 340))
    tour.place(Qt.Key.Key_C, (500, 200), turn=True)
    tour.place(Qt.Key.Key_R, (580, 240))
    tour.place(Qt.Key.Key_P, (320, 120), (420, 80))
    tour.place(Qt.Key.Key_G, (80, 320), (320, 360), (420, 380), (580, 280))
    tour.place(Qt.Key.Key_O, (580, 200))
    placed = tour.actions
    for start, end in (((80, 240), (120, 240)), ((200, 240), (220, 240)), ((300, 240), (360, 240)),
                       ((320, 200), (320, 240)), ((320, 280), (320, 240)), ((420, 160), (420, 200)),
                       ((420, 280), (420, 300)), ((420, 200), (460, 200)), ((540, 200), (580, 200))):
        tour.wire(start, end)
    wired = tour.actions - placed
    by_spot = {(p.x, p.y): n for n, p in doc.parts.items()}
    names = {"Vsig": (80, 280), "Rsig": (160, 240), "Cin": (260, 240), "RG1": (320, 160), "RG2": (320, 320),
             "M1": (400, 240), "RD": (420, 120), "RS": (420, 340), "Cout": (500, 200), "RL": (580, 240)}
    values = {"Rsig": "600", "Cin": "1u", "RG1": "1M", "RG2": "470k", "RD": "4k7", "RS": "470", "Cout": "1u",
              "RL": "10k", "M1": "8m"}
    start = tour.actions
    for role, spot in names.items():
        if role in values:
            tour.double_click(*spot)
            tour.type(values[role])
    valued = tour.actions - start
    start = tour.actions
    for role, spot in names.items():
        if by_spot[spot] != role:
            tour.double_click(*tour.name_at(by_spot[spot]))
            tour.type(role)
    renamed = tour.actions - start
    return placed, wired, valued, renamed


def test_the_tour_builds_the_stage_in_the_actions_the_readme_counts(qtbot, window):
    tour = Tour(qtbot, window)
    placed, wired, valued, renamed = build_stage(tour)
    doc = window.doc
    assert len(doc.parts) == 17
    assert connectivity_problems(doc) == [], [p.message for p in connectivity_problems(doc)]
    nets = build_netlist(doc).pin_net
    gate = {nets[(p, pin)] for p, pin in (("Cin", "a"), ("M1", "gate"), ("RG1", "b"), ("RG2", "a"))}
    drain = {nets[(p, pin)] for p, pin in (("RD", "b"), ("M1", "drain"), ("Cout", "b"))}
    source = {nets[(p, pin)] for p, pin in (("RS", "a"), ("M1", "source"))}
    assert len(gate) == len(drain) == len(source) == 1 and len(gate | drain | source) == 3
    assert nets[("RS", "b")] == nets[("RG2", "b")] == "0"
    assert doc.parts["RD"].params["value"] == "4k7" and doc.parts["M1"].params["gm"] == "8m"
    assert doc.input_source == "Vsig"
    window.analysis_panel.runner.wait()
    assert window.analysis_panel.outcome.ok
    total = tour.actions
    tour_text = " ".join(README.read_text(encoding="utf-8").split())
    found = re.search(r"now takes (\d+) actions \((\d+) to place 17 parts, (\d+) to wire them, (\d+) for "
                      r"values, (\d+) for renaming", tour_text)
    assert found, "the README states the tour's count"
    assert tuple(map(int, found.groups())) == (total, placed, wired, valued, renamed)
