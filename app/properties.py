"""The Properties panel: every field of the selected part, checked by the engine's parser.

A field's text is only accepted when the engine reads it; otherwise the entry stays as typed,
marked, with the reason under it, and the document keeps its previous value.
"""

from __future__ import annotations

from PySide6.QtCore import QEvent, Qt
from PySide6.QtGui import QKeySequence, QTextCursor
from PySide6.QtWidgets import (QCheckBox, QComboBox, QFormLayout, QGroupBox, QHBoxLayout, QLabel, QLineEdit,
                               QPlainTextEdit, QVBoxLayout, QWidget)

from bandsketch.engine.core.band import Band
from bandsketch.engine.design.schema import sourcing_problem, text_problem
from bandsketch.engine.design.document import WIRE_CHANGES, Change, ChangeKind, Document
from bandsketch.engine.design.parts import KINDS, Field
from bandsketch.engine.design.sourcing import DEFAULT_SERIES, SERIES_NAMES, tolerance_fraction
from bandsketch.engine.advise.knobs import has_device_fields, is_design_choice
from bandsketch.engine.advise.tolerance import DEFAULT_TOLERANCES
from bandsketch.engine.core.values import format_value

from . import edits
from .commands import Editor, RunCommand, new_run
from .engine_link import check_field, derived_values, kind_fields
from .scrub import ValueScrub, wheel_steps
from .theme import Theme

MODE_NAMES = {"small_signal": "Small-signal values", "operating_point": "Operating point typed",
              "bias": "Bias from the sheet"}
BAND_NAMES = {None: "Decided by the estimate", Band.LOW: "Low band", Band.HIGH: "High band"}
DERIVED_UNITS = {"gm": "S", "rpi": "Ω", "ro": "Ω", "cpi": "F", "cmu": "F", "ccs": "F", "rb": "Ω", "gmb": "S",
                 "cgs": "F", "cgd": "F", "cdb": "F", "csb": "F", "vt": "V", "a0": "", "fu": "Hz", "fp": "Hz",
                 "rout": "Ω", "rin": "Ω", "ic": "A", "id": "A", "vbe": "V", "vce": "V", "vgs": "V", "vds": "V",
                 "vth": "V"}
DERIVED_LABELS = {"vt": "V_T", "fp": "f_p", "region": "Region", "ic": "I_C", "vbe": "V_BE", "vce": "V_CE",
                  "id": "I_D", "vgs": "V_GS", "vds": "V_DS", "vth": "V_th"}
NOTES_LINES = 6
"""How many lines of the design's notes show without scrolling."""
GRIP_STEP_PX = 10
"""Pixels of drag on a value's grip per step of its value."""
GRIP_TIP = ("Drag up or down to step the value through its E series (Shift: a decade a step); "
            "Alt+Up/Down and Ctrl+wheel in the field do the same")


def caption(label: str) -> str:
    """A catalogue label as rich text: the part after "_" becomes a subscript (r_π -> rπ with π low)."""
    head, _, sub = label.partition("_")
    # Qt clips a subscript's descender to the line's box (C_gs read Cqs); a space in a
    # larger size after it makes the line tall enough to hold it.
    return f'{head}<sub>{sub}</sub><span style="font-size:large"> </span>' if sub else label


class _Grip(QLabel):
    """The handle beside a value: dragging it up or down steps the value (one scrub)."""

    def __init__(self, on_step, on_release):
        super().__init__("⇕")
        self._on_step, self._on_release = on_step, on_release
        self._from: float | None = None
        self.setObjectName("scrub_grip")
        self.setCursor(Qt.CursorShape.SizeVerCursor)
        self.setToolTip(GRIP_TIP)

    def mousePressEvent(self, event):
        if event.button() == Qt.MouseButton.LeftButton:
            self._from = event.position().y()
        event.accept()

    def mouseMoveEvent(self, event):
        if self._from is None:
            return
        steps = int((self._from - event.position().y()) / GRIP_STEP_PX)
        if steps:
            self._from -= steps * GRIP_STEP_PX
            self._on_step(steps, bool(event.modifiers() & Qt.KeyboardModifier.ShiftModifier))
        event.accept()

    def mouseReleaseEvent(self, event):
        if self._from is not None:
            self._from = None
            self._on_release()
        event.accept()


class _Entry(QWidget):
    """A line edit with the verdict under it: the value as read, or why it cannot be.

    ``on_step(entry, steps, decade, hold)``, when given, scrubs the value: a grip beside the
    field, Ctrl+wheel in it (and the window's Step value keys, through :meth:`PropertiesPanel.step_focused`);
    ``on_release`` ends a grip's drag.
    """

    def __init__(self, text: str, on_commit, theme: Theme, on_step=None, on_release=None):
        super().__init__()
        self._theme = theme
        self._on_commit = on_commit
        self._on_step = on_step
        self._wheel_carry = [0]
        self.edit = QLineEdit(text)
        self.note = QLabel()
        self.note.setWordWrap(True)
        self.note.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        box = QVBoxLayout(self)
        box.setContentsMargins(0, 0, 0, 0)
        box.setSpacing(1)
        self.grip = None
        if on_step is None:
            box.addWidget(self.edit)
        else:
            row = QHBoxLayout()
            row.setSpacing(2)
            row.addWidget(self.edit, 1)
            self.grip = _Grip(lambda steps, decade: on_step(self, steps, decade, True), on_release)
            row.addWidget(self.grip)
            box.addLayout(row)
            self.edit.installEventFilter(self)
        box.addWidget(self.note)
        self.invalid = False
        self.edit.editingFinished.connect(self._commit)

    def eventFilter(self, watched, event):
        asked = wheel_steps(event, self._wheel_carry) if event.type() == QEvent.Type.Wheel else None
        if asked is None:
            return False
        if asked[0]:
            self.step(*asked)
        return True

    def step(self, steps: int, decade: bool = False) -> None:
        """Scrub the value ``steps`` places (a decade each with ``decade``)."""
        self._on_step(self, steps, decade, False)

    def _commit(self):
        self._on_commit(self, self.edit.text())

    def show_verdict(self, ok: bool, shown: str) -> None:
        """Show a read value quietly, or a reason in the problem colour with the entry marked."""
        self.invalid = not ok
        self.note.setText(shown)
        colour = self._theme.value if ok else self._theme.problem
        self.note.setStyleSheet(f"color: {colour.name()};")
        self.edit.setStyleSheet("" if ok else f"QLineEdit {{ border: 2px solid {self._theme.problem.name()}; }}")
        self.edit.setToolTip("" if ok else shown)

    def set_text(self, text: str) -> None:
        """Show the document's text unless the user is typing here or has a rejected entry."""
        if not self.edit.hasFocus() and not self.invalid and self.edit.text() != text:
            self.edit.setText(text)


class _NotesBox(QPlainTextEdit):
    """The design's notes, several lines. What is typed goes into the document as it is
    typed, and one visit to the box (focus in to focus out) is one undo step. The box
    keeps no undo history of its own: undo and redo keys reach the window's stack."""

    def __init__(self, doc: Document, editor: Editor, theme: Theme):
        super().__init__()
        self.doc, self.editor, self._theme = doc, editor, theme
        self.setUndoRedoEnabled(False)
        self.setTabChangesFocus(True)
        self.setPlainText(doc.description)
        self.setFixedHeight(round(self.fontMetrics().lineSpacing() * NOTES_LINES
                                  + 2 * (self.frameWidth() + self.document().documentMargin())))
        self.note = QLabel()
        self.note.setWordWrap(True)
        self._run = new_run()
        self._pushing = False
        self.textChanged.connect(self._typed)

    def _typed(self) -> None:
        text = self.toPlainText()
        if text == self.doc.description:
            return
        problem = text_problem(text)
        if problem:
            self.note.setText(f"Notes: {problem}")
            self.note.setStyleSheet(f"color: {self._theme.problem.name()};")
            return
        self.note.setText("")
        self._pushing = True
        try:
            self.editor.push(RunCommand(self.doc, edits.set_meta(self.doc, "description", text), "Edit notes",
                                        self._run), finished=False)
        finally:
            self._pushing = False

    def show_document(self) -> None:
        """Show the document's notes (after an undo, say), unless they came from this box."""
        if not self._pushing and self.toPlainText() != self.doc.description:
            self.setPlainText(self.doc.description)
            self.moveCursor(QTextCursor.MoveOperation.End)
            self.note.setText("")

    def _end_run(self) -> None:
        self._run = new_run()
        self.editor.finish()

    def focusInEvent(self, event):
        self._run = new_run()
        super().focusInEvent(event)

    def focusOutEvent(self, event):
        self._end_run()
        super().focusOutEvent(event)

    def keyPressEvent(self, event):
        for key, step in ((QKeySequence.StandardKey.Undo, self.editor.undo),
                          (QKeySequence.StandardKey.Redo, self.editor.redo)):
            if event.matches(key):
                # What was typed so far is a step of its own; the next keystroke starts another.
                self._run = new_run()
                step()
                return
        super().keyPressEvent(event)


class PropertiesPanel(QWidget):
    """Edits the selected part (or the design itself when nothing is selected).

    Parameters
    ----------
    doc : Document
        The design.
    editor : Editor
        Where accepted edits go.
    theme : Theme
        Colours for verdicts.
    scrub : ValueScrub
        Steps a numeric field's value (its grip, Alt+Up/Down, Ctrl+wheel).
    """

    def __init__(self, doc: Document, editor: Editor, theme: Theme, scrub: ValueScrub):
        super().__init__()
        self.doc = doc
        self.editor = editor
        self.scrub = scrub
        self.theme = theme
        self.part_name: str | None = None
        self._selection: tuple = ((), ())
        self._entries: dict[str, _Entry] = {}
        self.notes: _NotesBox | None = None
        self._layout = QVBoxLayout(self)
        self._layout.setContentsMargins(6, 6, 6, 6)
        self._body: QWidget | None = None
        self._derived: QFormLayout | None = None
        self._bias = None  # the newest analysis's operating point, and why there is none
        self._no_bias: str | None = None
        self._shape = None
        doc.changed.connect(self._on_change)
        doc.edited.connect(self._refresh_derived)
        self.show_selection((), ())

    # -- which form ------------------------------------------------------------------------
    def show_selection(self, names, wire_ids) -> None:
        """Show the form for what is selected."""
        self._selection = (tuple(names), tuple(wire_ids))
        self.part_name = names[0] if len(names) == 1 and not wire_ids else None
        self._rebuild()

    def _form_shape(self):
        """What decides which rows the form has (rebuilt only when this changes)."""
        if self.part_name is None:
            # The design form lists only the parts that can carry the signal: pasting a stage
            # of resistors must not rebuild it part by part.
            sources = tuple(p.name for p in self.doc.parts.values() if KINDS[p.kind].signal)
            return ("doc", self._selection, sources, self.doc.input_source)
        p = self.doc.parts[self.part_name]
        senses = any(f.unit == "name" for f in KINDS[p.kind].fields)
        sensed = (tuple(sorted(self.doc.parts)), p.params.get("sensed")) if senses else ()
        return ("part", p.kind, p.params.get("mode"), p.params.get("polarity"), sensed,
                self.doc.input_source == p.name, self.doc.band_pins.get(p.name), p.sourcing)

    def _rebuild(self) -> None:
        if self._body is not None:
            self._layout.removeWidget(self._body)
            # Deleted only when the event loop comes round; until then it would be painted
            # under the new form (the design's fields showing through a part's).
            self._body.hide()
            self._body.deleteLater()
        self._entries = {}
        self._derived = None
        self._body = QWidget()
        self._layout.addWidget(self._body)
        self._shape = self._form_shape()
        names, wires = self._selection
        if self.part_name is not None:
            self._part_form()
        elif names or wires:
            box = QVBoxLayout(self._body)
            box.addWidget(QLabel(f"{len(names)} part(s) and {len(wires)} wire(s) selected.\n"
                                 "Select a single part to edit its fields."))
            box.addStretch(1)
        else:
            self._design_form()

    def _on_change(self, change: Change) -> None:
        if change.what is ChangeKind.RESET:
            self.show_selection((), ())
            return
        if change.what in WIRE_CHANGES or (change.what is ChangeKind.PART_CHANGED and change.key != self.part_name
                                           and change.new_key in (None, change.key)):
            return  # a wire, or another part kept its name: neither the rows nor their texts move
        if self.part_name is not None and change.what is ChangeKind.PART_CHANGED and change.key == self.part_name:
            self.part_name = change.new_key
        if self.part_name is not None and self.part_name not in self.doc.parts:
            self.show_selection((), ())
            return
        if self._form_shape() != self._shape:
            self._rebuild()
            return
        self._refresh_texts()

    # -- the forms -----------------------------------------------------------------------
    def _design_form(self) -> None:
        # Captions above the fields, so the title and the notes get the panel's whole width.
        form = QFormLayout(self._body)
        form.setRowWrapPolicy(QFormLayout.RowWrapPolicy.WrapAllRows)
        title = _Entry(self.doc.title, self._set_title, self.theme)
        self._entries = {"title": title}
        self.notes = _NotesBox(self.doc, self.editor, self.theme)
        form.addRow("Title", title)
        form.addRow("Notes", self.notes)
        form.addRow(self.notes.note)
        sources = QComboBox()
        sources.addItem("(none)", None)
        for p in self.doc.parts.values():
            if KINDS[p.kind].signal:
                sources.addItem(p.name, p.name)
        sources.setCurrentIndex(max(0, sources.findData(self.doc.input_source)))
        sources.currentIndexChanged.connect(
            lambda i: self.editor.patch(edits.set_input(self.doc, sources.itemData(i)), "Choose signal input"))
        form.addRow("Signal input", sources)
        hint = QLabel("Select a part on the sheet to edit it.")
        hint.setWordWrap(True)
        form.addRow(hint)

    def _part_form(self) -> None:
        part = self.doc.parts[self.part_name]
        outer = QVBoxLayout(self._body)
        outer.setContentsMargins(0, 0, 0, 0)
        heading = QLabel(f"<b>{KINDS[part.kind].title}</b>")
        outer.addWidget(heading)
        form = QFormLayout()
        outer.addLayout(form)
        name = _Entry(part.name, self._rename, self.theme)
        self._entries["name"] = name
        form.addRow("Name", name)
        for f in KINDS[part.kind].fields:
            if f.key in ("polarity", "mode"):
                form.addRow(f.label, self._choice(part, f))
        for f in kind_fields(part):
            if f.key in ("polarity", "mode"):
                continue
            if f.unit == "name":
                form.addRow(f.label, self._sensed(part, f))
                continue
            entry = _Entry(part.params.get(f.key, ""), lambda e, t, f=f: self._set_field(e, f, t), self.theme,
                           lambda e, steps, decade, hold, f=f: self._step_field(e, f, steps, decade, hold),
                           self.scrub.end)
            entry.edit.setPlaceholderText("not used" if f.optional else "")
            self._entries[f.key] = entry
            verdict = check_field(self.doc, part, f, entry.edit.text())
            entry.show_verdict(verdict.ok, verdict.shown)
            form.addRow(caption(f.label), entry)
        if KINDS[part.kind].signal:
            check = QCheckBox("Carries the input signal")
            check.setChecked(self.doc.input_source == part.name)
            check.toggled.connect(lambda on: self.editor.patch(
                edits.set_input(self.doc, self.part_name if on else None), "Choose signal input"))
            form.addRow("Signal", check)
        if KINDS[part.kind].banded:
            band = QComboBox()
            for key, text in BAND_NAMES.items():
                band.addItem(text, key)
            band.setCurrentIndex(band.findData(self.doc.band_pins.get(part.name)))
            band.currentIndexChanged.connect(lambda i: self.editor.patch(
                edits.pin_band(self.doc, self.part_name, band.itemData(i)), "Pin band"))
            form.addRow("Sets band", band)
        self._sourcing_group(part, outer)
        if any(f.mode for f in KINDS[part.kind].fields):
            group = QGroupBox("Derived (read-only)")
            self._derived = QFormLayout(group)
            outer.addWidget(group)
            self._refresh_derived()
        outer.addStretch(1)

    def _sourcing_group(self, part, outer) -> None:
        """Whether the advisor may change the part, its E series and its tolerance."""
        numeric = [f for f in KINDS[part.kind].fields if f.unit not in ("choice", "name", "net")]
        if not numeric:
            return
        group = QGroupBox("Advisor and tolerance")
        form = QFormLayout(group)
        # Each choice under its label: side by side they would widen the panel past its dock.
        form.setRowWrapPolicy(QFormLayout.RowWrapPolicy.WrapAllRows)
        outer.addWidget(group)
        chosen = any(is_design_choice(part.kind, f.key) for f in numeric)
        options = [("", "Yes: a value I choose" if chosen else "No: the device is given")]
        if has_device_fields(part.kind):
            options.append(("yes", "Yes: I can choose another device"))
        options.append(("no", "No: hold it fixed (given to me)"))
        knob = QComboBox()
        knob.setObjectName("sourcing_knob")
        knob.setToolTip("Whether the advisor may suggest another value for this part. Device physics "
                        "(β, V_A, f_T, C_μ, A₀ ...) is offered only if you can choose another device.")
        for key, text in options:
            knob.addItem(text, key)
        knob.setCurrentIndex(max(0, knob.findData(part.sourcing.knob)))
        knob.currentIndexChanged.connect(lambda i: self._set_sourcing("knob", knob.itemData(i), "knob status"))
        form.addRow("Advisor may change it", knob)
        if part.kind in DEFAULT_SERIES:
            series = QComboBox()
            series.setObjectName("sourcing_series")
            series.addItem(f"{DEFAULT_SERIES[part.kind]} (default for the kind)", "")
            for name in SERIES_NAMES:
                series.addItem(name, name)
            series.setCurrentIndex(max(0, series.findData(part.sourcing.series)))
            series.currentIndexChanged.connect(lambda i: self._set_sourcing("series", series.itemData(i), "E series"))
            form.addRow("Bought from", series)
        if len(numeric) == 1:
            default = DEFAULT_TOLERANCES.get((part.kind, numeric[0].key))
            entry = _Entry(part.sourcing.tolerance, self._set_tolerance, self.theme)
            entry.setObjectName("sourcing_tolerance")
            entry.edit.setPlaceholderText(f"±{default[0]:.0%} by kind" if default else "0 % (ideal)")
            entry.show_verdict(True, "")
            form.addRow("Tolerance ±", entry)
        elif part.kind in ("bjt", "mosfet", "opamp"):
            note = QLabel("Its values keep their tolerances by kind (the report lists each with its source).")
            note.setWordWrap(True)
            form.addRow(note)

    def _set_sourcing(self, key: str, value: str, what: str) -> None:
        part = self.doc.parts[self.part_name]
        if getattr(part.sourcing, key) != value:
            self.editor.patch(edits.set_sourcing(self.doc, part.name, **{key: value}), f"Set {part.name} {what}")

    def _set_tolerance(self, entry: _Entry, text: str) -> None:
        held = self.doc.parts[self.part_name].sourcing
        problem = sourcing_problem(held.knob, held.series, text.strip(), self.part_name)
        if problem:
            entry.show_verdict(False, problem)
            return
        frac = tolerance_fraction(text, self.part_name)
        entry.show_verdict(True, "" if frac is None else f"±{100 * frac:g} %")
        self._set_sourcing("tolerance", text.strip(), "tolerance")

    def _choice(self, part, f: Field) -> QComboBox:
        box = QComboBox()
        for choice in f.choices:
            box.addItem(MODE_NAMES.get(choice, choice), choice)
        box.setCurrentIndex(box.findData(part.params.get(f.key)))
        box.currentIndexChanged.connect(lambda i: self.editor.commit_field(self.part_name, f, box.itemData(i)))
        return box

    def _sensed(self, part, f: Field) -> QComboBox:
        box = QComboBox()
        sources = [p.name for p in self.doc.parts.values() if p.kind == "vsource"]
        current = part.params.get(f.key, "")
        if current not in sources:
            box.addItem(f"{current or '(none)'} — not a voltage source here", current)
        for name in sources:
            box.addItem(name, name)
        box.setCurrentIndex(box.findData(current))
        box.currentIndexChanged.connect(lambda i: self._set_field(None, f, box.itemData(i)))
        return box

    # -- committing ---------------------------------------------------------------------------
    def _set_field(self, entry: _Entry | None, f: Field, text: str) -> None:
        verdict = self.editor.commit_field(self.part_name, f, text)
        if entry is not None:
            entry.show_verdict(verdict.ok, verdict.shown)

    def _step_field(self, entry: _Entry, f: Field, steps: int, decade: bool, hold: bool) -> None:
        verdict = self.scrub.step(self.part_name, f.key, steps, decade=decade, hold=hold)
        # The entry shows the document's value even while it has the keyboard: the scrub
        # works from the value the design holds, not from text typed and not yet accepted.
        entry.invalid = False
        entry.edit.setText(self.doc.parts[self.part_name].params.get(f.key, ""))
        check = verdict if verdict.ok else check_field(self.doc, self.doc.parts[self.part_name], f,
                                                       entry.edit.text())
        entry.show_verdict(check.ok, check.shown if verdict.ok else f"{check.shown} — {verdict.shown}")

    def _rename(self, entry: _Entry, text: str) -> None:
        problem = self.editor.rename(self.part_name, text)
        entry.show_verdict(problem is None, problem or "")

    def _set_title(self, entry: _Entry, text: str) -> None:
        problem = text_problem(text)
        if problem:
            entry.show_verdict(False, f"Title: {problem}")
            return
        entry.show_verdict(True, "")
        if text != self.doc.title:
            self.editor.patch(edits.set_meta(self.doc, "title", text), "Set title")

    # -- keeping up with the document -------------------------------------------------------------
    def _refresh_texts(self) -> None:
        if self.part_name is None:
            if "title" in self._entries:
                self._entries["title"].set_text(self.doc.title)
                self.notes.show_document()
            return
        part = self.doc.parts[self.part_name]
        for key, entry in self._entries.items():
            if key == "name":
                entry.set_text(part.name)
                continue
            entry.set_text(part.params.get(key, ""))
            if not entry.invalid:
                verdict = check_field(self.doc, part, KINDS[part.kind].field(key), entry.edit.text())
                entry.show_verdict(verdict.ok, verdict.shown)

    def show_outcome(self, outcome) -> None:
        """Take the operating point of the newest analysis (an
        :class:`app.analysis.runner.Outcome`): a block biased from the sheet shows its bias."""
        self._bias = outcome.analysis.operating_point if outcome.ok else None
        self._no_bias = outcome.problem
        self._refresh_derived()

    def _refresh_derived(self) -> None:
        if self._derived is None or self.part_name not in self.doc.parts:
            return
        while self._derived.rowCount():
            self._derived.removeRow(0)
        values = derived_values(self.doc.parts[self.part_name], self._bias, self._no_bias)
        if isinstance(values, str):
            note = QLabel(values)
            note.setWordWrap(True)
            self._derived.addRow(note)
            return
        kind = KINDS[self.doc.parts[self.part_name].kind]
        labels = {f.key: f.label for f in kind.fields} | DERIVED_LABELS
        for key, value in values.items():
            shown = QLabel(value if isinstance(value, str) else format_value(value, DERIVED_UNITS.get(key, "")))
            shown.setObjectName(f"derived_{key}")
            shown.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
            self._derived.addRow(caption(labels.get(key, key)), shown)

    def step_focused(self, steps: int, decade: bool = False) -> bool:
        """Step the value whose field has the keyboard (Alt+Up/Down); False when none has."""
        for entry in self._entries.values():
            if entry.grip is not None and entry.edit.hasFocus():
                entry.step(steps, decade)
                return True
        return False

    def focus_field(self, key: str) -> None:
        """Put the cursor in one field's entry (when a part is shown)."""
        if key in self._entries:
            self._entries[key].edit.setFocus()
            self._entries[key].edit.selectAll()
