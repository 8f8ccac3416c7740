"""The sheet index keeps the junction dots exactly where a whole-sheet count puts them.

The reference below counts every connection at every point from scratch (pins, wire ends,
bends, and a pin or wire end landing inside another wire's segment: a T counts twice), the
way the sheet did before it kept an index. Random edits — parts placed, moved, turned and
removed, wires drawn, changed and removed, renames, whole-document resets — are followed one
change notice at a time, and after each the index must agree with the reference.
Common practice, no source (a junction is where three or more connections meet).
"""

from __future__ import annotations

from collections import Counter
from dataclasses import replace

from hypothesis import given, settings
from hypothesis import strategies as st

from bandsketch.app import edits
from bandsketch.app.sheet_index import SheetIndex
from bandsketch.engine.design.document import Document, Part, Wire
from bandsketch.engine.design.parts import GRID, ROTATIONS


def _inside(pt, a, b) -> bool:
    (x, y), (ax, ay), (bx, by) = pt, a, b
    return (ax == bx == x and min(ay, by) < y < max(ay, by)) or (ay == by == y and min(ax, bx) < x < max(ax, bx))


def reference_junctions(doc) -> set:
    degree = Counter(pt for p in doc.parts.values() for pt in p.pins().values())
    pins = set(degree)
    wires = list(doc.wires.values())
    for w in wires:
        degree[w.points[0]] += 1
        degree[w.points[-1]] += 1
        for pt in w.points[1:-1]:
            degree[pt] += 2
    touching = [(w, pt) for w in wires for pt in (w.points[0], w.points[-1])] + [(None, pt) for pt in pins]
    for owner, pt in touching:
        for other in wires:
            if other is not owner and any(_inside(pt, a, b) for a, b in zip(other.points, other.points[1:])):
                degree[pt] += 2
    return {pt for pt, n in degree.items() if n >= 3}


cell = st.integers(-6, 6).map(lambda v: v * GRID)
point = st.tuples(cell, cell)


@st.composite
def polyline(draw):
    pts = [draw(point)]
    for _ in range(draw(st.integers(1, 4))):
        x, y = pts[-1]
        step = draw(cell)
        pts.append((x + step, y) if draw(st.booleans()) else (x, y + step))
    return tuple(pts)


actions = st.one_of(
    st.tuples(st.just("place"), st.sampled_from(["resistor", "capacitor", "ground", "bjt", "label"]), point,
              st.sampled_from(ROTATIONS)),
    st.tuples(st.just("wire"), polyline()),
    st.tuples(st.just("move"), st.integers(0, 20), point),
    st.tuples(st.just("rewire"), st.integers(0, 20), polyline()),
    st.tuples(st.just("remove"), st.integers(0, 20)),
    st.tuples(st.just("unwire"), st.integers(0, 20)),
    st.tuples(st.just("rename"), st.integers(0, 20)),
    st.tuples(st.just("reset")),
)


def _apply(doc: Document, action) -> None:
    kind = action[0]
    parts, wires = list(doc.parts), list(doc.wires)
    if kind == "place":
        _, what, (x, y), rotation = action
        doc.add_part(Part(what, doc.new_name(what), x, y, rotation))
    elif kind == "wire":
        doc.add_wire(Wire(doc.new_wire_id(), action[1]))
    elif kind == "move" and parts:
        name = parts[action[1] % len(parts)]
        doc.replace_part(name, replace(doc.parts[name], x=action[2][0], y=action[2][1]))
    elif kind == "rewire" and wires:
        doc.replace_wire(Wire(wires[action[1] % len(wires)], action[2]))
    elif kind == "remove" and parts:
        doc.remove_part(parts[action[1] % len(parts)])
    elif kind == "unwire" and wires:
        doc.remove_wire(wires[action[1] % len(wires)])
    elif kind == "rename" and parts:
        name = parts[action[1] % len(parts)]
        doc.replace_part(name, replace(doc.parts[name], name=f"{name}x"))
    elif kind == "reset":
        other = Document()
        other.replace_all(doc)
        doc.replace_all(other)


@settings(max_examples=60, deadline=None, derandomize=True)
@given(st.lists(actions, min_size=1, max_size=25))
def test_the_index_follows_every_change_exactly(steps):
    doc = Document()
    index = SheetIndex(doc)
    doc.changed.connect(index.follow)
    for action in steps:
        _apply(doc, action)
        assert index.junctions == reference_junctions(doc), action
    assert SheetIndex(doc).junctions == index.junctions


def test_a_drag_moves_the_dots_with_the_parts():
    doc = Document()
    doc.add_part(Part("resistor", "R1", 0, 0))
    doc.add_part(Part("resistor", "R2", 0, 4 * GRID))
    doc.add_wire(Wire(1, ((0, 2 * GRID), (4 * GRID, 2 * GRID))))
    assert edits.junctions(doc) == [(0, 2 * GRID)]
    index = SheetIndex(doc)
    doc.changed.connect(index.follow)
    edits.apply_patch(doc, edits.move(doc, list(doc.parts), list(doc.wires), GRID, 0))
    assert index.junctions == {(GRID, 2 * GRID)} == set(edits.junctions(doc))
