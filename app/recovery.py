"""Keeping unsaved work safe: a recovery file written while the user edits.

The file is written every :data:`PERIOD_MS` while there are unsaved edits and shortly after a
burst of edits calms down; it is removed when the design is saved or closed on purpose. If it
is still there at the next start, the last session ended unexpectedly and its work can be
restored.
"""

from __future__ import annotations

import json
import os
import time
from pathlib import Path

from PySide6.QtCore import QObject, QStandardPaths, QTimer

from bandsketch.engine.design.designfile import document_from_dict, document_to_dict
from bandsketch.engine.design.document import Document
from bandsketch.engine.core.errors import DesignFileError

PERIOD_MS = 30_000
CALM_MS = 2_000
"""Quiet time after the last edit before the burst is written."""
RECOVERY_NAME = "recovery.json"
SET_ASIDE_NAME = "recovery-set-aside.json"


def recovery_dir() -> Path:
    """Where recovery files live (the user's application data folder)."""
    return Path(QStandardPaths.writableLocation(QStandardPaths.StandardLocation.AppDataLocation)) / "recovery"


def _timestamp(value) -> float | None:
    """A recovery file's time of writing (s since the epoch), or None if it holds no usable one."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    # Beyond year 5000 or before 1970 a time can only come from a damaged file.
    return float(value) if 0 <= value < 1e11 else None


class Recovered:
    """What a recovery file held: the design, the file it belonged to and when it was written."""

    def __init__(self, doc: Document, path: str | None, written: float | None):
        self.doc, self.path, self.written = doc, path, written

    def when(self) -> str:
        if self.written is None:
            return "time of writing unknown"
        return "last written " + time.strftime("%Y-%m-%d %H:%M", time.localtime(self.written))


class RecoveryKeeper(QObject):
    """Writes the recovery file for one document as it is edited.

    Parameters
    ----------
    doc : Document
        The design to keep safe.
    is_dirty : callable
        Whether the design has unsaved edits now.
    current_path : callable
        The file the design was opened from or saved to (or None).
    folder : Path, optional
        Where to keep the file; :func:`recovery_dir` if not given.
    """

    def __init__(self, doc: Document, is_dirty, current_path, folder: Path | None = None):
        super().__init__()
        self.doc = doc
        self._is_dirty = is_dirty
        self._current_path = current_path
        self.folder = Path(folder) if folder else recovery_dir()
        self.path = self.folder / RECOVERY_NAME
        self._pending = False
        self._period = QTimer(self)
        self._period.setInterval(PERIOD_MS)
        self._period.timeout.connect(self._tick)
        self._calm = QTimer(self)
        self._calm.setSingleShot(True)
        self._calm.setInterval(CALM_MS)
        self._calm.timeout.connect(self.write)
        doc.edited.connect(self._edited)
        self._period.start()

    def _edited(self) -> None:
        self._pending = True
        self._calm.start()

    def _tick(self) -> None:
        if self._pending:
            self.write()

    def write(self) -> None:
        """Write the recovery file now (or remove it if nothing is unsaved)."""
        self._pending = False
        if not self._is_dirty():
            self.discard()
            return
        data = {"saved_path": self._current_path(), "written": time.time(),
                "design": document_to_dict(self.doc)}
        try:
            self.folder.mkdir(parents=True, exist_ok=True)
            tmp = self.path.with_suffix(".tmp")
            tmp.write_text(json.dumps(data, ensure_ascii=False), encoding="utf-8")
            os.replace(tmp, self.path)
        except OSError:
            # A full or read-only disk must not interrupt drawing; the next write tries again.
            self._pending = True

    def discard(self) -> None:
        """Remove the recovery file: the work is saved or deliberately dropped."""
        self._calm.stop()
        self._pending = False
        try:
            self.path.unlink()
        except FileNotFoundError:
            pass

    def stop(self) -> None:
        """Stop writing (the window is closing)."""
        self._period.stop()
        self._calm.stop()

    def left_over(self) -> Recovered | str | None:
        """What an unexpectedly ended session left behind, or None if nothing.

        A recovery file that cannot be read is set aside (never deleted), and the message to
        show about it is returned instead.
        """
        if not self.path.exists():
            return None
        try:
            data = json.loads(self.path.read_text(encoding="utf-8"))
            if not isinstance(data, dict) or "design" not in data:
                raise DesignFileError("it holds no design")
            doc = document_from_dict(data["design"], "recovered design")
            path = data.get("saved_path")
            return Recovered(doc, path if isinstance(path, str) else None, _timestamp(data.get("written")))
        except (OSError, ValueError, DesignFileError, RecursionError) as exc:
            self.set_aside()
            return (f"The last session left unsaved work behind, but its recovery file cannot be read "
                    f"({exc}). It is kept as {self.folder / SET_ASIDE_NAME}; nothing was restored.")

    def set_aside(self) -> None:
        """Keep the recovery file under another name, out of the way of the next session."""
        try:
            os.replace(self.path, self.folder / SET_ASIDE_NAME)
        except OSError:
            pass
