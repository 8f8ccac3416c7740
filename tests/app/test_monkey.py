"""A seeded monkey at the window: random placing, wiring, dragging, typing (good, bad, too long,
out of range), turning, copying, pasting, deleting, undoing and redoing.

Invariants, checked every few actions: no exception escapes (pytest-qt fails the test on one
raised in a slot); the analysis shown is of the design as it is (no stale result); undoing
every step gets back the design the run started from and redoing every step the one it had
reached; saving and reopening gives the same design. Common practice, no source.

Bounded for CI (a few seeds, a few dozen actions each). A longer run:
``BANDSKETCH_MONKEY=long`` (30 seeds of 400 actions each), and with it
``BANDSKETCH_MONKEY_SECONDS=3600`` to share that many seconds among the 30 seeds instead (each
runs for its share, however many actions that is, so the whole run ends on time).
"""

from __future__ import annotations

import os
import random
import time

import pytest
from PySide6.QtCore import QCoreApplication, Qt

from bandsketch.app import dialogs
from bandsketch.engine.design.designfile import load_design, save_design
from sheet import click, drag, place, snapshot, wire

LONG = os.environ.get("BANDSKETCH_MONKEY", "").strip().lower() == "long"
SECONDS = float(os.environ.get("BANDSKETCH_MONKEY_SECONDS", "0") or 0)
SEEDS = range(30) if LONG or SECONDS else range(2)
ACTIONS = 400 if LONG or SECONDS else 20
CHECK_EVERY = 10

TITLES = ("Resistor", "Capacitor", "Voltage source", "Ground", "Output probe", "NPN transistor", "n-MOS transistor",
          "Net label", "I-controlled I")
TEXTS = ("4k7", "100n", "1meg", "", "banana", "4,7n", "1e-300", "1e300", "-3", "0", "0" * 300 + "1k", "R" * 201,
         "small_signal", "npn", "V1", "2.2 nF", " 47 ", "1e24", "1e-24", "∞", "\ud800")


def _grid(rng) -> tuple[int, int]:
    return rng.randrange(2, 24) * 20, rng.randrange(2, 18) * 20


def _some_part(rng, window):
    return rng.choice(list(window.doc.parts)) if window.doc.parts else None


def _act(rng, qtbot, window) -> None:
    doc = window.doc
    roll = rng.random()
    if roll < 0.2 or not doc.parts:
        qtbot.mouseClick(window.palette_panel.buttons[rng.choice(TITLES)], Qt.MouseButton.LeftButton)
        click(qtbot, window, *_grid(rng))
        window.controller.escape()
    elif roll < 0.32:
        pins = [pt for p in doc.parts.values() for pt in p.pins().values()]
        a, b = rng.choice(pins), rng.choice(pins)
        if a != b:
            wire(qtbot, window, a, (b[0], a[1]), b)
    elif roll < 0.44:
        part = doc.parts[_some_part(rng, window)]
        drag(qtbot, window, (part.x, part.y), (part.x + rng.randrange(-3, 4) * 20, part.y + rng.randrange(-3, 4) * 20))
    elif roll < 0.6:
        name = _some_part(rng, window)
        window.scene.select([name])
        entries = window.properties._entries
        if entries:
            entry = entries[rng.choice(list(entries))]
            entry.edit.setFocus()
            entry.edit.setText(rng.choice(TEXTS))
            qtbot.keyClick(entry.edit, Qt.Key.Key_Return)
        window.view.setFocus()
    elif roll < 0.66:
        name = _some_part(rng, window)
        window.edit_value_in_place(name)
        editor = getattr(window, "inplace", None)
        if editor is not None and editor.isVisible():
            editor.setText(rng.choice(TEXTS))
            if not editor.accept_text():
                editor.close_editor()
    elif roll < 0.7:
        key = rng.choice(list(window.advisor.target_edits))
        edit = window.advisor.target_edits[key]
        edit.setText(rng.choice(("1M", "20", "40 dB", "10 %", "", "x" * 210)))
        edit.editingFinished.emit()
    elif roll < 0.76:
        window.scene.select(rng.sample(list(doc.parts), k=min(len(doc.parts), rng.randrange(1, 4))))
        rng.choice((window.act_rotate.trigger, window.delete_selection, window.duplicate,
                    lambda: (window.copy(), window.paste())))()
    elif roll < 0.9:
        window.editor.undo()
    else:
        window.editor.redo()


def _check(qtbot, window, tmp_path, start) -> None:
    runner = window.analysis_panel.runner
    assert runner.wait()
    QCoreApplication.processEvents()
    now = snapshot(window.doc)
    assert runner.last is not None and snapshot(runner.last.doc) == now, "the analysis shown is stale"
    path = tmp_path / "monkey.json"
    save_design(window.doc, path)
    assert snapshot(load_design(path)) == now, "save and reopen changed the design"
    stack = window.stack
    here = stack.index()
    stack.setIndex(0)
    assert snapshot(window.doc) == start, "undoing every step did not restore the start"
    stack.setIndex(stack.count())
    reached = snapshot(window.doc)
    stack.setIndex(0)
    stack.setIndex(stack.count())
    assert snapshot(window.doc) == reached, "redoing every step did not reach the same design"
    stack.setIndex(here)
    assert snapshot(window.doc) == now
    window.doc.finish_edit()


@pytest.mark.parametrize("seed", SEEDS)
def test_a_monkey_finds_nothing(qtbot, window, tmp_path, monkeypatch, seed):
    monkeypatch.setattr(dialogs, "show_error", lambda *args: None)
    rng = random.Random(seed)
    deadline = time.monotonic() + SECONDS / len(SEEDS)
    start = snapshot(window.doc)
    actions = 0
    while (time.monotonic() < deadline or actions < CHECK_EVERY) if SECONDS else actions < ACTIONS:
        _act(rng, qtbot, window)
        actions += 1
        if actions % CHECK_EVERY == 0:
            _check(qtbot, window, tmp_path, start)
    _check(qtbot, window, tmp_path, start)
    print(f"seed {seed}: {actions} actions, {len(window.doc.parts)} parts at the end")
