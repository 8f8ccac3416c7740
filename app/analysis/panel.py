"""The analysis beside the canvas: verdict, time-constant bars and Bode plot, kept live.

:class:`AnalysisPanel` asks the runner for a fresh analysis on every finished edit, shows
the newest outcome in every view, greys the last good result when the circuit as drawn
cannot be analysed, and joins selection on the canvas and in the bars to the test picture
drawn on the sheet. A band pin, from the bars or the canvas, is an undoable edit.
"""

from __future__ import annotations

import shiboken6
from PySide6.QtCore import QEvent, QObject, QRectF, Qt, QTimer
from PySide6.QtWidgets import (QFileDialog, QFormLayout, QHBoxLayout, QLabel, QLineEdit, QMenu, QScrollArea,
                               QSplitter, QTabWidget, QWidgetAction,
                               QToolButton, QVBoxLayout, QWidget)

from bandsketch.engine.core.band import Band
from bandsketch.engine.design.document import ChangeKind
from bandsketch.engine.design.netlist import Problem
from bandsketch.engine.advise.targets import parse_targets
from bandsketch.engine.core.errors import BadValueError
from bandsketch.engine.core.values import parse_value
from bandsketch.engine.present.stepdata import time_target_lines
from bandsketch.engine.present.timesummary import write_step_csv
from bandsketch.engine.present.svgfigures import bars_svg
from bandsketch.engine.present.plotdata import (bode_data, corner_shift, part_of, sweep_range, target_marks,
                                                write_response_csv)

from .. import edits
from ..canvas.items import PartItem
from ..canvas.sheet_picture import sheet_svg
from ..figures import write_picture
from .bars import TimeConstantBars
from .bode import BodePlot
from .runner import AnalysisRunner, Outcome
from ..canvas.bias_notes import BiasNotes
from .timeplot import TimePlot
from .style import view_colours
from .port_picture import PictureOverlay, picture_geometry
from .verdict import ProblemBanner, VerdictStrip

WIDEST_READOUT = "f = 888.8 MHz · −188.8 dBΩ · ∠ −188.8°"
"""The widest text the hover readout shows (the step view's is shorter), for its fixed width."""
GHOST_AFTER_MS = 2000
"""How long the curve from before a value scrub stays after the scrub ends, ms."""


class AnalysisPanel(QWidget):
    """Verdict, bars and Bode plot of a window's design, and the test picture on its sheet.

    Parameters
    ----------
    window : app.main_window.MainWindow
        Gives the document, the editor (undo stack), the scene and the view.
    """

    def __init__(self, window):
        super().__init__()
        self.window = window
        self.doc = window.doc
        self.scene = window.scene
        self.editor = window.editor
        self.outcome: Outcome | None = None
        self.good: Outcome | None = None
        self._fit_whole = True
        self.focus: str | None = None
        self._chosen: str | None = None
        self._selecting = False
        self._compared = None  # the "before" curve of an applied suggestion, kept until dismissed
        self.ghost = None
        """The Bode plot's data when the value scrub under way (or just over) began, or None."""
        self._ghost_timer = QTimer(self)
        self._ghost_timer.setSingleShot(True)
        self._ghost_timer.setInterval(GHOST_AFTER_MS)
        self._ghost_timer.timeout.connect(self.drop_ghost)

        self.runner = AnalysisRunner(self)
        self.bias_notes = BiasNotes(self.scene, window.theme)
        self.banner = ProblemBanner()
        self.verdict = VerdictStrip()
        self.bars = TimeConstantBars()
        self.bode = BodePlot()
        self.time = TimePlot()
        self.overlay = PictureOverlay()
        self.scene.addItem(self.overlay)

        bars_scroll = QScrollArea()
        bars_scroll.setWidget(self.bars)
        bars_scroll.setWidgetResizable(True)
        bars_scroll.setFrameShape(QScrollArea.Shape.NoFrame)

        right = QWidget()
        right_layout = QVBoxLayout(right)
        right_layout.setContentsMargins(0, 0, 0, 0)
        right_layout.setSpacing(2)
        tools = QHBoxLayout()
        self.legend = QLabel(self.bode.legend_html())
        # It wraps rather than widen the plot's side when a scrub adds its key: the bars
        # beside keep their width.
        self.legend.setWordWrap(True)
        tools.addWidget(self.legend, 1)
        self.dismiss_before = QToolButton(text="Hide before")
        self.dismiss_before.setToolTip("Remove the dotted curve of the design before the applied suggestion")
        self.dismiss_before.clicked.connect(lambda: self.compare_with_before(None))
        self.dismiss_before.hide()
        tools.addWidget(self.dismiss_before)
        self.sweep_from, self.sweep_to = QLineEdit(), QLineEdit()
        self.sweep_note = QLabel()
        self.sweep_button = _popup_form(
            "Sweep", "Choose the frequencies the Bode plot spans (blank: a decade beyond the corners)",
            (("From (Hz)", self.sweep_from), ("To (Hz)", self.sweep_to)), self.sweep_note, self._sweep_edited)
        tools.addWidget(self.sweep_button)
        self.sweep: tuple | None = None
        """The sweep the designer chose (Hz, lowest and highest), or None for the automatic one."""
        self.pulse_width_edit = QLineEdit()
        self.pulse_note = QLabel()
        self.pulse_button = _popup_form(
            "Pulse", "Choose the width of the input pulse (blank: wide enough for a 10 % estimated sag)",
            (("Width (s)", self.pulse_width_edit),), self.pulse_note, self._pulse_edited)
        self.pulse_button.hide()
        tools.addWidget(self.pulse_button)
        fit = QToolButton(text="Fit")
        fit.setToolTip("Show the whole sweep again after zooming or panning")
        fit.clicked.connect(lambda: self.plots.currentWidget().fit())
        tools.addWidget(fit)
        export = QToolButton(text="Export")
        export.setToolTip("Save the plot on show as a picture, or its curves as CSV")
        export.setPopupMode(QToolButton.ToolButtonPopupMode.InstantPopup)
        menu = QMenu(export)
        menu.addAction("Plot as PNG…", lambda: self._export("PNG image (*.png)", ".png"))
        menu.addAction("Plot as SVG…", lambda: self._export("SVG drawing (*.svg)", ".svg"))
        menu.addAction("Curves as CSV…", lambda: self._export("CSV table (*.csv)", ".csv"))
        menu.addSeparator()
        menu.addAction("Time-constant bars as SVG or PNG…", lambda: self._export_figure("bars"))
        menu.addAction("Schematic as SVG or PNG…", lambda: self._export_figure("sheet"))
        export.setMenu(menu)
        tools.addWidget(export)
        right_layout.addLayout(tools)
        # The time-domain view shares the Bode plot's place: one tab each.
        self.plots = QTabWidget()
        self.plots.setDocumentMode(True)
        self.plots.addTab(self.bode, "Frequency")
        self.plots.addTab(self.time, "Step and pulse")
        self.plots.currentChanged.connect(self._plot_switched)
        right_layout.addWidget(self.plots, 1)
        # The readout floats in the tab row, outside every layout and as wide as its widest
        # reading from the start: whatever it says, nothing beside it moves or resizes.
        self.hover_readout = QLabel(right)
        self.hover_readout.setAlignment(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        self.hover_readout.setFixedWidth(self.hover_readout.fontMetrics().horizontalAdvance(WIDEST_READOUT) + 8)
        self._readout_place = _TabRowCorner(self.plots, self.hover_readout)

        self.split = QSplitter(Qt.Orientation.Horizontal)
        self.split.addWidget(bars_scroll)
        self.split.addWidget(right)
        self.split.setStretchFactor(0, 2)
        self.split.setStretchFactor(1, 3)
        self.split.setSizes([380, 560])
        layout = QVBoxLayout(self)
        layout.setContentsMargins(0, 0, 0, 0)
        layout.setSpacing(4)
        layout.addWidget(self.banner)
        layout.addWidget(self.verdict)
        layout.addWidget(self.split, 1)

        self.runner.finished.connect(self._show)
        self.runner.sensed.connect(self.bars.show_sensitivities)
        self.doc.edited.connect(self.refresh)
        self.doc.changed.connect(self._on_change)
        self.scene.selectionChanged.connect(self._follow_selection)
        self.bars.element_clicked.connect(self.select_element)
        self.bars.pin_requested.connect(self.pin_band)
        self.bode.hovered.connect(self.hover_readout.setText)
        self.time.hovered.connect(self.hover_readout.setText)
        self.banner.show_requested.connect(self.show_problem)
        window.scrub.started.connect(self._scrub_started)
        window.scrub.ended.connect(self._ghost_timer.start)
        self._context = _CanvasMenus(self)
        window.view.viewport().installEventFilter(self._context)
        self.runner.timed = self.plots.currentWidget() is self.time
        self.refresh()

    # -- analysis -------------------------------------------------------------------------
    def compare_with_before(self, curve) -> None:
        """Keep ``curve`` (the exact response before a change) on the Bode plot until dismissed
        (None dismisses it). A value scrub's ghost, while it is shown, comes first."""
        self._compared = curve
        if self.ghost is None:
            self.bode.show_before(curve)
            self.dismiss_before.setVisible(curve is not None)
            self.legend.setText(self.bode.legend_html())

    def _scrub_started(self, *_) -> None:
        """Keep the response as it is now as a ghost while the scrub lasts."""
        self._ghost_timer.stop()
        data = self.bode.data()
        if self.good is None or not self.outcome.ok or data is None:
            self.drop_ghost()
            return
        self.ghost = data
        self.bode.hold_range(True)
        self.bode.show_before(data.exact, what="before the scrub")
        self.dismiss_before.hide()
        self.legend.setText(self.bode.legend_html())

    def drop_ghost(self) -> None:
        """Take the scrub's ghost away (the applied suggestion's "before" curve comes back)."""
        self._ghost_timer.stop()
        if self.ghost is not None:
            self.ghost = None
            self.bode.hold_range(False)
            self.compare_with_before(self._compared)

    def refresh(self) -> None:
        """Analyse the design as it is now (the runner decides on which thread)."""
        self.runner.request(self.doc, self.window.reading.drawn())

    def _show(self, outcome: Outcome) -> None:
        self.outcome = outcome
        # Empty axes say nothing; the bars and the plot appear with the first result.
        self.split.setVisible(outcome.ok or outcome.problem is not None and self.good is not None)
        self._list_problems(outcome)
        if outcome.ok:
            self.good = outcome
            self.bars.show_bars(outcome.bars)
            self._show_bode(settle=not self._fit_whole)
            self._fit_whole = False
            if outcome.timed:
                self.time.show_response(outcome.step, outcome.pulse, problem=outcome.time_problem)
                self._show_time_targets()
            self.verdict.show_verdict(outcome.verdict)
            self._mark_canvas(outcome)
            self.bias_notes.show(outcome.bias)
        elif outcome.problem is None:
            # An empty sheet: nothing to say and nothing to keep.
            self.good = None
            self.bars.show_bars(None)
            self.bode.show_response(None)
            self.time.show_response(None, None)
            self.verdict.show_verdict(None)
        else:
            for view in (self.bars, self.bode, self.time, self.verdict):
                view.set_stale(True)
            # A bias that no longer follows from the sheet must not stay written on it.
            self.bias_notes.show(None)
        self._follow_selection()

    def _on_change(self, change) -> None:
        if change.what is ChangeKind.RESET:
            # Another design: its first response is seen whole, its verdict at its own height.
            self._fit_whole = True
            self.verdict.release_height()

    def _show_bode(self, settle: bool = False) -> None:
        """Draw the newest good result over the chosen sweep, with the design's targets
        (``settle``: on the axes already shown, where it fits them)."""
        outcome = self.good
        spans = self._span(outcome.analysis)
        self.bode.show_response(outcome.bode if spans is None else bode_data(outcome.analysis, spans),
                                settle=settle)
        if self.ghost is not None:
            self.bode.show_before_note(corner_shift(self.ghost, self.bode.data()))
        try:
            targets = parse_targets(self.doc.targets)
        except BadValueError:
            targets = None  # the advisor says what is wrong with the text; nothing is drawn
        self.bode.show_targets(None if targets is None else target_marks(targets, outcome.analysis.gain_unit))

    def _show_time_targets(self) -> None:
        step = self.good.step if self.good is not None else None
        try:
            targets = parse_targets(self.doc.targets)
        except BadValueError:
            targets = None  # as on the Bode plot: the advisor says what is wrong
        self.time.show_targets(() if targets is None or step is None else time_target_lines(targets, step))

    def _span(self, analysis) -> tuple | None:
        if self.sweep is None:
            return None
        auto = sweep_range(analysis)
        return (self.sweep[0] or auto[0], self.sweep[1] or auto[1])

    def _sweep_edited(self) -> None:
        """Take the sweep typed in the Sweep menu (blank ends are automatic)."""
        ends, problem = [], ""
        for edit, what in ((self.sweep_from, "lowest"), (self.sweep_to, "highest")):
            text = edit.text().strip()
            try:
                ends.append(parse_value(text, unit="Hz", field=f"{what} sweep frequency") if text else None)
            except BadValueError as exc:
                ends.append(None)
                problem = exc.message
        lo, hi = ends
        if not problem and (lo is not None and lo <= 0 or hi is not None and hi <= 0):
            problem = "A sweep frequency must be above 0 Hz."
        if not problem and lo is not None and hi is not None and hi <= lo:
            problem = "The highest sweep frequency must be above the lowest."
        self.sweep_note.setText(problem)
        if problem:
            return
        self.set_sweep(None if lo is None and hi is None else (lo, hi))

    def _pulse_edited(self) -> None:
        """Take the pulse width typed in the Pulse menu (blank is automatic)."""
        text = self.pulse_width_edit.text().strip()
        try:
            width = parse_value(text, field="pulse width") if text else None
        except BadValueError as exc:
            self.pulse_note.setText(exc.message)
            return
        self.pulse_note.clear()
        self.set_pulse_width(width)

    def set_pulse_width(self, width: float | None) -> None:
        """Show the response to a pulse ``width`` s wide (None: wide enough for a 10 %
        estimated sag); the design is analysed again."""
        if width is None:
            self.pulse_width_edit.clear()
            self.pulse_note.clear()
        if width != self.runner.pulse_width:
            self.runner.pulse_width = width
            self.refresh()

    def set_sweep(self, span: tuple | None) -> None:
        """Span the Bode plot over ``span`` (Hz, lowest and highest; None at either end, or
        for the whole, is automatic)."""
        self.sweep = span
        if span is None:
            self.sweep_from.clear()
            self.sweep_to.clear()
            self.sweep_note.clear()
        if self.good is not None:
            self.bode.fit()  # a new span is seen whole
            self._show_bode()

    def _mark_canvas(self, outcome: Outcome) -> None:
        """Colour each sheet capacitor or inductor by its band; put its numbers in its tooltip."""
        tips: dict = {}
        for group in outcome.bars.groups:
            for row in group.rows:
                tips.setdefault(row.part, []).append(row.tooltip)
        for name in self.doc.parts:
            result = outcome.analysis.elements.get(name)
            self.scene.set_part_accent(name, result.band if result and result.band != Band.NEUTRAL else None)
            item = self.scene.part_item(name)
            # A problem's own tooltip wins: it says what to fix.
            if name in tips and item.problem is None:
                item.setToolTip("\n\n".join(tips[name]))

    # -- selection and the test picture --------------------------------------------------
    def elements_of(self, part: str) -> list:
        """The analysed elements a sheet part holds (itself, or a block's internal ones)."""
        if self.good is None:
            return []
        return [name for name in self.good.analysis.elements if part_of(name) == part]

    def select_element(self, name: str) -> str | None:
        """Select element ``name`` on the canvas and in the bars, and draw its test picture.

        Returns
        -------
        str or None
            Why it cannot be shown (no analysis, no such element), or None when it is.
        """
        if self.good is None or not self.outcome.ok:
            return "the design cannot be analysed as drawn, so there is no test picture to show"
        if name not in self.good.analysis.elements:
            known = ", ".join(self.good.analysis.elements) or "none"
            return f"{name} is not a capacitor or inductor of this design (there are: {known})"
        # The scene clears, then sets, its selection; only the end state is followed.
        self._selecting = True
        try:
            self.scene.select([part_of(name)])
        finally:
            self._selecting = False
        self._chosen = name
        self._follow_selection()
        return None

    def _follow_selection(self) -> None:
        # The scene announces its shrinking selection while it is being torn down, when
        # neither it nor its items can be asked anything any more.
        if self._selecting or not (shiboken6.isValid(self.scene) and shiboken6.isValid(self.bars)):
            return
        names = [item.name for item in self.scene.selectedItems() if isinstance(item, PartItem)]
        focus = None
        if len(names) == 1 and self.outcome is not None and self.outcome.ok:
            inside = self.elements_of(names[0])
            if self._chosen in inside:
                focus = self._chosen
            elif names[0] in inside:
                focus = names[0]
            elif inside:
                # A block clicked on the canvas shows its element with the largest share.
                rows = [self.good.bars.row(n) for n in inside]
                focus = max((r for r in rows if r is not None), key=lambda r: r.share).name
        if focus is None:
            self._chosen = None
        self.focus = focus
        self.bars.set_selected(focus)
        outcome = self.outcome
        geometry = picture_geometry(outcome.doc, outcome.netlist, outcome.analysis, focus) \
            if focus is not None else None
        if geometry is None:
            # Without a picture its label has no place to find: the sheet's outlines (one
            # per part and wire) are not gathered.
            self.overlay.show_picture(None)
            return
        view = self.window.view
        seen = view.mapToScene(view.viewport().rect()).boundingRect()
        self.overlay.show_picture(geometry, self.scene.content_rect(), self.scene.occupied(), seen)
        # No free spot in view: scroll (never zoom) until the label and its ring are.
        wanted = self.overlay.label_rect().united(self.overlay.glyph_rect())
        if not seen.contains(wanted):
            view.ensureVisible(wanted if wanted.width() < seen.width() and wanted.height() < seen.height()
                               else self.overlay.label_rect(), 12, 12)

    def _list_problems(self, outcome: Outcome) -> None:
        """Put every problem of the sheet in the banner, the one that stops the analysis first."""
        listed = [] if outcome.doc.is_empty() else self.scene.problems
        found = [p for p in listed if p.stops] + [p for p in listed if not p.stops]
        if outcome.problem is not None and outcome.problem not in [p.message for p in found]:
            found.insert(0, Problem(outcome.problem, outcome.problem_parts, outcome.problem_points))
        self.banner.show_problems(found, greyed=outcome.problem is not None and self.good is not None)

    def show_problem(self, problem: Problem) -> None:
        """Select a problem's parts and bring it into view on the canvas."""
        names = [p for p in problem.parts if p in self.doc.parts]
        self.scene.select(names)
        rect = QRectF()
        for name in names:
            rect = rect.united(self.scene.part_item(name).sceneBoundingRect())
        for x, y in problem.points:
            rect = rect.united(QRectF(x - 10, y - 10, 20, 20))
        if not rect.isEmpty():
            self.window.view.ensureVisible(rect, 40, 40)

    # -- pins -----------------------------------------------------------------------------
    def pin_band(self, name: str, band: str) -> None:
        """Pin element ``name`` to ``"low"`` or ``"high"``, or unpin it with ``""``; undoable."""
        patch = edits.pin_band(self.doc, name, band or None)
        text = f"Pin {name} to the {band} band" if band else f"Let the gain test choose {name}'s band"
        self.editor.patch(patch, text)

    def pin_menu_for_part(self, part: str) -> QMenu | None:
        """The band menu for a sheet part: its own, or one submenu per element inside a block."""
        inside = self.elements_of(part)
        if not inside:
            return None
        if inside == [part]:
            return self.bars.pin_menu(part, self)
        menu = QMenu(self)
        for name in inside:
            sub = self.bars.pin_menu(name, menu)
            sub.setTitle(name)
            menu.addMenu(sub)
        return menu

    # -- export ---------------------------------------------------------------------------
    def _export(self, kind: str, suffix: str) -> None:
        if self.good is None:
            return
        name = "step" if self.plots.currentWidget() is self.time else "response"
        path, _ = QFileDialog.getSaveFileName(self, "Export", f"{name}{suffix}", kind)
        if path:
            self.export(path)

    def _export_figure(self, what: str) -> None:
        path, _ = QFileDialog.getSaveFileName(self, "Export", f"{what}.svg",
                                              "SVG drawing (*.svg);;PNG image (*.png)")
        if path:
            self.export_figure(what, path)

    def export_figure(self, what: str, path: str) -> None:
        """Save the time-constant bars shown (``"bars"``) or the design's sheet (``"sheet"``,
        drawn on paper: no selection, no test picture) as SVG or PNG, by the file's suffix."""
        if what == "sheet":
            write_picture(sheet_svg(self.doc), path)
        elif self.bars.data() is not None:
            write_picture(bars_svg(self.bars.data()), path)

    def export(self, path: str) -> None:
        """Save the plot on show (``.png``, ``.svg``) or its curves (``.csv``) to ``path``: the
        Bode plot's swept curves, or the step response's waveform."""
        on_show = self.plots.currentWidget()
        if not path.lower().endswith(".csv"):
            on_show.export_image(path)
        elif on_show is self.time:
            if self.good.step is not None:  # an unstable stage has no waveform to write
                write_step_csv(self.good.analysis.step_response(), path)
        else:
            write_response_csv(self.bode.data(), path)

    # -- looks ----------------------------------------------------------------------------
    def changeEvent(self, event):
        if event.type() in (QEvent.Type.PaletteChange, QEvent.Type.ApplicationPaletteChange):
            self.restyle()
        super().changeEvent(event)

    def _plot_switched(self, *_) -> None:
        # The step and pulse are worked out while their view is on show, and at once when it
        # comes on show with a result that has none.
        self.runner.timed = self.plots.currentWidget() is self.time
        if self.runner.timed and self.good is not None and not self.good.timed:
            self.time.set_stale(True)
            self.refresh()
        self.legend.setText(self.plots.currentWidget().legend_html())
        self.sweep_button.setVisible(self.plots.currentWidget() is self.bode)
        self.pulse_button.setVisible(self.plots.currentWidget() is self.time)
        self.hover_readout.clear()

    def restyle(self) -> None:
        """Take the colours of the current palette (light or dark)."""
        colours = view_colours()
        for view in (self.bars, self.bode, self.time, self.verdict, self.banner, self.overlay):
            view.set_colours(colours)
        self._plot_switched()


def _popup_form(text: str, tip: str, rows, note: QLabel, edited) -> QToolButton:
    """A tool button whose menu is a small form of line edits, each blank meaning
    "automatic"; ``edited`` runs when one is finished, ``note`` says what is wrong."""
    button = QToolButton(text=text)
    button.setToolTip(tip)
    button.setPopupMode(QToolButton.ToolButtonPopupMode.InstantPopup)
    menu = QMenu(button)
    box = QWidget()
    form = QFormLayout(box)
    for label, edit in rows:
        edit.setPlaceholderText("automatic")
        edit.editingFinished.connect(edited)
        form.addRow(label, edit)
    note.setWordWrap(True)
    form.addRow(note)
    holder = QWidgetAction(menu)
    holder.setDefaultWidget(box)
    menu.addAction(holder)
    button.setMenu(menu)
    return button


class _TabRowCorner(QObject):
    """Keeps a label at the right end of a tab widget's tab row as the tab widget resizes."""

    def __init__(self, tabs: QTabWidget, label: QLabel):
        super().__init__(tabs)
        self.tabs, self.label = tabs, label
        tabs.installEventFilter(self)
        self.place()

    def place(self) -> None:
        row = self.tabs.tabBar().sizeHint().height()
        g = self.tabs.geometry()
        self.label.setFixedHeight(row)
        self.label.move(g.right() - self.label.width() - 4, g.top())
        self.label.raise_()

    def eventFilter(self, watched, event):
        if event.type() in (QEvent.Type.Resize, QEvent.Type.Move):
            self.place()
        return False


class _CanvasMenus(QObject):
    """Offers the band menu when a capacitor, inductor or block is right-clicked on the canvas."""

    def __init__(self, panel: AnalysisPanel):
        super().__init__(panel)
        self.panel = panel

    def eventFilter(self, watched, event):
        if event.type() != QEvent.Type.ContextMenu:
            return False
        view = self.panel.window.view
        pos = view.mapToScene(event.pos())
        part = next((item.name for item in self.panel.scene.items(pos) if isinstance(item, PartItem)), None)
        menu = self.panel.pin_menu_for_part(part) if part else None
        if menu is None:
            return False
        menu.exec(event.globalPos())
        return True


ANALYSIS_SHARE = 0.48
"""Of the height the canvas and the analysis share, what the analysis gets at first."""


def install_analysis_views(window) -> AnalysisPanel:
    """Make the analysis panel the first page of ``window.analysis_tabs``, and give the
    analysis nearly half the height: a Bode plot and its bars need room to be read."""
    panel = AnalysisPanel(window)
    window.analysis_tabs.addTab(panel, "Bands and response")
    total = sum(window.splitter.sizes()) or window.height()
    window.splitter.setSizes([round(total * (1 - ANALYSIS_SHARE)), round(total * ANALYSIS_SHARE)])
    return panel
