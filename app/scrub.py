"""The value scrub: a part's value moved step by step through its E series, the views following.

One :class:`ValueScrub` per window. Properties (Ctrl+wheel in a value, or the grip beside it),
the sheet (Ctrl+wheel over the selected part) and the window's Step value actions
(Alt+Up/Down, with Shift a decade) call :meth:`ValueScrub.step`;
every step is an edit the views recompute for, and the steps of one scrub merge into one undo
step. A scrub ends when its grip is let go, when another value is scrubbed, or when no step
has come for :data:`SCRUB_IDLE_MS`.
"""

from __future__ import annotations

from PySide6.QtCore import QObject, Qt, QTimer, Signal

from bandsketch.engine.design.parts import KINDS

from .commands import Editor, new_run
from .engine_link import FieldCheck

SCRUB_IDLE_MS = 800
"""A scrub with no step for this long (ms) is over; the next step starts a new undo step."""
WHEEL_NOTCH = 120
"""One notch of a mouse wheel, in Qt's eighths of a degree."""


def wheel_steps(event, carry: list) -> tuple | None:
    """The steps a wheel turn asks of the scrub (Ctrl held; Shift: decades), or None.

    ``carry`` is a one-element list holding eighths of a degree not yet spent, so a
    touchpad's small deltas add up to whole steps.
    """
    mods = event.modifiers()
    if not mods & Qt.KeyboardModifier.ControlModifier:
        return None
    # Some platforms turn a vertical wheel horizontal while Shift (or Alt) is held.
    carry[0] += event.angleDelta().y() or event.angleDelta().x()
    steps = int(carry[0] / WHEEL_NOTCH)
    carry[0] -= steps * WHEEL_NOTCH
    return steps, bool(mods & Qt.KeyboardModifier.ShiftModifier)


class ValueScrub(QObject):
    """Steps part values as undoable pieces of one gesture and says when a scrub starts and ends.

    Signals
    -------
    started(str, str)
        A scrub of part (first) field (second) began; the views are still at the value before it.
    ended()
        The scrub is over (its undo step is complete).
    refused(str)
        A step could not be made, and why.
    """

    started = Signal(str, str)
    ended = Signal()
    refused = Signal(str)

    def __init__(self, editor: Editor, parent=None):
        super().__init__(parent)
        self.editor = editor
        self.target: tuple | None = None
        """(part, field key) being scrubbed, or None."""
        self.steps_taken = 0
        self._run = new_run()
        self._idle = QTimer(self)
        self._idle.setSingleShot(True)
        self._idle.setInterval(SCRUB_IDLE_MS)
        self._idle.timeout.connect(self.end)

    def step(self, name: str, key: str, steps: int, *, decade: bool = False, hold: bool = False) -> FieldCheck:
        """Move field ``key`` of part ``name`` by ``steps`` places (a decade each with ``decade``).

        ``hold`` keeps the scrub open until :meth:`end` (a grip being dragged); otherwise it
        ends by itself once no step has come for :data:`SCRUB_IDLE_MS`.
        """
        if self.target != (name, key):
            self.end()
            self._run = new_run()
            self.target = (name, key)
            self.steps_taken = 0
            self.started.emit(name, key)
        field = KINDS[self.editor.doc.parts[name].kind].field(key)
        verdict = self.editor.step_field(name, field, steps, self._run, decade=decade)
        if verdict.ok:
            self.steps_taken += 1
        else:
            self.refused.emit(verdict.shown)
        if hold:
            self._idle.stop()
        else:
            self._idle.start()
        return verdict

    def end(self) -> None:
        """Finish the scrub under way, if any."""
        self._idle.stop()
        if self.target is not None:
            self.target = None
            self.ended.emit()

    def is_active(self) -> bool:
        """Whether a scrub is under way."""
        return self.target is not None
