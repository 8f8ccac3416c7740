"""The scene: keeps one item per part and wire in step with the document, and its marks."""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QPen
from PySide6.QtWidgets import QGraphicsScene

from bandsketch.engine.core.band import Band
from bandsketch.engine.design.document import Change, ChangeKind, Document
from bandsketch.engine.design.parts import GRID

from .. import edits
from ..engine_link import SheetReading
from ..sheet_index import SheetIndex
from ..theme import Theme
from .items import JunctionItem, PartItem, ProblemItem, WireItem
from .symbols import ResistorStyle

SHEET_HALF = 20000
"""Half the side of the sheet; far more room than a stage needs, so panning never hits a wall."""

PIN_REACH = 9.0
"""How close (scene units) a click must be to a pin or wire end to land on it."""


class SchematicScene(QGraphicsScene):
    """The drawing of a :class:`Document`; items are rebuilt from the document as it changes.

    Parameters
    ----------
    doc : Document
        The design shown.
    theme : Theme
        Colours.
    style : ResistorStyle
        How resistors are drawn.
    """

    def __init__(self, doc: Document, theme: Theme, style: ResistorStyle, reading: SheetReading):
        super().__init__()
        self.doc = doc
        self.reading = reading
        self.theme = theme
        self.style = style
        self.setSceneRect(QRectF(-SHEET_HALF, -SHEET_HALF, 2 * SHEET_HALF, 2 * SHEET_HALF))
        self._parts: dict[str, PartItem] = {}
        self._wires: dict[int, WireItem] = {}
        self._junctions: dict = {}  # point -> JunctionItem
        self.index = SheetIndex(doc)
        self._problem_marks: list[ProblemItem] = []
        self._accents: dict[str, str | None] = {}
        self._pointed = ""
        self.problems: list = []
        # A picture of the design for paper (the report, an export) has no grid dots.
        self.grid_shown = True
        doc.changed.connect(self._on_change)
        doc.edited.connect(self.refresh_problems)
        self._rebuild()
        self.refresh_problems()

    # -- following the document -----------------------------------------------------
    def _on_change(self, change: Change) -> None:
        what, key = change.what, change.key
        added, removed = self.index.follow(change)
        if what is ChangeKind.RESET:
            self._rebuild()
            return
        if what is ChangeKind.PART_ADDED:
            self._add_part(key)
        elif what is ChangeKind.PART_REMOVED:
            self.removeItem(self._parts.pop(key))
        elif what is ChangeKind.PART_CHANGED:
            item = self._parts.pop(key)
            self._parts[change.new_key] = item
            item.show(self.doc.parts[change.new_key], is_input=self.doc.input_source == change.new_key)
        elif what is ChangeKind.WIRE_ADDED:
            self._add_wire(key)
        elif what is ChangeKind.WIRE_REMOVED:
            self.removeItem(self._wires.pop(key))
        elif what is ChangeKind.WIRE_CHANGED:
            self._wires[key].show(self.doc.wires[key])
        elif what is ChangeKind.SETTINGS:
            for name, item in self._parts.items():
                is_input = self.doc.input_source == name
                if is_input != item.is_input:
                    item.show(item.part, is_input=is_input)
        self._show_junctions(added, removed)

    def _rebuild(self) -> None:
        for item in [*self._parts.values(), *self._wires.values()]:
            self.removeItem(item)
        self._parts.clear()
        self._wires.clear()
        for name in self.doc.parts:
            self._add_part(name)
        for wid in self.doc.wires:
            self._add_wire(wid)
        self._show_junctions(self.index.junctions - set(self._junctions), set(self._junctions) - self.index.junctions)

    def _add_part(self, name: str) -> None:
        item = PartItem(self.doc.parts[name], self.theme, self.style)
        if self.doc.input_source == name:
            item.show(item.part, is_input=True)
        self._parts[name] = item
        self.addItem(item)
        self._apply_accent(name)

    def _add_wire(self, wid: int) -> None:
        item = WireItem(self.doc.wires[wid], self.theme)
        self._wires[wid] = item
        self.addItem(item)

    def _show_junctions(self, added, removed) -> None:
        """Add and remove only the dots the index says changed."""
        for pt in removed:
            self.removeItem(self._junctions.pop(pt))
        for pt in added:
            self._junctions[pt] = JunctionItem(pt, self.theme)
            self.addItem(self._junctions[pt])

    def refresh_problems(self) -> None:
        """Ask the engine what is wrong with the connections and mark it where it is."""
        problems = list(self.reading.drawn().problems)
        # A value edit seldom changes what is wrong: then the rings stay as they are.
        if problems != self.problems:
            for item in self._problem_marks:
                self.removeItem(item)
            self.problems = problems
            self._problem_marks = [ProblemItem(pt, pr.message, self.theme)
                                   for pr in self.problems for pt in pr.points]
            for item in self._problem_marks:
                self.addItem(item)
        faults: dict[str, list[str]] = {}
        pointless: set[str] = set()
        for pr in self.problems:
            for name in pr.parts:
                faults.setdefault(name, []).append(pr.message)
                if not pr.points:
                    pointless.add(name)
        for name, item in self._parts.items():
            item.set_problem("\n".join(faults[name]) if name in faults else None, outline=name in pointless)

    # -- looks ---------------------------------------------------------------------
    def set_theme(self, theme: Theme, style: ResistorStyle) -> None:
        """Redraw everything in another theme or resistor style."""
        self.theme, self.style = theme, style
        for item in self.items():
            if isinstance(item, PartItem):
                item.set_theme(theme, style)
            elif hasattr(item, "set_theme"):
                item.set_theme(theme)
        for name in self._parts:
            self._apply_accent(name)
        self.update()

    def set_part_accent(self, name: str, role: str | None) -> None:
        """Colour a part by the band it sets (``Band.LOW``, ``Band.HIGH``) or plain (None)."""
        self._accents[name] = role
        self._apply_accent(name)

    def point_out(self, name: str) -> None:
        """Accent part ``name`` in the selection colour while another view points at it
        ("" for none); its band colour comes back when it is no longer pointed at."""
        before, self._pointed = self._pointed, name
        for n in (before, name):
            self._apply_accent(n)

    def _apply_accent(self, name: str) -> None:
        if name in self._parts:
            role = "pointed" if name == self._pointed else self._accents.get(name)
            colour = {Band.LOW: self.theme.band_low, Band.HIGH: self.theme.band_high,
                      "pointed": self.theme.selection}.get(role)
            self._parts[name].set_accent(colour)

    def drawBackground(self, painter, rect: QRectF) -> None:
        painter.fillRect(rect, self.theme.paper)
        if not self.grid_shown:
            return
        scale = painter.worldTransform().m11()
        step = GRID if scale * GRID >= 9 else GRID * 5
        if scale * step < 9:
            return
        pen = QPen(self.theme.grid, 0)
        pen.setCosmetic(True)
        pen.setWidthF(1.6 if step == GRID else 1.2)
        painter.setPen(pen)
        left, top = math.floor(rect.left() / step) * step, math.floor(rect.top() / step) * step
        xs = range(int(left), int(rect.right()) + 1, step)
        points = [QPointF(x, y) for y in range(int(top), int(rect.bottom()) + 1, step) for x in xs]
        painter.drawPoints(points)

    # -- questions the controller asks ------------------------------------------------
    def part_item(self, name: str) -> PartItem:
        return self._parts[name]

    def selected_names(self) -> list[str]:
        """Names of the selected parts, in document order."""
        return [n for n, item in self._parts.items() if item.isSelected()]

    def selected_wire_ids(self) -> list[int]:
        return [w for w, item in self._wires.items() if item.isSelected()]

    def select(self, names=(), wire_ids=()) -> None:
        """Select exactly these parts and wires."""
        self.clearSelection()
        for n in names:
            if n in self._parts:
                self._parts[n].setSelected(True)
        for w in wire_ids:
            if w in self._wires:
                self._wires[w].setSelected(True)

    def pin_at(self, pos: QPointF, reach: float = PIN_REACH):
        """The pin nearest ``pos`` within ``reach`` (scene units), as (part name, pin name,
        (x, y)), or None."""
        best, best_d = None, reach
        for part in self.doc.parts.values():
            for pin, (x, y) in part.pins().items():
                d = math.hypot(x - pos.x(), y - pos.y())
                if d <= best_d:
                    best, best_d = (part.name, pin, (x, y)), d
        return best

    def wire_point_at(self, pos: QPointF, reach: float = PIN_REACH):
        """The grid point on a wire nearest ``pos`` within ``reach`` (scene units), or None."""
        for w in self.doc.wires.values():
            for (ax, ay), (bx, by) in zip(w.points, w.points[1:]):
                if ax == bx and abs(pos.x() - ax) <= reach and min(ay, by) - reach <= pos.y() <= max(ay, by) + reach:
                    y = min(max(edits.snap(pos.y()), min(ay, by)), max(ay, by))
                    return (ax, y)
                if ay == by and abs(pos.y() - ay) <= reach and min(ax, bx) - reach <= pos.x() <= max(ax, bx) + reach:
                    x = min(max(edits.snap(pos.x()), min(ax, bx)), max(ax, bx))
                    return (x, ay)
        return None

    def occupied(self) -> list:
        """What a label laid over the sheet must not cover, in scene coordinates: each part's
        outline with its name and value (a path), and each wire segment (a thin rectangle)."""
        shapes = [item.mapToScene(item.shape()) for item in self._parts.values()]
        for w in self.doc.wires.values():
            for a, b in zip(w.points, w.points[1:]):
                shapes.append(QRectF(QPointF(*a), QPointF(*b)).normalized().adjusted(-2, -2, 2, 2))
        return shapes

    def content_rect(self) -> QRectF:
        """Bounds of everything drawn (empty if nothing is)."""
        rect = QRectF()
        for item in [*self._parts.values(), *self._wires.values()]:
            rect = rect.united(item.sceneBoundingRect())
        return rect
