"""The canvas widget: zoom about the cursor, fit, and handing gestures to the controller."""

from __future__ import annotations

import json

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QPainter, QTransform
from PySide6.QtWidgets import QGraphicsView

from .controller import CanvasController, Template
from .scene import SchematicScene

PART_MIME = "application/x-bandsketch-part"
"""Drag payload from the parts palette: JSON {"kind": ..., "params": {...}}."""

MIN_ZOOM, MAX_ZOOM = 0.15, 6.0
FIT_MAX_ZOOM = 1.6
"""Zoom to fit never magnifies beyond this, so a two-part sketch does not fill the screen."""
SELECTION_MAX_ZOOM = 2.5
"""Zoom to selection magnifies a single part this far at most: close, but still with its wires."""
WHEEL_STEP = 1.0015


class SchematicView(QGraphicsView):
    """Shows a :class:`SchematicScene`; its controller decides what gestures do."""

    def __init__(self, scene: SchematicScene, controller: CanvasController):
        super().__init__(scene)
        self.controller = controller
        self.setRenderHints(QPainter.RenderHint.Antialiasing | QPainter.RenderHint.TextAntialiasing)
        self.setTransformationAnchor(QGraphicsView.ViewportAnchor.AnchorUnderMouse)
        self.setResizeAnchor(QGraphicsView.ViewportAnchor.AnchorViewCenter)
        self.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.setVerticalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        self.setViewportUpdateMode(QGraphicsView.ViewportUpdateMode.SmartViewportUpdate)
        self.setMouseTracking(True)
        self.setAcceptDrops(True)
        self.setFocusPolicy(Qt.FocusPolicy.StrongFocus)

    # -- zoom --------------------------------------------------------------------------
    def zoom(self) -> float:
        """Current magnification (1 = one scene unit per pixel)."""
        return self.transform().m11()

    def zoom_by(self, factor: float, anchor: QPointF | None = None) -> None:
        """Magnify by ``factor``, keeping the scene point under ``anchor`` (view coords) still."""
        factor = max(MIN_ZOOM / self.zoom(), min(MAX_ZOOM / self.zoom(), factor))
        if anchor is None:
            self.setTransformationAnchor(QGraphicsView.ViewportAnchor.AnchorViewCenter)
            self.scale(factor, factor)
            self.setTransformationAnchor(QGraphicsView.ViewportAnchor.AnchorUnderMouse)
            return
        before = self.mapToScene(anchor.toPoint())
        self.setTransformationAnchor(QGraphicsView.ViewportAnchor.NoAnchor)
        self.scale(factor, factor)
        after = self.mapToScene(anchor.toPoint())
        shift = after - before
        self.translate(shift.x(), shift.y())
        self.setTransformationAnchor(QGraphicsView.ViewportAnchor.AnchorUnderMouse)

    def zoom_to_fit(self) -> None:
        """Show the whole drawing, with a margin, no larger than :data:`FIT_MAX_ZOOM`.

        Everything on the sheet counts, a test picture's label set beside the circuit too.
        """
        rect = self.scene().itemsBoundingRect()
        if rect.isEmpty():
            rect = QRectF(-200, -150, 400, 300)
        self._show_rect(rect, FIT_MAX_ZOOM)

    def zoom_to_selection(self) -> bool:
        """Show the selected parts and wires, no larger than :data:`SELECTION_MAX_ZOOM`;
        False (nothing changes) when nothing is selected."""
        rect = QRectF()
        for item in self.scene().selectedItems():
            rect = rect.united(item.sceneBoundingRect())
        if rect.isEmpty():
            return False
        self._show_rect(rect, SELECTION_MAX_ZOOM)
        return True

    def _show_rect(self, rect: QRectF, largest: float) -> None:
        rect = rect.adjusted(-40, -40, 40, 40)
        self.fitInView(rect, Qt.AspectRatioMode.KeepAspectRatio)
        if self.zoom() > largest:
            self.setTransform(QTransform.fromScale(largest, largest))
        self.centerOn(rect.center())

    def centre(self) -> QPointF:
        """The sheet point at the middle of the view."""
        return self.mapToScene(self.viewport().rect().center())

    def show_at(self, zoom: float, centre: QPointF) -> None:
        """Magnify to ``zoom`` (kept within the zoom limits) with sheet point ``centre`` in the middle."""
        zoom = max(MIN_ZOOM, min(MAX_ZOOM, zoom))
        self.setTransform(QTransform.fromScale(zoom, zoom))
        self.centerOn(centre)

    # -- events ------------------------------------------------------------------------
    def wheelEvent(self, event):
        if self.controller.wheel(event, self.mapToScene(event.position().toPoint())):
            event.accept()
            return
        steps = event.angleDelta().y() or event.angleDelta().x()
        if steps:
            self.zoom_by(WHEEL_STEP ** steps, event.position())
        event.accept()

    def mousePressEvent(self, event):
        self.setFocus()
        if not self.controller.press(event, self.mapToScene(event.position().toPoint())):
            super().mousePressEvent(event)

    def mouseMoveEvent(self, event):
        if not self.controller.move(event, self.mapToScene(event.position().toPoint())):
            super().mouseMoveEvent(event)

    def mouseReleaseEvent(self, event):
        if not self.controller.release(event, self.mapToScene(event.position().toPoint())):
            super().mouseReleaseEvent(event)

    def mouseDoubleClickEvent(self, event):
        if not self.controller.double_click(event, self.mapToScene(event.position().toPoint())):
            super().mouseDoubleClickEvent(event)

    def keyPressEvent(self, event):
        if event.key() == Qt.Key.Key_Space and not event.isAutoRepeat():
            self.controller.space_held = True
            self.viewport().setCursor(Qt.CursorShape.OpenHandCursor)
            event.accept()
            return
        if event.key() == Qt.Key.Key_Escape:
            self.controller.escape()
            event.accept()
            return
        super().keyPressEvent(event)

    def keyReleaseEvent(self, event):
        if event.key() == Qt.Key.Key_Space and not event.isAutoRepeat():
            self.controller.space_held = False
            self.viewport().unsetCursor()
            event.accept()
            return
        super().keyReleaseEvent(event)

    def dragEnterEvent(self, event):
        if event.mimeData().hasFormat(PART_MIME):
            event.acceptProposedAction()

    def dragMoveEvent(self, event):
        if event.mimeData().hasFormat(PART_MIME):
            event.acceptProposedAction()

    def dropEvent(self, event):
        if not event.mimeData().hasFormat(PART_MIME):
            return
        data = json.loads(bytes(event.mimeData().data(PART_MIME)).decode("utf-8"))
        template = Template(data["kind"], data.get("params", {}))
        self.controller.place_at(template, self.mapToScene(event.position().toPoint()))
        event.acceptProposedAction()
        self.setFocus()
