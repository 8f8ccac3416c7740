"""Undoable edits: every change the user makes to a design is one of these on the undo stack.

Each command carries a :class:`app.edits.Patch` and applies it forwards or backwards, which
restores values exactly. The :class:`Editor` is the one way edits reach the document: it
pushes a command and, once a gesture is complete, tells the document its edit is finished.
"""

from __future__ import annotations

from dataclasses import replace
from itertools import count

from PySide6.QtGui import QUndoCommand, QUndoStack

from bandsketch.engine.advise.eseries import step_value
from bandsketch.engine.core.errors import BadValueError
from bandsketch.engine.core.values import format_value
from bandsketch.engine.design.document import Document
from bandsketch.engine.design.parts import Field
from bandsketch.engine.design.schema import parse_field
from bandsketch.engine.design.sourcing import series_of

from . import edits
from .edits import Patch
from .engine_link import FieldCheck, check_field

_RUN_ID = 1
_run_serials = count(1)


def new_run() -> int:
    """A serial number for one gesture made in pieces (a drag, a run of typing), so its
    pieces merge into one undo step."""
    return next(_run_serials)


class PatchCommand(QUndoCommand):
    """An edit described by a patch; subclasses only name it (and may merge)."""

    def __init__(self, doc: Document, patch: Patch, text: str):
        super().__init__(text)
        self.doc = doc
        self.patch = patch

    def redo(self):
        edits.apply_patch(self.doc, self.patch, forward=True)

    def undo(self):
        edits.apply_patch(self.doc, self.patch, forward=False)


class RunCommand(PatchCommand):
    """One piece of a gesture made in pieces: a drag's move, a run of typing in a text box.
    The pieces of one run (see :func:`new_run`) merge into a single step."""

    def __init__(self, doc: Document, patch: Patch, text: str, run: int):
        super().__init__(doc, patch, text)
        self.run = run

    def id(self) -> int:
        return _RUN_ID

    def mergeWith(self, other) -> bool:
        if not isinstance(other, RunCommand) or other.run != self.run:
            return False
        self.patch = self.patch.merged(other.patch)
        self.setObsolete(self.patch.is_empty())
        return True


class RenameCommand(QUndoCommand):
    """Renaming a part; fields that named it (a sensed source) follow the new name."""

    def __init__(self, doc: Document, old: str, new: str):
        super().__init__(f"Rename {old} to {new}")
        self.doc, self.old, self.new = doc, old, new
        self.refs = edits.references_to(doc, old, new)

    def redo(self):
        self.doc.replace_part(self.old, replace(self.doc.parts[self.old], name=self.new))
        edits.apply_patch(self.doc, self.refs, forward=True)

    def undo(self):
        edits.apply_patch(self.doc, self.refs, forward=False)
        self.doc.replace_part(self.new, replace(self.doc.parts[self.new], name=self.old))


class Editor:
    """Pushes commands onto the one undo stack and announces finished gestures.

    Parameters
    ----------
    doc : Document
        The design being edited.
    stack : QUndoStack
        The undo stack every edit goes on.
    """

    def __init__(self, doc: Document, stack: QUndoStack):
        self.doc = doc
        self.stack = stack

    def push(self, command: QUndoCommand, *, finished: bool = True) -> None:
        """Do ``command`` as an undoable step; ``finished=False`` while a drag is still going."""
        if isinstance(command, PatchCommand) and command.patch.is_empty() and not self._continues(command):
            return
        self.stack.push(command)
        if finished:
            self.doc.finish_edit()

    def _continues(self, command) -> bool:
        """Whether ``command`` is a later piece of the run on top of the stack: an empty piece
        (a drag back to its start) must still merge, so the run comes back to nothing."""
        top = self.stack.command(self.stack.index() - 1)
        return isinstance(command, RunCommand) and isinstance(top, RunCommand) and top.run == command.run

    def patch(self, patch: Patch, text: str) -> None:
        """Do a complete gesture described by ``patch``."""
        self.push(PatchCommand(self.doc, patch, text))

    def commit_field(self, name: str, f: Field, text: str) -> FieldCheck:
        """Set field ``f`` of part ``name`` to ``text`` as one step, if the engine reads it.

        The one path a typed field takes into the document (Properties and the in-place
        editor): the verdict is returned for the caller to show; an unreadable text, or one
        that changes nothing, pushes no step.
        """
        part = self.doc.parts[name]
        verdict = check_field(self.doc, part, f, text)
        if verdict.ok and text.strip() != part.params.get(f.key, ""):
            self.patch(edits.edit_field(self.doc, name, f.key, text.strip()), f"Set {name} {f.label}")
        return verdict

    def step_field(self, name: str, f: Field, steps: int, run: int, *, decade: bool = False) -> FieldCheck:
        """Move field ``f`` of part ``name`` ``steps`` places along its E series (or its equal
        log steps, or a decade a step), as a piece of the scrub ``run`` (one undo step).

        The views recompute after every piece. Returns the verdict on the new value, or why
        the value cannot step (empty, zero, a word, out of range), pushing nothing then.
        """
        part = self.doc.parts[name]
        text = part.params.get(f.key, "")
        if not f.numeric or not text.strip():
            return FieldCheck(False, f"{name} {f.label} has no value to step; type one first")
        try:
            value = parse_field(name, f, text)
        except BadValueError as exc:
            return FieldCheck(False, exc.message)
        if value == 0:
            return FieldCheck(False, f"{name} {f.label} is 0, which has no neighbour on a log scale; "
                                     "type a value first")
        series = series_of(part.kind, part.sourcing) if f.key == "value" else None
        stepped = format_value(step_value(value, steps, series, decade=decade), "", digits=6)
        verdict = check_field(self.doc, part, f, stepped)
        if verdict.ok:
            self.push(RunCommand(self.doc, edits.edit_field(self.doc, name, f.key, stepped),
                                 f"Scrub {name} {f.label}", run))
        return verdict

    def rename(self, name: str, text: str) -> str | None:
        """Rename part ``name`` to ``text`` as one step, if ``text`` may be its name.

        The one path a typed name takes (Properties and the in-place editor): returns why
        the name cannot be, or None (a name unchanged pushes no step).
        """
        text = text.strip()
        if text == name:
            return None
        problem = self.doc.name_problem(text, current=name)
        if problem is None:
            self.push(RenameCommand(self.doc, name, text))
        return problem

    def finish(self) -> None:
        """A gesture pushed in pieces (a drag) is over."""
        self.doc.finish_edit()

    def undo(self) -> None:
        self.stack.undo()
        self.doc.finish_edit()

    def redo(self) -> None:
        self.stack.redo()
        self.doc.finish_edit()
