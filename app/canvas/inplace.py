"""Editing a part's main value, or its name, right on the sheet (double-click the part, or
its name)."""

from __future__ import annotations

from PySide6.QtCore import QPoint, Qt
from PySide6.QtWidgets import QLabel, QLineEdit

from bandsketch.engine.design.parts import KINDS

from ..commands import Editor
from ..engine_link import main_field
from .view import SchematicView


class InplaceEditor(QLineEdit):
    """A line edit over the sheet for one part's main value, or (``rename``) its name.

    Enter accepts the text only if the engine reads it (a name only if it is free and may
    be a name); otherwise the editor stays open, marked, with the reason shown under it.
    Esc, or leaving it, gives up the edit.
    """

    def __init__(self, view: SchematicView, editor: Editor, name: str, *, rename: bool = False):
        super().__init__(view.viewport())
        self._view, self._editor, self.name = view, editor, name
        part = editor.doc.parts[name]
        self.field = None if rename else main_field(part)
        self.setText(name if rename else part.params.get(self.field.key, ""))
        self.selectAll()
        self.reason = QLabel(view.viewport())
        self.reason.setWordWrap(True)
        self.reason.setVisible(False)
        theme = view.scene().theme
        self.reason.setStyleSheet(f"QLabel {{ background: {theme.paper.name()}; color: {theme.problem.name()};"
                                  f" border: 1px solid {theme.problem.name()}; padding: 2px; }}")
        item = view.scene().part_item(name)
        if rename:
            # Over the name itself, so the text being changed stays where the eye is.
            corner = view.mapFromScene(item.mapToScene(item.name_rect().topLeft())) - QPoint(4, 4)
        else:
            corner = view.mapFromScene(item.sceneBoundingRect().topRight())
        self.setFixedWidth(150)
        self.move(QPoint(max(min(corner.x(), view.viewport().width() - 160), 0), max(corner.y(), 0)))
        self.setPlaceholderText("Name" if rename else KINDS[part.kind].field(self.field.key).label)
        self.setToolTip(f"{name} {'name' if rename else self.field.label}: Enter to accept, Esc to leave it")
        self.returnPressed.connect(self.accept_text)
        self.show()
        self.setFocus()

    def accept_text(self) -> bool:
        """Take the text if it reads; True when the editor closed."""
        doc = self._editor.doc
        if self.name not in doc.parts:
            self.close_editor()
            return True
        if self.field is None:
            problem = self._editor.rename(self.name, self.text())
            if problem:
                return self._refuse(problem)
        else:
            verdict = self._editor.commit_field(self.name, self.field, self.text())
            if not verdict.ok:
                return self._refuse(verdict.shown)
        self.close_editor()
        return True

    def _refuse(self, reason: str) -> bool:
        """Keep the editor open, marked, with ``reason`` under it."""
        self.setStyleSheet(f"QLineEdit {{ border: 2px solid {self._view.scene().theme.problem.name()}; }}")
        self.reason.setText(reason)
        self.reason.setFixedWidth(260)
        self.reason.adjustSize()
        self.reason.move(self.x(), self.y() + self.height() + 2)
        self.reason.setVisible(True)
        return False

    def close_editor(self) -> None:
        """Remove the editor from the sheet and give the keyboard back to the canvas."""
        self.reason.deleteLater()
        self.deleteLater()
        self.hide()
        self._view.setFocus()

    def keyPressEvent(self, event):
        if event.key() == Qt.Key.Key_Escape:
            self.close_editor()
            return
        super().keyPressEvent(event)

    def focusOutEvent(self, event):
        super().focusOutEvent(event)
        if self.isVisible():
            self.close_editor()
