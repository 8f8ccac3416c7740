"""What mouse and keys do on the canvas: one controller, one mode at a time.

The controller turns gestures into edits (through :class:`app.commands.Editor`) and keeps the
transient things a gesture shows — the part being placed, the wire being drawn, the
selection rectangle — which are previews, not document state.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from enum import Enum

from PySide6.QtCore import QObject, QPointF, QRectF, Qt, Signal
from PySide6.QtGui import QColor, QPainterPath, QPen
from PySide6.QtWidgets import QGraphicsEllipseItem, QGraphicsPathItem, QGraphicsRectItem

from bandsketch.engine.design.document import Document, Part
from bandsketch.engine.design.parts import GRID, KINDS

from .. import edits
from ..commands import Editor, RunCommand, new_run
from ..engine_link import main_field
from ..scrub import ValueScrub, wheel_steps
from .items import Z_PREVIEW, PartItem, WireItem
from .scene import PIN_REACH, SchematicScene

NEAR_MISS_PX = 12.0
"""A wire click this many screen pixels from a pin (or a wire) lands on it, at any zoom."""


class Mode(Enum):
    """What a left click on the canvas does."""

    SELECT = "Select"
    PLACE = "Place"
    WIRE = "Wire"
    PAN = "Pan"


@dataclass(frozen=True)
class Template:
    """A part waiting to be placed: its kind, field overrides and orientation."""

    kind: str
    params: dict = field(default_factory=dict)
    rotation: int = 0
    mirror: bool = False

    def part(self, name: str, x: int, y: int) -> Part:
        return Part(self.kind, name, x, y, self.rotation, self.mirror,
                    {**KINDS[self.kind].default_params(), **self.params})


@dataclass
class _Drag:
    serial: int
    start: QPointF
    base: Document
    names: list
    wire_ids: list
    delta: tuple = (0, 0)
    moved: bool = False


class CanvasController(QObject):
    """Owns the canvas mode and turns presses, drags and clicks into edits.

    Parameters
    ----------
    scene : SchematicScene
        The drawing.
    editor : Editor
        Where edits go.
    scrub : ValueScrub
        Steps the selected part's value (Ctrl+wheel over it, the Step value actions).
    """

    mode_changed = Signal(object)
    """The mode changed (a :class:`Mode`)."""
    message = Signal(str)
    """A short hint or result for the status bar."""
    value_edit_requested = Signal(str)
    """The user asked to edit a part's value in place (its name)."""
    name_edit_requested = Signal(str)
    """The user asked to rename a part in place (its name)."""

    def __init__(self, scene: SchematicScene, editor: Editor, scrub: ValueScrub):
        super().__init__()
        self.scene = scene
        self.editor = editor
        self.scrub = scrub
        self._wheel_carry = [0]
        self.mode = Mode.SELECT
        self._before_pan = Mode.SELECT
        self._template: Template | None = None
        self._ghost: PartItem | None = None
        self._wire: list = []
        self._wire_return = Mode.WIRE
        self._preview = QGraphicsPathItem()
        self._preview.setZValue(Z_PREVIEW)
        self._target = QGraphicsEllipseItem(-6, -6, 12, 12)
        self._target.setZValue(Z_PREVIEW)
        self._band = QGraphicsRectItem()
        self._band.setZValue(Z_PREVIEW)
        for item in (self._preview, self._target, self._band):
            item.setVisible(False)
            scene.addItem(item)
        self._drag: _Drag | None = None
        self._band_start: QPointF | None = None
        self._band_add = False
        self._pan_from = None
        self.space_held = False
        self.restyle()

    @property
    def doc(self) -> Document:
        return self.scene.doc

    def restyle(self) -> None:
        """Take the scene's current theme for the previews."""
        t = self.scene.theme
        self._preview.setPen(QPen(t.wire, 1.8, Qt.PenStyle.DashLine))
        self._target.setPen(QPen(t.hover, 2.0))
        band = QColor(t.hover)
        band.setAlpha(40)
        self._band.setBrush(band)
        self._band.setPen(QPen(t.hover, 0))

    # -- modes -------------------------------------------------------------------------
    def set_mode(self, mode: Mode) -> None:
        """Switch mode, dropping whatever the previous one was in the middle of."""
        self._cancel_wire()
        if mode is not Mode.PLACE:
            self._drop_ghost()
        self.mode = mode
        self.mode_changed.emit(mode)

    def start_place(self, template: Template) -> None:
        """Arm placing a part: it follows the cursor until a click puts it down."""
        self.set_mode(Mode.PLACE)
        self._drop_ghost()
        self._template = template
        self._ghost = PartItem(template.part(self.doc.new_name(template.kind), 0, 0),
                               self.scene.theme, self.scene.style, ghost=True)
        self._ghost.setVisible(False)
        self.scene.addItem(self._ghost)
        self.message.emit(f"Click to place {KINDS[template.kind].title.lower()}; "
                          "T turns it, Ctrl+M mirrors it, Esc stops")

    def _drop_ghost(self) -> None:
        if self._ghost is not None:
            self.scene.removeItem(self._ghost)
            self._ghost = None
        self._template = None

    def place_at(self, template: Template, pos: QPointF, *, keep_placing: bool = False) -> str:
        """Put a part down at the grid point nearest ``pos``; returns its name."""
        name = self.doc.new_name(template.kind)
        part = template.part(name, edits.snap(pos.x()), edits.snap(pos.y()))
        self.editor.patch(edits.add_part(self.doc, part), f"Place {name}")
        if keep_placing:
            self.start_place(template)
        else:
            self.set_mode(Mode.SELECT)
        self.scene.select([name])
        return name

    def turn_template(self, rotate: bool) -> bool:
        """Turn (or mirror) the part being placed; False when nothing is being placed."""
        if self.mode is not Mode.PLACE or self._template is None:
            return False
        t = self._template
        if rotate:
            t = replace(t, rotation=(t.rotation + 90) % 360)
        else:
            t = replace(t, mirror=not t.mirror,
                        rotation=t.rotation if t.rotation in (0, 180) else (t.rotation + 180) % 360)
        self._template = t
        ghost = self._ghost.part
        self._ghost.show(replace(ghost, rotation=t.rotation, mirror=t.mirror))
        return True

    # -- events from the view ---------------------------------------------------------
    def press(self, event, pos: QPointF) -> bool:
        """A mouse press at scene ``pos``; True if the controller took it."""
        button = event.button()
        if button == Qt.MouseButton.MiddleButton or (button == Qt.MouseButton.LeftButton and self.space_held):
            self._before_pan = self.mode if self.mode is not Mode.PAN else self._before_pan
            self._pan_from = event.position()
            self.mode = Mode.PAN
            self.mode_changed.emit(self.mode)
            return True
        if button == Qt.MouseButton.RightButton:
            if self.mode is Mode.WIRE and self._wire:
                self._cancel_wire()
                return True
            if self.mode is Mode.PLACE:
                self.set_mode(Mode.SELECT)
                return True
            return False
        if button != Qt.MouseButton.LeftButton:
            return False
        shift = bool(event.modifiers() & Qt.KeyboardModifier.ShiftModifier)
        if self.mode is Mode.PLACE and self._template is not None:
            self.place_at(self._template, pos, keep_placing=shift)
            return True
        if self.mode is Mode.WIRE:
            self._wire_click(pos)
            return True
        return self._select_press(pos, shift)

    def move(self, event, pos: QPointF) -> bool:
        """The mouse moved to scene ``pos``."""
        if self.mode is Mode.PAN and self._pan_from is not None:
            delta = event.position() - self._pan_from
            self._pan_from = event.position()
            view = self.scene.views()[0]
            view.horizontalScrollBar().setValue(view.horizontalScrollBar().value() - round(delta.x()))
            view.verticalScrollBar().setValue(view.verticalScrollBar().value() - round(delta.y()))
            return True
        if self.mode is Mode.PLACE and self._ghost is not None:
            self._ghost.setVisible(True)
            self._ghost.setPos(edits.snap(pos.x()), edits.snap(pos.y()))
            return True
        if self.mode is Mode.WIRE:
            self._wire_hover(pos)
            return True
        if self._drag is not None:
            self._drag_to(pos)
            return True
        if self._band_start is not None:
            self._band_to(pos)
            return True
        return False

    def release(self, event, pos: QPointF) -> bool:
        """A mouse button came up at scene ``pos``."""
        if self.mode is Mode.PAN:
            self._pan_from = None
            self.mode = self._before_pan
            self.mode_changed.emit(self.mode)
            return True
        if self._drag is not None:
            self._drag_to(pos)  # the part ends where the pointer came up
            moved = self._drag.moved
            self._drag = None
            if moved:
                # Out and back is a finished edit too: views saw the part leave.
                self.editor.finish()
            return True
        if self._band_start is not None:
            self._band_start = None
            self._band.setVisible(False)
            return True
        return False

    def double_click(self, event, pos: QPointF) -> bool:
        """A double click: finishes a wire, or opens a part's name (on its name text) or its
        value (anywhere else on it) for editing."""
        if event.button() != Qt.MouseButton.LeftButton:
            return False
        if self.mode is Mode.WIRE:
            self._finish_wire()
            return True
        if self.mode is Mode.SELECT:
            item = self._item_at(pos)
            if isinstance(item, PartItem):
                on_name = item.name_rect()
                if on_name is not None and on_name.adjusted(-2, -2, 2, 2).contains(item.mapFromScene(pos)):
                    self.name_edit_requested.emit(item.name)
                else:
                    self.value_edit_requested.emit(item.name)
                return True
        return False

    def wheel(self, event, pos: QPointF) -> bool:
        """A wheel turn at scene ``pos``; True if it stepped the value of the selected part
        under the cursor (Ctrl held, Shift for decades), False to leave it to zooming."""
        if self.mode is not Mode.SELECT:
            return False
        # Anywhere in the part's box counts, its value text too: a capacitor's middle is the
        # gap between its plates.
        item = next((i for i in self.scene.selectedItems() if isinstance(i, PartItem)
                     and i.sceneBoundingRect().contains(pos) and main_field(i.part) is not None), None)
        if item is None:
            return False
        asked = wheel_steps(event, self._wheel_carry)
        if asked is None:
            return False
        if asked[0]:
            self._scrub(item.name, *asked)
        return True

    def step_selected(self, steps: int, decade: bool = False) -> bool:
        """Step the value of the one selected part (Alt+Up/Down); False when not one part is
        selected."""
        names = self.scene.selected_names()
        if self.mode is not Mode.SELECT or len(names) != 1:
            return False
        if main_field(self.doc.parts[names[0]]) is None:
            self.message.emit(f"{names[0]} has no value to step")
            return True
        self._scrub(names[0], steps, decade)
        return True

    def _scrub(self, name: str, steps: int, decade: bool) -> None:
        field = main_field(self.doc.parts[name])
        verdict = self.scrub.step(name, field.key, steps, decade=decade)
        self.message.emit(f"{name} {field.label} {verdict.shown}" if verdict.ok else verdict.shown)

    def escape(self) -> None:
        """Esc: give up the gesture under way, then go back to Select."""
        if self.mode is Mode.WIRE and self._wire:
            self._cancel_wire()
            if self._wire_return is Mode.SELECT:
                self.set_mode(Mode.SELECT)
        elif self.mode is not Mode.SELECT:
            self.set_mode(Mode.SELECT)
        else:
            self.scene.clearSelection()

    # -- selecting and moving -----------------------------------------------------------
    def _item_at(self, pos: QPointF):
        for item in self.scene.items(pos):
            selectable = item.flags() & item.GraphicsItemFlag.ItemIsSelectable
            if isinstance(item, (PartItem, WireItem)) and selectable:
                return item
        return None

    def _select_press(self, pos: QPointF, shift: bool) -> bool:
        item = self._item_at(pos)
        pin = self.scene.pin_at(pos)
        if pin is not None and not shift:
            # A pin starts a wire even on a selected part (the one just placed, say): a part
            # moves by its body. The canvas goes back to Select when the wire is done.
            self._wire_return = Mode.SELECT
            self.mode = Mode.WIRE
            self.mode_changed.emit(self.mode)
            self._wire_click(pos)
            return True
        if item is None:
            self._band_start = pos
            self._band_add = shift
            if not shift:
                self.scene.clearSelection()
            self._band.setRect(QRectF(pos, pos))
            self._band.setVisible(True)
            return True
        if shift:
            item.setSelected(not item.isSelected())
        elif not item.isSelected():
            self.scene.clearSelection()
            item.setSelected(True)
        names, wires = self.scene.selected_names(), self.scene.selected_wire_ids()
        if names or wires:
            self._drag = _Drag(new_run(), pos, self.doc.copy(), names, wires)
        return True

    def _drag_to(self, pos: QPointF) -> None:
        d = self._drag
        delta = (edits.snap(pos.x() - d.start.x()), edits.snap(pos.y() - d.start.y()))
        if delta == d.delta:
            return
        d.delta = delta
        d.moved = True
        patch = edits.move(d.base, d.names, d.wire_ids, *delta)
        self.editor.push(RunCommand(self.doc, patch, "Move", d.serial), finished=False)

    def _band_to(self, pos: QPointF) -> None:
        rect = QRectF(self._band_start, pos).normalized()
        self._band.setRect(rect)
        path = QPainterPath()
        path.addRect(rect)
        op = Qt.ItemSelectionOperation.AddToSelection if self._band_add else Qt.ItemSelectionOperation.ReplaceSelection
        self.scene.setSelectionArea(path, op, Qt.ItemSelectionMode.IntersectsItemShape)

    # -- wiring ----------------------------------------------------------------------------
    def start_wiring(self) -> None:
        """Enter Wire mode: clicks lay wires until Esc."""
        self._wire_return = Mode.WIRE
        self.set_mode(Mode.WIRE)
        self.message.emit("Click a pin or grid point to start a wire; click to bend, "
                          "double-click or a pin to finish; Esc stops")

    def _reach(self) -> float:
        """How far (scene units) a wire click may miss a pin: a few pixels on screen, at
        least :data:`PIN_REACH`, and under half a grid step apart from the pin's own point so
        that the grid points beside a pin stay reachable."""
        zoom = self.scene.views()[0].zoom() if self.scene.views() else 1.0
        return min(max(PIN_REACH, NEAR_MISS_PX / zoom), 0.75 * GRID)

    def _anchor(self, pos: QPointF):
        """Where a click lands: a pin, a point on a wire, else the nearest grid point."""
        reach = self._reach()
        pin = self.scene.pin_at(pos, reach)
        if pin is not None:
            return pin[2], True
        on_wire = self.scene.wire_point_at(pos, reach)
        if on_wire is not None:
            return on_wire, True
        point = (edits.snap(pos.x()), edits.snap(pos.y()))
        return point, point in edits.pin_points(self.doc)

    def _landing(self, pos: QPointF):
        """The points a click at ``pos`` adds to the wire, and whether they end on a
        connection. A run that passes over a pin and stops a grid step or less beyond it,
        on nothing, is a near miss: it ends on that pin, so no stub dangles past it."""
        point, connects = self._anchor(pos)
        route = self._route(point)
        if connects:
            return route, True
        pins = edits.pin_points(self.doc)
        pts = [self._wire[-1], *route]
        left = sum(abs(b[0] - a[0]) + abs(b[1] - a[1]) for a, b in zip(pts, pts[1:]))
        for i, (a, b) in enumerate(zip(pts, pts[1:])):
            length = abs(b[0] - a[0]) + abs(b[1] - a[1])
            for pin in pins:
                if pin != a and edits.on_segment(pin, a, b):
                    beyond = left - (abs(pin[0] - a[0]) + abs(pin[1] - a[1]))
                    if beyond <= GRID:
                        return [*route[:i], pin], True
            left -= length
        return route, False

    def _route(self, target) -> list:
        """Points from the wire's last point to ``target``, orthogonal with at most one bend."""
        (lx, ly), (tx, ty) = self._wire[-1], target
        if lx == tx or ly == ty:
            return [target]
        if len(self._wire) >= 2:
            (px, py) = self._wire[-2]
            horizontal_first = px == lx  # turn off a vertical run
        else:
            pin = self.scene.pin_at(QPointF(lx, ly))
            if pin is not None:
                part = self.doc.parts[pin[0]]
                horizontal_first = abs(lx - part.x) > abs(ly - part.y)
            else:
                horizontal_first = abs(tx - lx) >= abs(ty - ly)
        corner = (tx, ly) if horizontal_first else (lx, ty)
        return [corner, target]

    def _wire_click(self, pos: QPointF) -> None:
        if not self._wire:
            self._wire = [self._anchor(pos)[0]]
            self._wire_hover(pos)
            return
        route, connects = self._landing(pos)
        if route[-1] == self._wire[-1]:
            return
        self._wire.extend(route)
        if connects:
            self._finish_wire()
        else:
            self._wire_hover(pos)

    def _wire_hover(self, pos: QPointF) -> None:
        if not self._wire:
            point, connects = self._anchor(pos)
            self._target.setVisible(connects)
            self._target.setPos(*point)
            self._preview.setVisible(False)
            return
        route, connects = self._landing(pos)
        self._target.setVisible(connects)
        self._target.setPos(*route[-1])
        pts = self._wire + route
        path = QPainterPath(QPointF(*pts[0]))
        for pt in pts[1:]:
            path.lineTo(QPointF(*pt))
        self._preview.setPath(path)
        self._preview.setVisible(True)

    def _finish_wire(self) -> None:
        pts = edits.simplify(self._wire)
        self._wire = []
        self._preview.setVisible(False)
        self._target.setVisible(False)
        if len(pts) >= 2 and pts[0] != pts[-1]:
            self.editor.patch(edits.add_wire(self.doc, pts), "Draw wire")
        if self._wire_return is Mode.SELECT:
            self.set_mode(Mode.SELECT)

    def _cancel_wire(self) -> None:
        self._wire = []
        self._preview.setVisible(False)
        self._target.setVisible(False)
