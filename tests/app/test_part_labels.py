"""Part names and values on the sheet: beside the symbol, off its leads and off the wires."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import pytest
from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QFontMetricsF

from bandsketch.app.canvas.items import LABEL_GAP, PartItem, name_font, value_font
from bandsketch.app.canvas.symbols import ResistorStyle
from bandsketch.app.theme import LIGHT
from bandsketch.engine.design.designfile import load_design

SAMPLES = sorted((Path(__file__).parents[2] / "sample_designs").glob("*.json"))


def _text_rect(item: PartItem) -> QRectF:
    """The scene rectangle the item's texts take (item coordinates)."""
    rect = QRectF()
    for text in item._texts:
        m = QFontMetricsF(name_font() if text.bold else value_font())
        rect = rect.united(QRectF(text.origin.x(), text.origin.y() - m.ascent(), m.horizontalAdvance(text.text),
                                  m.height()))
    return rect


@pytest.mark.parametrize("rotation", [90, 270])
@pytest.mark.parametrize("mirror", [False, True])
def test_a_horizontal_capacitor_is_labelled_above_its_plates(qapp, rotation, mirror):
    doc = load_design(SAMPLES[0])
    cap = next(p for p in doc.parts.values() if p.kind == "capacitor")
    item = PartItem(replace(cap, rotation=rotation, mirror=mirror), LIGHT, ResistorStyle.ZIGZAG)
    texts, body = _text_rect(item), item._symbol.body
    assert texts.bottom() <= body.top() - LABEL_GAP + 1, "above the plates, with a gap"
    assert abs(texts.center().x() - body.center().x()) < 1, "centred over them"


@pytest.mark.parametrize("path", SAMPLES, ids=lambda p: p.stem)
def test_capacitor_labels_clear_the_wires(qapp, path):
    doc = load_design(path)
    for part in doc.parts.values():
        if part.kind != "capacitor":
            continue
        item = PartItem(part, LIGHT, ResistorStyle.ZIGZAG)
        label = _text_rect(item).translated(part.x, part.y)
        for wire in doc.wires.values():
            for a, b in zip(wire.points, wire.points[1:]):
                segment = QRectF(QPointF(*a), QPointF(*b)).normalized().adjusted(-1, -1, 1, 1)
                assert not label.intersects(segment), f"{part.name}'s label lies on wire {wire.id}"
