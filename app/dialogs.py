"""Every question and message the app puts up in a window of its own.

Kept in one module so tests can replace each with an answer and never wait on a dialog.
"""

from __future__ import annotations

from enum import Enum

from PySide6.QtWidgets import QFileDialog, QMessageBox, QWidget

FILE_FILTER = "Bandsketch designs (*.json);;All files (*)"


class Unsaved(Enum):
    """What to do with unsaved changes."""

    SAVE = "save"
    DISCARD = "discard"
    CANCEL = "cancel"


def ask_open_path(parent: QWidget, folder: str) -> str | None:
    """The design file the user picks to open, or None."""
    path, _ = QFileDialog.getOpenFileName(parent, "Open design", folder, FILE_FILTER)
    return path or None


def ask_save_path(parent: QWidget, suggestion: str) -> str | None:
    """Where the user wants the design saved, or None."""
    path, _ = QFileDialog.getSaveFileName(parent, "Save design as", suggestion, FILE_FILTER)
    return path or None


def ask_unsaved(parent: QWidget, name: str) -> Unsaved:
    """Whether to save changes to ``name`` before it is closed."""
    answer = QMessageBox.question(
        parent, "Unsaved changes", f"{name} has changes that are not saved.\nSave them first?",
        QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Discard | QMessageBox.StandardButton.Cancel,
        QMessageBox.StandardButton.Save)
    return {QMessageBox.StandardButton.Save: Unsaved.SAVE,
            QMessageBox.StandardButton.Discard: Unsaved.DISCARD}.get(answer, Unsaved.CANCEL)


def ask_restore(parent: QWidget, when: str, name: str) -> bool:
    """Whether to bring back the design recovered from a session that ended unexpectedly."""
    answer = QMessageBox.question(
        parent, "Recover unsaved work",
        f"Bandsketch did not close normally last time. Unsaved work on {name} was kept "
        f"({when}).\n\nRestore it now? If you choose No it is set aside, not deleted.",
        QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.No, QMessageBox.StandardButton.Yes)
    return answer == QMessageBox.StandardButton.Yes


def show_error(parent: QWidget, title: str, message: str) -> None:
    """Tell the user something could not be done, and why."""
    QMessageBox.warning(parent, title, message)


def show_about(parent: QWidget, text: str) -> None:
    """The About box: ``text`` is rich text (the versions)."""
    QMessageBox.about(parent, "About Bandsketch", text)
