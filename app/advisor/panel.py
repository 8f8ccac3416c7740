"""The design advisor: targets, sensitivities, suggestions, tolerance spread, report.

Every number shown comes from an engine result (:mod:`bandsketch.engine.advise.targets`,
:mod:`bandsketch.engine.advise.sensitivity`, :mod:`bandsketch.engine.advise.tolerance`); the widgets only lay them out. The
verdict and the sensitivities are worked from the analysis the window's runner delivers,
so an edit is analysed once for every view. Long searches run on a worker thread over a
snapshot of the design, so the sheet stays live; every change to the design, a target
included, is a patch (:mod:`app.edits`) pushed through the window's
:class:`app.commands.Editor`.

The suggestion, search and tolerance modules are imported when first used, not with the
window: the window opens without them.
"""

from __future__ import annotations

import math
import threading

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QObject, QThreadPool, Qt, Signal
from PySide6.QtGui import QColor
from PySide6.QtWidgets import (QFormLayout, QFrame, QGridLayout, QHBoxLayout, QHeaderView, QLabel,
                               QLineEdit, QProgressBar, QPushButton, QScrollArea, QSpinBox, QTableWidget,
                               QTableWidgetItem, QTabWidget, QVBoxLayout, QWidget)

from bandsketch.engine.design.document import ChangeKind, Document
from bandsketch.engine.core.errors import Cancelled, CircuitError
from bandsketch.engine.present.plotdata import histogram_axis
from bandsketch.engine.advise.sensitivity import FIGURE_TITLES, FIGURES, sensitivities
from bandsketch.engine.advise.timetargets import rise_time_sensitivities
from bandsketch.engine.design.schema import target_problem
from bandsketch.engine.advise.targets import TARGET_LABELS, check_targets, parse_targets
from bandsketch.engine.present.plotdata import bode_data
from bandsketch.engine.core.values import format_gain, format_signed, format_value

from .. import edits

_SUGGEST_COLUMNS = (
    ("Change", "The value(s) as applied"), ("Now", "The present value(s)"),
    ("Exact lies between", "The part's E-series values either side of the exact value that just meets the target"),
    ("f_H", "Exact upper corner with the change"), ("f_L", "Exact lower corner with the change"),
    ("|A_m|", "Mid-band gain with the change"), ("Bias", "Each transistor's region, when biased from the sheet"),
    ("Yield", "Share of the tolerance spread (1000 samples) meeting every target, for rows that meet them"),
    ("Verdict", "Against every target; hover for each target's margin"))
BIAS_COLUMN = [title for title, _ in _SUGGEST_COLUMNS].index("Bias")


def _hz(f) -> str:
    return format_value(f, "Hz") if f is not None and math.isfinite(f) and f > 0 else "none"
_SPREAD_TITLES = {"f_high": "f_H", "f_low": "f_L", "gain": "|A_m|"}
_TARGET_FIELDS = ((("f_high_min", "Minimum f_H", "e.g. 1M"), ("f_low_max", "Maximum f_L", "e.g. 20"),
                   ("gain", "Mid-band gain", "e.g. 100 or 40 dB"), ("gain_tolerance", "Gain tolerance", "e.g. 10 % or 1 dB")),
                  (("rise_time_max", "Longest rise (10–90 %)", "e.g. 50n"),
                   ("overshoot_max", "Largest overshoot", "e.g. 5 %"),
                   ("settling_time_max", "Longest settling (1 %)", "e.g. 400n")))
"""The target entries, in two columns: the frequency response's, then the step's."""


class _Relay(QObject):
    """Carries a worker's result back to the UI thread (queued, since it lives there)."""

    done = Signal(str, object)
    progress = Signal(str, int, int)


class _Jobs(QObject):
    """One worker thread; each job kind reports ``done(kind, result)`` or an error text."""

    def __init__(self, parent=None):
        super().__init__(parent)
        self.pool = QThreadPool(self)
        self.pool.setMaxThreadCount(1)
        self.relay = _Relay(self)
        self.cancel = threading.Event()

    def start(self, kind: str, work) -> None:
        self.cancel.clear()
        relay, cancel = self.relay, self.cancel

        def run():
            try:
                result = work(lambda d, t: relay.progress.emit(kind, d, t), cancel.is_set)
            except Cancelled:
                result = "cancelled"
            except (CircuitError, ValueError) as exc:
                result = getattr(exc, "message", str(exc))
            relay.done.emit(kind, result)

        self.pool.start(run)

    def wait(self, timeout_ms: int = 60000) -> bool:
        """Block until the worker is idle (tests, screenshots, shutdown)."""
        from PySide6.QtCore import QCoreApplication, QDeadlineTimer

        deadline = QDeadlineTimer(timeout_ms)
        while self.pool.activeThreadCount():
            if deadline.hasExpired():
                return False
            self.pool.waitForDone(20)
        QCoreApplication.processEvents()
        return True


def _item(text: str, tip: str = "", numeric: bool = False) -> QTableWidgetItem:
    it = QTableWidgetItem(text)
    it.setFlags(Qt.ItemFlag.ItemIsEnabled | Qt.ItemFlag.ItemIsSelectable)
    if tip:
        it.setToolTip(tip)
    if numeric:
        it.setTextAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
    return it


class AdvisorPanel(QWidget):
    """Targets, sensitivities, suggestions (one knob, or several together), tolerance spread, report.

    Parameters
    ----------
    doc : Document
        The design.
    editor : app.commands.Editor
        The one way edits reach the document.
    runner : app.analysis.runner.AnalysisRunner
        The window's analysis runner; the advisor shows what it delivers rather than
        analysing the design a second time.

    Signals
    -------
    part_hovered(str)
        A sensitivity row naming a part is under the mouse ("" when none is).
    applied(object)
        A suggestion was applied; carries the exact curve before it
        (:class:`bandsketch.engine.present.plotdata.Curve`), for the Bode plot to keep.
    """

    part_hovered = Signal(str)
    applied = Signal(object)

    def __init__(self, doc: Document, editor, runner, parent=None):
        super().__init__(parent)
        self.doc, self.editor = doc, editor
        self.jobs = _Jobs(self)
        self.jobs.relay.done.connect(self._job_done)
        self.jobs.relay.progress.connect(self._job_progress)
        self.spread = None
        self.suggestions = ()
        self.tabs = QTabWidget()
        self.tabs.addTab(self._targets_tab(), "Targets")
        self.tabs.addTab(self._sensitivity_tab(), "Sensitivities")
        self.tabs.addTab(self._suggest_tab(), "Suggestions")
        self.tabs.addTab(self._spread_tab(), "Tolerance spread")
        # The sensitivities have a worker of their own: a long search does not hold them up.
        self.sens_jobs = _Jobs(self)
        self.sens_jobs.relay.done.connect(self._sensitivities_done)
        self._latest = self._sens_source = self._sens_shown = None
        self._sens_running = False
        self.tabs.currentChanged.connect(self._refresh_sensitivities)
        self.tabs.currentChanged.connect(self._page_shown)
        # The report covers every page, so its button sits by the tabs rather than on one.
        self.report_button = QPushButton("Export report…")
        self.report_button.setToolTip("Write the design report, with the sheet and plots, as HTML or PDF "
                                      "(the same document bandsketch report writes)")
        self.report_button.clicked.connect(self._ask_report)
        self.tabs.setCornerWidget(self.report_button)
        # The window sets this to a callable giving the design file's
        # bandsketch.engine.present.report.DesignSource (its name and hash).
        self.source = None
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.addWidget(self.tabs)
        doc.changed.connect(self._doc_changed)
        runner.finished.connect(self.show_outcome)
        self._show_targets()
        if runner.last is not None:
            self.show_outcome(runner.last)

    # -- targets --------------------------------------------------------------------------
    def _targets_tab(self) -> QWidget:
        # The fields keep a field's width on the left; the verdict reads beside them. The
        # page scrolls rather than widen the window: seven fields in two columns would.
        w = QWidget()
        row = QHBoxLayout(w)
        fields = QVBoxLayout()
        columns = QHBoxLayout()
        self.target_edits = {}
        for group in _TARGET_FIELDS:
            form = QFormLayout()
            form.setFieldGrowthPolicy(QFormLayout.FieldGrowthPolicy.FieldsStayAtSizeHint)
            for key, label, hint in group:
                edit = QLineEdit()
                edit.setPlaceholderText(hint)
                edit.setFixedWidth(edit.fontMetrics().horizontalAdvance("m") * 11)
                edit.editingFinished.connect(lambda k=key: self._target_edited(k))
                form.addRow(label, edit)
                self.target_edits[key] = edit
            columns.addLayout(form)
        fields.addLayout(columns)
        self.target_problem = QLabel()
        self.target_problem.setWordWrap(True)
        fields.addWidget(self.target_problem)
        fields.addStretch(1)
        row.addLayout(fields)
        row.addSpacing(18)
        self.verdict_label = QLabel()
        self.verdict_label.setWordWrap(True)
        self.verdict_label.setTextFormat(Qt.TextFormat.RichText)
        self.verdict_label.setAlignment(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop)
        row.addWidget(self.verdict_label, 1)
        page = QScrollArea()
        page.setWidgetResizable(True)
        page.setFrameShape(QFrame.Shape.NoFrame)
        page.setWidget(w)
        return page

    def _target_edited(self, key: str) -> None:
        text = self.target_edits[key].text().strip()
        problem = target_problem(key, text)
        if problem:
            # Refused where it was typed: the entry keeps the text, the reason shows under it.
            self.target_problem.setText(problem)
            return
        if text != self.doc.targets.get(key, ""):
            self.set_target(key, text)

    def set_target(self, key: str, text: str) -> None:
        """Set a target as one undoable step."""
        self.editor.patch(edits.set_target(self.doc, key, text), f"Set {TARGET_LABELS[key]} target")

    def _doc_changed(self, change) -> None:
        if change.what in (ChangeKind.SETTINGS, ChangeKind.RESET):
            self._show_targets()

    def _show_targets(self) -> None:
        for key, edit in self.target_edits.items():
            if not edit.hasFocus():
                edit.setText(self.doc.targets.get(key, ""))

    # -- sensitivities --------------------------------------------------------------------
    def _sensitivity_tab(self) -> QWidget:
        w = QWidget()
        v = QVBoxLayout(w)
        self.sens_table = QTableWidget(0, len(FIGURES) + 2)
        self.sens_table.setHorizontalHeaderLabels(["Part value"] + [FIGURE_TITLES[f] for f in FIGURES]
                                                  + ["t_r estimated"])
        self.sens_table.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Stretch)
        self.sens_table.setMouseTracking(True)
        self.sens_table.cellEntered.connect(self._sens_hover)
        self.sens_table.viewport().installEventFilter(self)
        note = QLabel("d ln(figure) / d ln(value): +1 means the figure rises in proportion. "
                      "Ranked by the exact upper corner; hover a row to find the part on the sheet.")
        note.setWordWrap(True)
        v.addWidget(note)
        v.addWidget(self.sens_table)
        self.sens_notes = QLabel()
        self.sens_notes.setWordWrap(True)
        v.addWidget(self.sens_notes)
        return w

    def eventFilter(self, obj, event):
        from PySide6.QtCore import QEvent

        if obj is self.sens_table.viewport() and event.type() == QEvent.Type.Leave:
            self.part_hovered.emit("")
        return False

    def _sens_hover(self, row: int, _col: int) -> None:
        item = self.sens_table.item(row, 0)
        self.part_hovered.emit(item.data(Qt.ItemDataRole.UserRole) if item else "")

    def show_outcome(self, outcome) -> None:
        """Show the verdict and sensitivities of the analysis the window's runner delivered.

        Parameters
        ----------
        outcome : app.analysis.runner.Outcome
            The newest analysis of the design; its snapshot supplies the targets checked.
        """
        try:
            targets = parse_targets(outcome.doc.targets)
            self.target_problem.setText("")
        except CircuitError as exc:
            self.target_problem.setText(exc.message)
            targets = None
        self._latest = outcome
        if not outcome.ok:
            why = outcome.problem or "the sheet is empty; draw a stage and give it an output probe."
            self.verdict_label.setText(f"No analysis yet: {why}")
            self.sens_table.setRowCount(0)
            return
        self._show_verdict(targets, outcome.analysis)
        self._sens_source = outcome
        self._refresh_sensitivities()

    def _refresh_sensitivities(self, *_) -> None:
        """Work out the sensitivities of the newest analysis once they are on screen.

        They cost a set of solves per part value (most of a second on a 600-part design), so
        they run on the worker thread, and an edit made while another page is showing does
        not wait for them; one run at a time, the newest analysis next."""
        outcome = self._sens_source
        if (outcome is None or outcome is self._sens_shown or self._sens_running
                or not self.sens_table.isVisible()):
            return
        self._sens_shown, self._sens_running = outcome, True
        self.sens_jobs.start("sensitivities",
                             lambda _progress, _cancel: (outcome, sensitivities(outcome.circuit, outcome.analysis)))

    def _sensitivities_done(self, _kind: str, result) -> None:
        self._sens_running = False
        if isinstance(result, str):  # the reason they could not be worked out
            self.sens_table.setRowCount(0)
            self.sens_notes.setText(result)
        elif result[0] is self._latest:
            self._show_sensitivities(result[1])
        self._refresh_sensitivities()  # a newer analysis arrived meanwhile

    def showEvent(self, event):
        super().showEvent(event)
        self._refresh_sensitivities()

    def _show_verdict(self, targets, analysis) -> None:
        if targets is None or targets.is_empty():
            self.verdict_label.setText("No targets set.")
            return
        checks = check_targets(targets, analysis, analysis.gain_unit)
        lines = []
        for c in checks:
            colour = "#1a7f37" if c.passed else "#b3261e"
            word = "PASS" if c.passed else "FAIL"
            lines.append(f'<b style="color:{colour}">{word}</b> {c.text}')
        self.verdict_label.setText("<br>".join(lines))

    def _show_sensitivities(self, sens) -> None:
        rise = rise_time_sensitivities(sens)
        rows = sorted(sens.rows, key=lambda r: (-abs(r.high_exact or 0.0), -abs(r.low_exact or 0.0)))
        self.sens_table.setRowCount(len(rows))
        for i, r in enumerate(rows):
            label = _item(r.value.label, f"{r.value.element} = {format_value(r.value.nominal, r.value.unit)}")
            label.setData(Qt.ItemDataRole.UserRole, r.value.part)
            self.sens_table.setItem(i, 0, label)
            for j, figure in enumerate(FIGURES, 1):
                v = getattr(r, figure)
                self.sens_table.setItem(i, j, _item("—" if v is None else format_signed(v), sens.notes.get(figure, ""),
                                                    numeric=True))
            v = rise.get(r.value.label)
            self.sens_table.setItem(i, len(FIGURES) + 1, _item(
                "—" if v is None else format_signed(v), "The estimated rise time, ln 9·b1: minus the estimated f_H's",
                numeric=True))
        self.sens_notes.setText("\n".join(sens.notes.values()))

    # -- suggestions ----------------------------------------------------------------------
    def _suggest_tab(self) -> QWidget:
        w = QWidget()
        v = QVBoxLayout(w)
        bar = QHBoxLayout()
        self.suggest_button = QPushButton("Suggest values")
        self.suggest_button.setToolTip("For each knob and failing target, the standard values either side of the "
                                       "one that just meets it, each analysed again with every target")
        self.suggest_button.clicked.connect(self.find_suggestions)
        self.search_knobs = QLineEdit()
        self.search_knobs.setPlaceholderText("knobs, e.g. RC, CE (empty: the advisor picks a pair)")
        self.search_button = QPushButton("Meet all together")
        self.search_button.setToolTip("Search every standard-value combination of two or three knobs for the one "
                                      "that meets every target with the most margin")
        self.search_button.clicked.connect(self.search_together)
        self.apply_button = QPushButton("Apply selected")
        self.apply_button.setEnabled(False)
        self.apply_button.clicked.connect(self.apply_selected)
        bar.addWidget(self.suggest_button)
        bar.addSpacing(12)
        bar.addWidget(self.search_knobs, 1)
        bar.addWidget(self.search_button)
        bar.addSpacing(12)
        bar.addWidget(self.apply_button)
        v.addLayout(bar)
        self.suggest_progress = QProgressBar()
        self.suggest_progress.setVisible(False)
        v.addWidget(self.suggest_progress)
        self.suggest_label = QLabel("Knobs are the values you choose (resistors, capacitors, inductors); a "
                                    "device's physics is offered only if you can choose another device "
                                    "(Properties › Advisor may change it).")
        self.suggest_label.setWordWrap(True)
        self.suggest_label.setTextFormat(Qt.TextFormat.RichText)
        v.addWidget(self.suggest_label)
        self.suggest_table = QTableWidget(0, len(_SUGGEST_COLUMNS))
        self.suggest_table.setHorizontalHeaderLabels([c for c, _ in _SUGGEST_COLUMNS])
        for col, (_, tip) in enumerate(_SUGGEST_COLUMNS):
            self.suggest_table.horizontalHeaderItem(col).setToolTip(tip)
        header = self.suggest_table.horizontalHeader()
        header.setSectionResizeMode(QHeaderView.ResizeMode.ResizeToContents)
        header.setSectionResizeMode(len(_SUGGEST_COLUMNS) - 1, QHeaderView.ResizeMode.Stretch)
        self.suggest_table.verticalHeader().setVisible(False)
        self.suggest_table.setSelectionBehavior(QTableWidget.SelectionBehavior.SelectRows)
        self.suggest_table.setSelectionMode(QTableWidget.SelectionMode.SingleSelection)
        self.suggest_table.itemSelectionChanged.connect(self._suggestion_selected)
        self.suggest_table.cellDoubleClicked.connect(lambda row, _c: self.apply_suggestion(row))
        v.addWidget(self.suggest_table, 1)
        return w

    def _targets_now(self):
        targets = parse_targets(self.doc.targets)
        if targets.is_empty():
            self.suggest_label.setText("Set a target first (Targets page): there is nothing to meet.")
            return None
        return targets

    def find_suggestions(self) -> None:
        """Work out, on the worker thread, the suggestions for the design's targets."""
        targets = self._targets_now()
        if targets is None:
            return
        doc = self.doc.copy()
        self._busy(True)
        from bandsketch.engine.advise.suggest import suggest

        self.jobs.start("suggest", lambda progress, cancel: suggest(doc, targets, progress=progress, cancel=cancel))

    def search_together(self) -> None:
        """Search, on the worker thread, the knobs typed (or a proposed pair) together."""
        targets = self._targets_now()
        if targets is None:
            return
        names = [n.strip() for n in self.search_knobs.text().replace(";", ",").split(",") if n.strip()] or None
        doc = self.doc.copy()
        self._busy(True)
        from bandsketch.engine.advise.search import search

        self.jobs.start("search", lambda progress, cancel: search(doc, targets, names, progress=progress,
                                                                  cancel=cancel))

    def _busy(self, on: bool) -> None:
        for button in (self.suggest_button, self.search_button):
            button.setEnabled(not on)
        self.suggest_progress.setVisible(on)
        self.suggest_progress.setValue(0)

    def _show_suggestions(self, rows, head: str) -> None:
        from bandsketch.engine.advise.suggest import verdict_line

        self.suggestions = tuple(rows)
        self.suggest_label.setText(head)
        self.suggest_table.setRowCount(len(rows))
        good, bad = "#1a7f37", "#b3261e"
        for i, s in enumerate(rows):
            e = s.effect
            unit = e.gain_unit
            first = s.changes[0]
            between = "" if first.lower is None or len(s.changes) > 1 else \
                f"{first.knob.series}: {format_value(first.lower, first.knob.unit)} … {format_value(first.upper, first.knob.unit)}"
            now = ", ".join(format_value(abs(c.knob.nominal), c.knob.unit) for c in s.changes)
            cells = (s.label, now, between, _hz(e.f_high), _hz(e.f_low),
                     format_gain(abs(e.gain), unit) if math.isfinite(e.gain) else "—",
                     ", ".join(d.text for d in e.devices) or "—",
                     f"{100 * s.spread.fraction:.0f} %" if s.spread else "—", verdict_line(e))
            for col, text in enumerate(cells):
                item = _item(text, numeric=col in (3, 4, 5, 7))
                if col == len(cells) - 1:
                    item.setForeground(QColor(good if s.meets_all else bad))
                    item.setToolTip("\n".join(c.text for c in e.checks))
                if col == BIAS_COLUMN and e.out_of_region:
                    # A change that saturates or cuts off a transistor is no amplifier: say so where
                    # the eye lands, not only in the verdict.
                    item.setText("⚠ " + text)
                    item.setForeground(QColor(bad))
                    item.setToolTip(f"{', '.join(e.out_of_region)} out of the amplifying region with this change: "
                                    "its small-signal values no longer describe an amplifier.")
                if len(s.changes) > 1:
                    font = item.font()
                    font.setBold(True)
                    item.setFont(font)
                self.suggest_table.setItem(i, col, item)
        # The best change that meets every target comes selected, so applying it is one click.
        self.suggest_table.clearSelection()
        first = next((i for i, s in enumerate(rows) if s.meets_all), None)
        if first is not None:
            self.suggest_table.selectRow(first)
        self._suggestion_selected()

    def _show_advice(self, advice) -> None:
        meeting = [s for s in advice.suggestions if s.meets_all]
        if advice.before.meets_all:
            head = "The design meets every target now; nothing to suggest."
        elif meeting:
            best = meeting[0]
            y = f", yield {100 * best.spread.fraction:.0f} %{best.spread.note}" if best.spread else ""
            head = (f"<b>{len(meeting)}</b> of {len(advice.suggestions)} single changes meet every target; "
                    f"best first by yield: <b>{best.label}</b>{y}. Rows that break a target follow.")
        else:
            head = ("No single change meets every target (each row says what it misses). "
                    "Try <b>Meet all together</b> with two or three knobs.")
        for key in advice.unmet:
            head += f"<br>No single knob in reach meets the {TARGET_LABELS[key]} target."
        self._show_suggestions(advice.suggestions, head)

    def _show_search(self, found) -> None:
        rows = (found.best,) if found.best is not None else ()
        colour = "#1a7f37" if found.found else "#b3261e"
        self._show_suggestions(rows, f'<span style="color:{colour}">{found.text}</span>')

    def _suggestion_selected(self) -> None:
        rows = self.suggest_table.selectionModel().selectedRows()
        self.apply_button.setEnabled(bool(rows))

    def apply_selected(self) -> None:
        rows = self.suggest_table.selectionModel().selectedRows()
        if rows:
            self.apply_suggestion(rows[0].row())

    def apply_suggestion(self, row: int) -> None:
        """Write a suggestion's values into their fields as one undoable step, keeping the
        present curve on the Bode plot to compare with."""
        s = self.suggestions[row]
        if any(c.knob.part not in self.doc.parts for c in s.changes):
            return
        outcome = self._sens_source
        patch = edits.Patch()
        for c in s.changes:
            patch = patch.merged(edits.edit_field(self.doc, c.knob.part, c.knob.key, c.text))
        if outcome is not None and outcome.ok:
            self.applied.emit(bode_data(outcome.analysis).exact)
        self.editor.patch(patch, f"Apply {s.label}")

    # -- tolerance spread -----------------------------------------------------------------
    def _spread_tab(self) -> QWidget:
        w = QWidget()
        v = QVBoxLayout(w)
        bar = QHBoxLayout()
        self.samples = QSpinBox()
        self.samples.setRange(100, 1_000_000)
        self.samples.setSingleStep(1000)
        self.samples.setValue(10_000)
        self.seed = QSpinBox()
        self.seed.setRange(0, 2**31 - 1)
        self.seed.setValue(1)
        self.spread_button = QPushButton("Run")
        self.spread_button.clicked.connect(self.run_spread)
        self.cancel_button = QPushButton("Cancel")
        self.cancel_button.setEnabled(False)
        self.cancel_button.clicked.connect(self.jobs.cancel.set)
        self.spread_progress = QProgressBar()
        for widget in (QLabel("Samples"), self.samples, QLabel("Seed"), self.seed, self.spread_button,
                       self.cancel_button):
            bar.addWidget(widget)
        bar.addStretch(1)
        v.addLayout(bar)
        v.addWidget(self.spread_progress)
        self.spread_label = QLabel("Each part's tolerance as set in Properties, else by kind (resistors ±5 %, "
                                   "capacitors ±10 %, transistor values ±10–30 %); the report lists each with "
                                   "its source.")
        self.spread_label.setWordWrap(True)
        v.addWidget(self.spread_label)
        # The histograms are made when the page is first shown: three plots cost a tenth of
        # the window's start-up, and most sessions never open the page.
        self._spread_grid = QGridLayout()
        self._spread_page = w
        self.plots = {}
        v.addLayout(self._spread_grid, 1)
        return w

    def _page_shown(self, _index) -> None:
        if self.tabs.currentWidget() is self._spread_page:
            self._spread_plots()

    def _spread_plots(self) -> dict:
        """The histogram plots, figure -> PlotWidget (made the first time they are needed)."""
        if not self.plots:
            for col, (fig, title) in enumerate(_SPREAD_TITLES.items()):
                plot = pg.PlotWidget()
                plot.setBackground("w")
                plot.setTitle(title, color="#1d2430")
                plot.getAxis("left").setLabel("samples")
                plot.setMenuEnabled(False)
                self._spread_grid.addWidget(plot, 0, col)
                self.plots[fig] = plot
        return self.plots

    def run_spread(self) -> None:
        """Start the Monte Carlo on the worker thread."""
        doc, samples, seed = self.doc.copy(), self.samples.value(), self.seed.value()
        self.spread_button.setEnabled(False)
        self.cancel_button.setEnabled(True)
        self.spread_progress.setValue(0)
        from bandsketch.engine.advise.tolerance import spread_of_design

        self.jobs.start("spread", lambda progress, cancel: spread_of_design(
            doc, samples, seed, progress=progress, cancel=cancel))

    def _show_spread(self, spread) -> None:
        self.spread = spread
        for fig, plot in self._spread_plots().items():
            plot.clear()
            hist = next((h for h in spread.histograms if h.figure == fig), None)
            if hist is None or hist.edges.size == 0:
                plot.setTitle(f"{_SPREAD_TITLES[fig]}: none", color="#1d2430")
                continue
            plot.setTitle(_SPREAD_TITLES[fig], color="#1d2430")
            axis = histogram_axis(hist)
            plot.setXRange(axis.low, axis.high, padding=0)
            plot.getAxis("bottom").setTicks([list(axis.ticks), []])
            centres = (hist.edges[:-1] + hist.edges[1:]) / 2
            width = float(np.diff(hist.edges).mean())
            plot.addItem(pg.BarGraphItem(x=centres, height=hist.counts, width=width * 0.95, brush="#7aa6e0"))
            for value, text in hist.target_lines:
                plot.addItem(pg.InfiniteLine(value, angle=90, pen=pg.mkPen("#b3261e", width=2), label=text,
                                             labelOpts={"color": "#b3261e", "position": 0.9}))
            if hist.nominal:
                plot.addItem(pg.InfiniteLine(hist.nominal, angle=90, pen=pg.mkPen("#1d2430", style=Qt.PenStyle.DashLine)))
        parts = [f"{spread.samples:,} samples, seed {spread.seed}, {spread.seconds:.2f} s."]
        names = {"f_high_min": "f_H target", "f_low_max": "f_L target", "gain": "gain window",
                 "all": "corner and gain targets together"}
        parts += [f"Yield, {names[k]}: {100 * v:.1f} %" for k, v in spread.yields.items()]
        worst = [w for w in spread.worst_cases if w.extreme == ("min" if w.figure == "f_high" else "max")
                 and w.figure != "gain" and math.isfinite(w.value)]
        parts += [f"Worst-case {_SPREAD_TITLES[w.figure]}: "
                  f"{format_value(w.value, 'Hz')}" for w in worst]
        self.spread_label.setText("  ·  ".join(parts))

    # -- report ---------------------------------------------------------------------------
    def _ask_report(self) -> None:
        from PySide6.QtWidgets import QFileDialog

        path, _ = QFileDialog.getSaveFileName(self, "Export design report", f"{self.doc.title}.html",
                                              "HTML report (*.html);;PDF report (*.pdf)")
        if path:
            self.export_report(path)

    def export_report(self, path: str) -> str:
        """Write the report (HTML or PDF by the file's ending); returns what happened, in words."""
        from PySide6.QtGui import QGuiApplication
        from PySide6.QtWidgets import QApplication

        from .export import export_report

        # The report analyses the design, its suggestions and (unless one was run) a spread:
        # seconds on a large design, so say so before the window stops answering.
        self.spread_label.setText("Writing the report (analysis, suggestions and tolerance spread)…")
        QGuiApplication.setOverrideCursor(Qt.CursorShape.WaitCursor)
        QApplication.processEvents()
        try:
            export_report(self.doc.copy(), path, source=self.source() if self.source else None, spread=self.spread)
        except (CircuitError, OSError, ValueError) as exc:
            message = f"The report was not written: {getattr(exc, 'message', None) or exc}"
        else:
            message = f"Report written to {path}"
        finally:
            QGuiApplication.restoreOverrideCursor()
        self.spread_label.setText(message)
        return message

    # -- worker results -------------------------------------------------------------------
    def _job_progress(self, kind: str, done: int, total: int) -> None:
        bar = self.spread_progress if kind == "spread" else self.suggest_progress
        bar.setMaximum(total)
        bar.setValue(done)

    def _job_done(self, kind: str, result) -> None:
        if kind == "spread":
            self.spread_button.setEnabled(True)
            self.cancel_button.setEnabled(False)
            if isinstance(result, str):
                self.spread_label.setText("Spread cancelled." if result == "cancelled" else result)
            else:
                self._show_spread(result)
        else:
            self._busy(False)
            if isinstance(result, str):
                self.suggest_label.setText("Stopped." if result == "cancelled" else result)
            elif kind == "suggest":
                self._show_advice(result)
            else:
                self._show_search(result)
