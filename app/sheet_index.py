"""Where pins and wires sit on the sheet, by grid line, kept up to date change by change.

A junction (three or more connections at a point: pins, wire ends, bends, and a pin or wire
end landing inside another wire's segment) depends only on what lies on the point's row and
column, so the index buckets wire segments by the line they run along and the touching points
(pins and wire ends) by row. A change to one part or wire then re-judges only the points it
had or has and those its segments pass over: a drag, paste or undo costs what it touched,
not the whole sheet. No Qt here.
"""

from __future__ import annotations

from collections import Counter, defaultdict

from bandsketch.engine.design.document import PART_CHANGES, WIRE_CHANGES, Change, ChangeKind, Document

Point = tuple[int, int]


TILE = 400
"""Scene units of one stretch of a row or column in :class:`Lines` (20 grid steps): a point
is looked up among the segments over its own stretch, not along the whole sheet."""


class Lines:
    """Wire segments bucketed by the row or column they run along, and by stretch of it.

    Parameters
    ----------
    wires : iterable of (id, points)
        The wires to index (an id is anything hashable).
    """

    def __init__(self, wires=()):
        self._rows: dict = defaultdict(dict)  # (y, x stretch) -> wire id -> [(x1, x2)]
        self._cols: dict = defaultdict(dict)  # (x, y stretch) -> wire id -> [(y1, y2)]
        for wid, points in wires:
            self.add(wid, points)

    def _cells(self, points):
        for (ax, ay), (bx, by) in zip(points, points[1:]):
            if ay == by and ax != bx:
                line, at, lo, hi = self._rows, ay, min(ax, bx), max(ax, bx)
            elif ax == bx and ay != by:
                line, at, lo, hi = self._cols, ax, min(ay, by), max(ay, by)
            else:
                continue
            for stretch in range(lo // TILE, hi // TILE + 1):
                yield line, (at, stretch), (lo, hi)

    def add(self, wid, points) -> None:
        """Index one wire's segments."""
        for line, key, span in self._cells(points):
            line[key].setdefault(wid, []).append(span)

    def remove(self, wid, points) -> None:
        """Drop one wire's segments (given the points it was indexed with)."""
        for line, key, _span in self._cells(points):
            if wid in line.get(key, {}):
                del line[key][wid]
                if not line[key]:
                    del line[key]

    def through(self, pt: Point) -> set:
        """Ids of the wires with a segment whose inside (not its ends) holds ``pt``."""
        x, y = pt
        out = {wid for wid, spans in self._rows.get((y, x // TILE), {}).items() if any(a < x < b for a, b in spans)}
        out.update(wid for wid, spans in self._cols.get((x, y // TILE), {}).items()
                   if any(a < y < b for a, b in spans))
        return out


def _segment_cells(points):
    """(row y, x1, x2) or (column x, y1, y2) of each straight segment, as ("row" | "col", at, lo, hi)."""
    for (ax, ay), (bx, by) in zip(points, points[1:]):
        if ay == by and ax != bx:
            yield "row", ay, min(ax, bx), max(ax, bx)
        elif ax == bx and ay != by:
            yield "col", ax, min(ay, by), max(ay, by)


class SheetIndex:
    """The sheet's junction points, updated from the document's change notices.

    Parameters
    ----------
    doc : Document
        The design; its owner passes each of the document's change notices to :meth:`follow`.

    Attributes
    ----------
    junctions : set of (int, int)
        Points (scene units) where three or more connections meet.
    """

    def __init__(self, doc: Document):
        self.doc = doc
        self._reset()

    def _reset(self) -> None:
        self._pins: dict = {}          # part name -> its pin points
        self._wires: dict = {}         # wire id -> its points
        self._direct = Counter()       # point -> pins + wire ends + 2 per bend or inner point
        self._pin_count = Counter()    # point -> pins there
        self._ends = defaultdict(Counter)  # point -> wire id -> ends of it there
        self._touch_rows = defaultdict(Counter)  # y -> x -> pins and wire ends on that row
        self._touch_cols = defaultdict(Counter)  # x -> y -> the same by column
        self._lines = Lines()
        for name, part in self.doc.parts.items():
            self._add_pins(name, tuple(part.pins().values()))
        for wid, wire in self.doc.wires.items():
            self._add_wire(wid, wire.points)
        self.junctions = {pt for pt in self._direct if self._degree(pt) >= 3}

    # -- keeping up ----------------------------------------------------------------------
    def follow(self, change: Change) -> tuple[set, set]:
        """Bring the index up to date after one change; return the junctions (added, removed)."""
        if change.what is ChangeKind.RESET:
            before = self.junctions
            self._reset()
            return self.junctions - before, before - self.junctions
        dirty: set = set()
        if change.what in PART_CHANGES:
            old = self._pins.pop(change.key, None)
            if old is not None:
                self._drop_pins(old)
                dirty.update(old)
            name = change.new_key or change.key
            part = self.doc.parts.get(name)
            if part is not None:
                new = tuple(part.pins().values())
                self._add_pins(name, new)
                dirty.update(new)
        elif change.what in WIRE_CHANGES:
            old = self._wires.get(change.key)
            if old is not None:
                dirty |= self._wire_points(old)
                self._drop_wire(change.key, old)
            wire = self.doc.wires.get(change.key)
            if wire is not None:
                self._add_wire(change.key, wire.points)
                dirty |= self._wire_points(wire.points)
        added, removed = set(), set()
        for pt in dirty:
            now = self._degree(pt) >= 3
            if now and pt not in self.junctions:
                self.junctions.add(pt)
                added.add(pt)
            elif not now and pt in self.junctions:
                self.junctions.discard(pt)
                removed.add(pt)
        return added, removed

    # -- the counts ----------------------------------------------------------------------
    def _degree(self, pt: Point) -> int:
        # A pin point counts once and each wire end once; every other wire whose segment
        # passes over such a point joins it there (a T), which counts twice.
        ends = self._ends.get(pt, {})
        touching = (1 if self._pin_count.get(pt) else 0) + sum(ends.values())
        tees = sum(touching - ends.get(wid, 0) for wid in self._lines.through(pt)) if touching else 0
        return self._direct.get(pt, 0) + 2 * tees

    def _wire_points(self, points) -> set:
        """A wire's own points and the touching points that lie inside its segments."""
        out = set(points)
        for line, at, lo, hi in _segment_cells(points):
            cells = self._touch_rows.get(at, {}) if line == "row" else self._touch_cols.get(at, {})
            out.update((c, at) if line == "row" else (at, c) for c in cells if lo < c < hi)
        return out

    def _touch(self, pt: Point, step: int) -> None:
        x, y = pt
        for table, line, cell in ((self._touch_rows, y, x), (self._touch_cols, x, y)):
            table[line][cell] += step
            if not table[line][cell]:
                del table[line][cell]
                if not table[line]:
                    del table[line]

    def _add_pins(self, name: str, pins: tuple) -> None:
        self._pins[name] = pins
        for pt in pins:
            self._direct[pt] += 1
            self._pin_count[pt] += 1
            self._touch(pt, 1)

    def _drop_pins(self, pins: tuple) -> None:
        for pt in pins:
            self._direct[pt] -= 1
            self._pin_count[pt] -= 1
            self._touch(pt, -1)
            _prune(self._direct, pt)
            _prune(self._pin_count, pt)

    def _add_wire(self, wid: int, points: tuple) -> None:
        self._wires[wid] = points
        self._lines.add(wid, points)
        for pt in (points[0], points[-1]):
            self._direct[pt] += 1
            self._ends[pt][wid] += 1
            self._touch(pt, 1)
        for pt in points[1:-1]:
            self._direct[pt] += 2

    def _drop_wire(self, wid: int, points: tuple) -> None:
        del self._wires[wid]
        self._lines.remove(wid, points)
        for pt in (points[0], points[-1]):
            self._direct[pt] -= 1
            self._ends[pt][wid] -= 1
            if not self._ends[pt][wid]:
                del self._ends[pt][wid]
                if not self._ends[pt]:
                    del self._ends[pt]
            self._touch(pt, -1)
            _prune(self._direct, pt)
        for pt in points[1:-1]:
            self._direct[pt] -= 2
            _prune(self._direct, pt)


def _prune(counter: Counter, pt: Point) -> None:
    if counter.get(pt, 0) <= 0:
        counter.pop(pt, None)
