"""The main window: sheet in the middle, Parts and Properties beside it, analysis and advisor below."""

from __future__ import annotations

import json
from pathlib import Path

from PySide6.QtCore import QEvent, QMimeData, QPointF, Qt
from PySide6.QtGui import QAction, QGuiApplication, QKeySequence, QUndoStack
from PySide6.QtWidgets import QDockWidget, QLabel, QMainWindow, QScrollArea, QSplitter, QTabWidget, QWidget

from bandsketch.engine.design.designfile import (FORMAT_VERSION, document_from_dict, document_to_dict, load_design,
                                                 save_design)
from bandsketch.engine.design.document import Document
from bandsketch.engine.core.errors import DesignFileError
from bandsketch.engine.design.parts import GRID
from bandsketch.engine.design.samples import list_samples, load_sample

from . import dialogs, edits, preferences
from .advisor.panel import AdvisorPanel
from .analysis.panel import install_analysis_views
from .canvas.controller import CanvasController, Mode
from .canvas.inplace import InplaceEditor
from .canvas.scene import SchematicScene
from .canvas.view import SchematicView
from .guard import REPORT_HINT, unexpected
from .commands import Editor
from .engine_link import SheetReading, main_field
from .help import HelpPanel
from .palette import GROUPS, PartsPalette
from .properties import PropertiesPanel
from .recovery import SET_ASIDE_NAME, RecoveryKeeper
from .scrub import ValueScrub
from .theme import system_theme

APP_NAME = "Bandsketch"
FRAGMENT_MIME = "application/x-bandsketch-fragment"
PASTE_STEP = 2 * GRID
PROPERTIES_WIDTH = 330
"""Pixels the Properties panel starts with: a design's title and notes read in full."""
"""Paper left round the drawing in the report's picture of the sheet (scene units)."""


class MainWindow(QMainWindow):
    """One design in one window.

    Parameters
    ----------
    recovery_folder : Path or None
        Where the recovery file is kept (the user's data folder if None).
    keep_recovery : bool
        Whether to write a recovery file at all (off for screenshots).
    """

    def __init__(self, recovery_folder=None, keep_recovery: bool = True):
        super().__init__()
        self.doc = Document()
        self.stack = QUndoStack(self)
        self.editor = Editor(self.doc, self.stack)
        self.path: str | None = None
        self._view_key: str | None = None  # whose zoom and scroll the sheet remembers
        self._restored_unsaved = False
        self._paste_count = 0
        self.theme = system_theme()
        style = preferences.resistor_style()

        # Created first, so it forgets a stale reading before any view asks for one.
        self.reading = SheetReading(self.doc)
        self.scene = SchematicScene(self.doc, self.theme, style, self.reading)
        self.scene.setParent(self)
        self.scrub = ValueScrub(self.editor, self)
        self.controller = CanvasController(self.scene, self.editor, self.scrub)
        self.view = SchematicView(self.scene, self.controller)
        # Below the sheet: the bands and response, and the design advisor, one page each.
        self.analysis_tabs = QTabWidget()
        self.analysis_tabs.setObjectName("analysis_tabs")
        self.analysis_tabs.setDocumentMode(True)
        self.splitter = QSplitter(Qt.Orientation.Vertical)
        self.splitter.addWidget(self.view)
        self.splitter.addWidget(self.analysis_tabs)
        self.splitter.setStretchFactor(0, 3)
        self.splitter.setStretchFactor(1, 1)
        self.splitter.setSizes([640, 200])
        self.setCentralWidget(self.splitter)

        self.palette_panel = PartsPalette(self.theme, style)
        self.palette_panel.chosen.connect(self.controller.start_place)
        self.properties = PropertiesPanel(self.doc, self.editor, self.theme, self.scrub)
        palette_scroll = QScrollArea()
        palette_scroll.setWidget(self.palette_panel)
        palette_scroll.setWidgetResizable(True)
        palette_scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
        palette_scroll.setFrameShape(QScrollArea.Shape.NoFrame)
        palette_scroll.setMinimumWidth(self.palette_panel.sizeHint().width() + 16)
        self.parts_dock = self._dock("Parts", palette_scroll, Qt.DockWidgetArea.LeftDockWidgetArea)
        # A transistor biased from the sheet has two dozen fields: the panel scrolls rather
        # than make the window taller than the screen.
        properties_scroll = QScrollArea()
        properties_scroll.setWidget(self.properties)
        properties_scroll.setWidgetResizable(True)
        properties_scroll.setFrameShape(QScrollArea.Shape.NoFrame)
        self.properties_dock = self._dock("Properties", properties_scroll, Qt.DockWidgetArea.RightDockWidgetArea)

        self._make_actions()
        self.help_panel = HelpPanel(self.help_sections())
        self.help_dock = self._dock("Help", self.help_panel, Qt.DockWidgetArea.RightDockWidgetArea)
        self.tabifyDockWidget(self.properties_dock, self.help_dock)
        self.properties_dock.raise_()
        self.help_dock.hide()
        self.resizeDocks([self.properties_dock], [PROPERTIES_WIDTH], Qt.Orientation.Horizontal)
        self._make_menus()
        self._make_status()

        self._watching_selection = False
        self._watch_selection(True)
        self.controller.mode_changed.connect(self._mode_changed)
        self.controller.message.connect(lambda text: self.statusBar().showMessage(text, 6000))
        self.controller.value_edit_requested.connect(self.edit_value_in_place)
        self.controller.name_edit_requested.connect(self.edit_name_in_place)
        self.stack.cleanChanged.connect(self._update_title)
        self.stack.indexChanged.connect(self._update_title)
        self.doc.edited.connect(self._update_problem_count)
        self.keeper = RecoveryKeeper(self.doc, self.is_dirty, lambda: self.path, recovery_folder) \
            if keep_recovery else None
        self._update_title()
        self._update_problem_count()
        self._mode_changed(self.controller.mode)
        self.inplace: InplaceEditor | None = None
        self.analysis_panel = install_analysis_views(self)
        self.analysis_panel.runner.finished.connect(self.properties.show_outcome)
        self.advisor = AdvisorPanel(self.doc, self.editor, self.analysis_panel.runner)
        self.advisor.part_hovered.connect(self.scene.point_out)
        self.advisor.applied.connect(self.analysis_panel.compare_with_before)
        self.advisor.source = self.report_source
        self.analysis_tabs.addTab(self.advisor, "Design advisor")

    # -- building -------------------------------------------------------------------------
    def _dock(self, title: str, widget: QWidget, area) -> QDockWidget:
        dock = QDockWidget(title, self)
        dock.setObjectName(f"{title.lower()}_dock")
        dock.setWidget(widget)
        dock.setFeatures(QDockWidget.DockWidgetFeature.DockWidgetMovable
                         | QDockWidget.DockWidgetFeature.DockWidgetClosable)
        self.addDockWidget(area, dock)
        return dock

    def _action(self, text: str, slot, keys=(), tip: str = "") -> QAction:
        action = QAction(text, self)
        shortcuts = []
        for key in keys:
            shortcuts += QKeySequence.keyBindings(key) if isinstance(key, QKeySequence.StandardKey) \
                else [QKeySequence(key)]
        action.setShortcuts(shortcuts)
        action.setStatusTip(tip or text.replace("&", ""))
        action.triggered.connect(lambda checked=False: slot())
        self.addAction(action)
        return action

    def _make_actions(self) -> None:
        K = QKeySequence.StandardKey
        a = self._action
        self.act_new = a("&New", self.new_design, [K.New], "Start an empty design")
        self.act_open = a("&Open…", self.open_design, [K.Open], "Open a design file")
        self.act_save = a("&Save", self.save, [K.Save], "Save the design")
        self.act_save_as = a("Save &as…", self.save_as, [K.SaveAs], "Save the design under a new name")
        self.act_quit = a("&Quit", self.close, [K.Quit], "Close Bandsketch")
        self.act_undo = a("&Undo", self.editor.undo, [K.Undo])
        self.act_redo = a("&Redo", self.editor.redo, [K.Redo])
        self.act_cut = a("Cu&t", self.cut, [K.Cut], "Copy the selection and remove it")
        self.act_copy = a("&Copy", self.copy, [K.Copy], "Copy the selected parts and wires")
        self.act_paste = a("&Paste", self.paste, [K.Paste], "Paste copied parts and wires")
        self.act_duplicate = a("D&uplicate", self.duplicate, ["Ctrl+D"], "Copy and paste the selection at once")
        self.act_delete = a("&Delete", self.delete_selection, [K.Delete, "Backspace"], "Remove the selection")
        self.act_select_all = a("Select &all", self.select_all, [K.SelectAll])
        self.act_rotate = a("&Rotate", lambda: self.turn(True), ["T", "Ctrl+R"],
                            "Turn the part being placed, or the selection, a quarter clockwise")
        self.act_mirror = a("&Mirror", lambda: self.turn(False), ["Ctrl+M"], "Flip the selection left to right")
        self.act_rename = a("Re&name…", self.rename_selected, ["F2"], "Rename the selected part")
        self.step_actions = [
            a(text, lambda steps=steps, decade=decade: self.step_value(steps, decade), [keys],
              f"{text} of the selected part (or the value field being edited); one undo step however many")
            for text, keys, steps, decade in (("Step value up", "Alt+Up", 1, False),
                                              ("Step value down", "Alt+Down", -1, False),
                                              ("Step value a decade up", "Alt+Shift+Up", 1, True),
                                              ("Step value a decade down", "Alt+Shift+Down", -1, True))]
        self.act_prefs = a("Pre&ferences…", self.show_preferences, [K.Preferences])
        self.act_zoom_in = a("Zoom &in", lambda: self.view.zoom_by(1.25), [K.ZoomIn])
        self.act_zoom_out = a("Zoom &out", lambda: self.view.zoom_by(0.8), [K.ZoomOut])
        self.act_zoom_fit = a("Zoom to &fit", self.view.zoom_to_fit, ["Ctrl+0"], "Show the whole drawing")
        self.act_zoom_selection = a("Zoom to &selection", self.zoom_to_selection, ["Ctrl+9"],
                                    "Show the selected parts and wires close up")
        self.act_select_mode = a("&Select", lambda: self.controller.set_mode(Mode.SELECT), [],
                                 "Click to select, drag to move (Esc)")
        self.act_wire_mode = a("&Wire", self.controller.start_wiring, ["W"], "Draw wires between pins")
        self.act_help = a("&Keys and mouse", self.toggle_help, [K.HelpContents], "Show the keys and gestures")
        self.act_bias = a("Show &bias on the sheet", lambda: self.analysis_panel.bias_notes.set_visible(
            self.act_bias.isChecked()), ["B"], "Write the DC node voltages and each transistor's bias on the sheet")
        self.act_bias.setCheckable(True)
        self.act_bias.setChecked(True)
        self.act_about = a("&About Bandsketch", lambda: dialogs.show_about(self, self.about_text()), [],
                           "The version of Bandsketch and of what it runs on")
        self.act_undo.setEnabled(False)
        self.act_redo.setEnabled(False)
        self.stack.canUndoChanged.connect(self.act_undo.setEnabled)
        self.stack.canRedoChanged.connect(self.act_redo.setEnabled)
        self.place_actions = []
        for _, entries in GROUPS:
            for entry in entries:
                act = a(entry.title, lambda t=entry.template: self.controller.start_place(t),
                        [entry.key] if entry.key else [], f"Place a {entry.title.lower()}")
                self.place_actions.append(act)

    def _make_menus(self) -> None:
        bar = self.menuBar()
        file_menu = bar.addMenu("&File")
        file_menu.addActions([self.act_new, self.act_open])
        self.recent_menu = file_menu.addMenu("Open &recent")
        self.recent_menu.aboutToShow.connect(self._fill_recent)
        self.sample_menu = file_menu.addMenu("Open sa&mple")
        for sample in list_samples():
            act = self.sample_menu.addAction(sample.title, lambda name=sample.name: self.open_sample(name))
            act.setStatusTip(sample.summary)
            act.setToolTip(sample.summary)
        self.sample_menu.setToolTipsVisible(True)
        file_menu.addActions([self.act_save, self.act_save_as])
        file_menu.addSeparator()
        file_menu.addAction(self.act_quit)
        edit_menu = bar.addMenu("&Edit")
        edit_menu.addActions([self.act_undo, self.act_redo])
        edit_menu.addSeparator()
        edit_menu.addActions([self.act_cut, self.act_copy, self.act_paste, self.act_duplicate, self.act_delete,
                              self.act_select_all])
        edit_menu.addSeparator()
        edit_menu.addActions([self.act_rotate, self.act_mirror, self.act_rename])
        step_menu = edit_menu.addMenu("S&tep value")
        step_menu.addActions(self.step_actions)
        edit_menu.addSeparator()
        edit_menu.addAction(self.act_prefs)
        place_menu = bar.addMenu("&Place")
        place_menu.addActions([self.act_select_mode, self.act_wire_mode])
        place_menu.addSeparator()
        place_menu.addActions(self.place_actions)
        view_menu = bar.addMenu("&View")
        view_menu.addActions([self.act_zoom_in, self.act_zoom_out, self.act_zoom_fit, self.act_zoom_selection])
        view_menu.addAction(self.act_bias)
        view_menu.addSeparator()
        for dock in (self.parts_dock, self.properties_dock, self.help_dock):
            view_menu.addAction(dock.toggleViewAction())
        help_menu = bar.addMenu("&Help")
        help_menu.addAction(self.act_help)
        help_menu.addAction(self.act_about)

        tools = self.addToolBar("Main")
        tools.setObjectName("main_toolbar")
        tools.setMovable(False)
        tools.setToolButtonStyle(Qt.ToolButtonStyle.ToolButtonTextOnly)
        tools.addActions([self.act_new, self.act_open, self.act_save])
        tools.addSeparator()
        tools.addActions([self.act_undo, self.act_redo])
        tools.addSeparator()
        self.act_select_mode.setCheckable(True)
        self.act_wire_mode.setCheckable(True)
        tools.addActions([self.act_select_mode, self.act_wire_mode])
        tools.addSeparator()
        tools.addActions([self.act_rotate, self.act_mirror, self.act_delete])
        tools.addSeparator()
        tools.addActions([self.act_zoom_fit, self.act_zoom_selection])

    def _make_status(self) -> None:
        self.mode_label = QLabel()
        self.problem_label = QLabel()
        self.statusBar().addPermanentWidget(self.problem_label)
        self.statusBar().addPermanentWidget(self.mode_label)

    def help_sections(self) -> list:
        """Actions grouped as the help panel lists them."""
        return [
            ("Place (single keys on the sheet)", [self.act_wire_mode, *self.place_actions]),
            ("Edit", [self.act_undo, self.act_redo, self.act_cut, self.act_copy, self.act_paste,
                      self.act_duplicate, self.act_delete, self.act_select_all, self.act_rotate,
                      self.act_mirror, self.act_rename, *self.step_actions]),
            ("File", [self.act_new, self.act_open, self.act_save, self.act_save_as, self.act_quit]),
            ("View", [self.act_zoom_in, self.act_zoom_out, self.act_zoom_fit, self.act_zoom_selection,
                      self.act_bias, self.act_help]),
        ]

    # -- state shown ---------------------------------------------------------------------------
    def is_dirty(self) -> bool:
        """Whether the design has changes not in its file."""
        return self._restored_unsaved or not self.stack.isClean()

    def display_name(self) -> str:
        return Path(self.path).name if self.path else "Untitled design"

    def _update_title(self, *_) -> None:
        self.setWindowTitle(f"{self.display_name()}[*] — {APP_NAME}")
        self.setWindowModified(self.is_dirty())

    def _update_problem_count(self) -> None:
        n = len(self.scene.problems)
        if not self.doc.parts:
            text = "Empty sheet: place parts from the Parts panel"
        elif n == 0:
            text = "Connections complete"
        else:
            text = f"{n} problem{'s' if n > 1 else ''} marked on the sheet"
        self.problem_label.setText(text)

    def _mode_changed(self, mode: Mode) -> None:
        self.mode_label.setText(f"Mode: {mode.value}")
        self.act_select_mode.setChecked(mode is Mode.SELECT)
        self.act_wire_mode.setChecked(mode is Mode.WIRE)

    def _selection_changed(self) -> None:
        self.properties.show_selection(self.scene.selected_names(), self.scene.selected_wire_ids())

    def changeEvent(self, event):
        if event.type() in (QEvent.Type.PaletteChange, QEvent.Type.ApplicationPaletteChange):
            self.apply_theme()
        super().changeEvent(event)

    def apply_theme(self) -> None:
        """Follow the system palette (light or dark) and the resistor preference."""
        self.theme = system_theme()
        style = preferences.resistor_style()
        self.scene.set_theme(self.theme, style)
        self.analysis_panel.bias_notes.set_theme(self.theme)
        self.controller.restyle()
        self.palette_panel.restyle(self.theme, style)
        self.properties.theme = self.theme

    def report_source(self):
        """The design file's name and SHA-256 for the report: the file's bytes when the design is
        saved and unchanged, else those it would be saved with."""
        from bandsketch.engine.design.designfile import design_text
        from bandsketch.engine.present.report import design_source

        if self.path and not self.is_dirty():
            try:
                return design_source(self.display_name(), Path(self.path).read_bytes())
            except OSError:
                pass
        return design_source(f"{self.display_name()} (unsaved changes)", design_text(self.doc).encode("utf-8"))

    # -- editing actions -----------------------------------------------------------------------
    def _selection(self):
        return self.scene.selected_names(), self.scene.selected_wire_ids()

    def delete_selection(self) -> None:
        names, wires = self._selection()
        if names or wires:
            self.editor.patch(edits.delete(self.doc, names, wires), "Delete")

    def select_all(self) -> None:
        self.scene.select(list(self.doc.parts), list(self.doc.wires))

    def turn(self, rotate: bool) -> None:
        """Rotate or mirror what is being placed, else the selected parts."""
        if self.controller.turn_template(rotate):
            return
        names = self.scene.selected_names()
        if names:
            patch = edits.rotate(self.doc, names) if rotate else edits.mirror(self.doc, names)
            self.editor.patch(patch, "Rotate" if rotate else "Mirror")

    def copy(self) -> None:
        names, wires = self._selection()
        if not (names or wires):
            return
        mime = QMimeData()
        data = json.dumps(document_to_dict(edits.fragment_of(self.doc, names, wires)))
        mime.setData(FRAGMENT_MIME, data.encode("utf-8"))
        QGuiApplication.clipboard().setMimeData(mime)
        self._paste_count = 0

    def cut(self) -> None:
        self.copy()
        self.delete_selection()

    def paste(self) -> None:
        mime = QGuiApplication.clipboard().mimeData()
        if mime is None or not mime.hasFormat(FRAGMENT_MIME):
            self.statusBar().showMessage("Nothing to paste: copy parts or wires first", 4000)
            return
        try:
            fragment = document_from_dict(json.loads(bytes(mime.data(FRAGMENT_MIME)).decode("utf-8")), "clipboard")
        except (ValueError, DesignFileError) as exc:
            self.statusBar().showMessage(f"Cannot paste: {exc}", 6000)
            return
        self._paste_count += 1
        self._paste_fragment(fragment, self._paste_count * PASTE_STEP)

    def duplicate(self) -> None:
        names, wires = self._selection()
        if names or wires:
            self._paste_fragment(edits.fragment_of(self.doc, names, wires), PASTE_STEP)

    def _paste_fragment(self, fragment: Document, offset: int) -> None:
        patch = edits.paste(self.doc, fragment, offset, offset)
        self.editor.patch(patch, "Paste")
        self.scene.select(list(patch.parts), list(patch.wires))

    def rename_selected(self) -> None:
        names = self.scene.selected_names()
        if len(names) == 1:
            self.properties_dock.show()
            self.properties_dock.raise_()
            self.properties.focus_field("name")

    def edit_value_in_place(self, name: str) -> None:
        """Open the in-place editor on a part's main value (or its Properties if it has none)."""
        part = self.doc.parts[name]
        self.scene.select([name])
        if main_field(part) is None:
            return
        self.inplace = InplaceEditor(self.view, self.editor, name)

    def edit_name_in_place(self, name: str) -> None:
        """Open the in-place editor on a part's name."""
        self.scene.select([name])
        self.inplace = InplaceEditor(self.view, self.editor, name, rename=True)

    def step_value(self, steps: int, decade: bool = False) -> None:
        """Step a value through its E series (a decade with ``decade``): the Properties field
        being edited, else the one selected part's main value; steps in a row are one undo step."""
        if self.properties.step_focused(steps, decade) or self.controller.step_selected(steps, decade):
            return
        self.statusBar().showMessage("Select one part to step its value", 4000)

    def zoom_to_selection(self) -> None:
        if not self.view.zoom_to_selection():
            self.statusBar().showMessage("Nothing is selected: select parts or wires to zoom to them", 4000)

    def toggle_help(self) -> None:
        if self.help_dock.isVisible() and not self.help_dock.visibleRegion().isEmpty():
            self.help_dock.hide()
        else:
            self.help_dock.show()
            self.help_dock.raise_()

    def show_preferences(self) -> None:
        dialog = preferences.PreferencesDialog(self)
        dialog.style_chosen.connect(lambda _: self.apply_theme())
        dialog.setAttribute(Qt.WidgetAttribute.WA_DeleteOnClose)
        dialog.show()

    # -- files ---------------------------------------------------------------------------------
    def set_document(self, doc: Document, path: str | None, *, unsaved: bool = False,
                     view_key: str | None = None) -> None:
        """Show ``doc`` (opened from ``path``) in place of the current design; fresh undo history.

        The sheet comes back at the zoom and scroll the design (``view_key``, else its file)
        was last left at, or fitted if it never was shown. All or nothing: should a view fail
        to show ``doc``, the design on screen, its undo history and its path are put back as
        they were and the exception goes on to the caller.
        """
        self.remember_view()
        self.controller.set_mode(Mode.SELECT)
        self.scene.clearSelection()
        previous = self.doc.copy()
        try:
            self.doc.replace_all(doc)
        except Exception:
            self.doc.replace_all(previous)
            raise
        self.stack.clear()
        self.scrub.end()
        self.analysis_panel.drop_ghost()
        self.analysis_panel.compare_with_before(None)  # a curve of another design is no "before"
        self.analysis_panel.set_sweep(None)  # a sweep chosen for another design would mislead
        self.stack.setClean()
        self.path = path
        self._restored_unsaved = unsaved
        self._paste_count = 0
        self.doc.finish_edit()
        self._update_title()
        self._view_key = view_key or (str(Path(path).resolve()) if path else None)
        last = preferences.sheet_view(self._view_key) if self._view_key else None
        if last is None:
            self.view.zoom_to_fit()
        else:
            self.view.show_at(last[0], QPointF(last[1], last[2]))

    def remember_view(self) -> None:
        """Keep the sheet's zoom and scroll for the design shown, to come back to them."""
        if self._view_key and self.doc.parts:
            centre = self.view.centre()
            preferences.set_sheet_view(self._view_key, self.view.zoom(), centre.x(), centre.y())

    def keep_or_drop_changes(self) -> bool:
        """Ask about unsaved changes; True when it is fine to replace or close the design."""
        if not self.is_dirty():
            return True
        answer = dialogs.ask_unsaved(self, self.display_name())
        if answer is dialogs.Unsaved.SAVE:
            return self.save()
        return answer is dialogs.Unsaved.DISCARD

    def new_design(self) -> None:
        if self.keep_or_drop_changes():
            self.set_document(Document(), None)
            if self.keeper:
                self.keeper.discard()

    def open_design(self, path: str | None = None) -> bool:
        """Open a design file; a file that cannot be read leaves the current design as it was."""
        if not self.keep_or_drop_changes():
            return False
        if path is None:
            folder = str(Path(self.path).parent) if self.path else str(Path.home())
            path = dialogs.ask_open_path(self, folder)
            if path is None:
                return False
        try:
            doc = load_design(path)
            self.set_document(doc, str(path))
        except DesignFileError as exc:
            dialogs.show_error(self, "Cannot open design",
                               f"{exc}\n\nThe design on screen has not been changed.")
            return False
        except Exception as exc:  # a view failing on a file the loader passed is our fault, not the file's
            dialogs.show_error(self, "Cannot open design",
                               f"{Path(path).name}: Bandsketch could not show it ({unexpected(exc)}).\n\n"
                               f"The design on screen has not been changed. {REPORT_HINT}")
            return False
        if doc.read_version is not None and doc.read_version < FORMAT_VERSION:
            self.statusBar().showMessage(
                f"Read {Path(path).name}, a version {doc.read_version} design file; it reads unchanged, "
                f"and saving writes version {FORMAT_VERSION} (which older Bandsketch cannot open)", 10000)
        preferences.add_recent(str(path))
        if self.keeper:
            self.keeper.discard()
        return True

    def open_sample(self, name: str) -> bool:
        """Open a shipped sample as an untitled copy (saving asks where, so the sample stays as shipped)."""
        if not self.keep_or_drop_changes():
            return False
        try:
            doc = load_sample(name)
        except DesignFileError as exc:
            dialogs.show_error(self, "Cannot open sample", str(exc))
            return False
        self.set_document(doc, None, view_key=f"sample:{name}")
        if self.keeper:
            self.keeper.discard()
        self.statusBar().showMessage(f"Opened the sample {doc.title}; Save as keeps your changes", 8000)
        return True

    def about_text(self) -> str:
        """Rich text for the About box: what Bandsketch is, and the versions it runs with."""
        from PySide6.QtCore import qVersion

        from bandsketch.engine.core.versions import versions

        rows = {**versions(), "Qt": qVersion()}
        table = "".join(f"<tr><td>{k}</td><td>{v}</td></tr>" for k, v in rows.items())
        return ("<p><b>Bandsketch</b>: where an amplifier stage's −3 dB corners fall, which capacitor "
                "sets each, and what to change. Results are estimates: confirm them by full simulation "
                "and measurement before building.</p>"
                f"<table cellspacing=4>{table}</table><p>MIT licence.</p>")

    def save(self) -> bool:
        """Save to the design's file (asking where if it has none); True if saved."""
        if self.path is None:
            return self.save_as()
        return self._write(self.path)

    def save_as(self) -> bool:
        suggestion = self.path or str(Path.home() / f"{self.doc.title or 'design'}.json")
        path = dialogs.ask_save_path(self, suggestion)
        if path is None:
            return False
        if not Path(path).suffix:
            path += ".json"
        return self._write(path)

    def _write(self, path: str) -> bool:
        try:
            save_design(self.doc, path)
        except DesignFileError as exc:
            dialogs.show_error(self, "Cannot save design", str(exc))
            return False
        self.path = path
        self._view_key = str(Path(path).resolve())
        self._restored_unsaved = False
        self.stack.setClean()
        preferences.add_recent(path)
        if self.keeper:
            self.keeper.discard()
        self._update_title()
        self.statusBar().showMessage(f"Saved {Path(path).name}", 4000)
        return True

    def _fill_recent(self) -> None:
        self.recent_menu.clear()
        paths = preferences.recent_files()
        if not paths:
            self.recent_menu.addAction("(none yet)").setEnabled(False)
        for p in paths:
            self.recent_menu.addAction(p, lambda p=p: self.open_design(p))

    def offer_recovery(self) -> bool:
        """If the last session ended unexpectedly, offer its unsaved work; True if restored."""
        if self.keeper is None:
            return False
        found = self.keeper.left_over()
        if isinstance(found, str):
            dialogs.show_error(self, "Unsaved work could not be restored", found)
            return False
        if found is None:
            return False
        name = Path(found.path).name if found.path else "an untitled design"
        if not dialogs.ask_restore(self, found.when(), name):
            self.keeper.set_aside()
            return False
        try:
            self.set_document(found.doc, found.path, unsaved=True)
        except Exception as exc:  # never a crash at start: keep the file for a report instead
            self.keeper.set_aside()
            dialogs.show_error(self, "Unsaved work could not be restored",
                               f"The recovery file could not be shown ({unexpected(exc)}); it is kept as "
                               f"{self.keeper.folder / SET_ASIDE_NAME}. {REPORT_HINT}")
            return False
        self.keeper.write()
        return True

    def closeEvent(self, event):
        if not self.keep_or_drop_changes():
            event.ignore()
            return
        if self.keeper:
            self.keeper.stop()
            self.keeper.discard()
        self.remember_view()
        self.shut_down()
        # The scene deletes its items as it goes; nothing may ask it about selection then.
        self._watch_selection(False)
        event.accept()

    def shut_down(self) -> None:
        """Stop what runs on its own (the recovery timers, the worker threads) so that nothing
        calls into the window while, or after, it is torn down."""
        if self.keeper:
            self.keeper.stop()
        self.advisor.jobs.cancel.set()
        self.advisor.jobs.wait()
        self.analysis_panel.runner.shutdown()

    def showEvent(self, event):
        self._watch_selection(True)
        super().showEvent(event)

    def _watch_selection(self, on: bool) -> None:
        """Follow the scene's selection while the window is open (once, however often shown)."""
        if on != self._watching_selection:
            signal = self.scene.selectionChanged
            (signal.connect if on else signal.disconnect)(self._selection_changed)
            self._watching_selection = on
