"""The verdict strip: mid-band gain, both corners estimated against exact, what limits them,
and the warnings; and the banner that says why a circuit as drawn cannot be analysed."""

from __future__ import annotations

from PySide6.QtCore import Qt, QTimer, Signal
from PySide6.QtWidgets import QFrame, QGridLayout, QHBoxLayout, QLabel, QSizePolicy, QToolButton, QVBoxLayout, QWidget

from bandsketch.engine.present.plotdata import VerdictData

from .style import Restyles, ViewColours, view_colours


HOLD_MS = 1000
"""How long (ms) after the last edit the verdict strip keeps a height its lines no longer need."""


class VerdictStrip(Restyles, QFrame):
    """The analysis in a few lines, drawn from a :class:`bandsketch.engine.present.plotdata.VerdictData`."""

    def __init__(self, parent=None):
        super().__init__(parent)
        self.setFrameShape(QFrame.Shape.StyledPanel)
        self._colours: ViewColours = view_colours()
        self._stale = False
        self._fresh = True
        self._hold = QTimer(self)
        self._hold.setSingleShot(True)
        self._hold.setInterval(HOLD_MS)
        self._hold.timeout.connect(lambda: self.setMinimumHeight(0))
        # The limiting element leads, large: it is what a designer looks for first; the
        # numbers sit in one row beneath it, and the warnings below them.
        layout = QGridLayout(self)
        layout.setContentsMargins(8, 4, 8, 4)
        layout.setHorizontalSpacing(18)
        layout.setVerticalSpacing(2)
        self.gain = QLabel()
        self.high = QLabel()
        self.low = QLabel()
        self.dominant = QLabel()
        self.warnings = QLabel()
        for label in (self.gain, self.high, self.low, self.dominant, self.warnings):
            label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
            # Wrapping lets a narrow window keep its size instead of growing to the longest line.
            label.setWordWrap(True)
        layout.addWidget(self.dominant, 0, 0)
        layout.addWidget(self.gain, 0, 1)
        layout.addWidget(self.high, 1, 0)
        layout.addWidget(self.low, 1, 1)
        layout.addWidget(self.warnings, 2, 0, 1, 2)
        layout.setColumnStretch(0, 1)
        layout.setColumnStretch(1, 1)
        bold = self.dominant.font()
        bold.setBold(True)
        bold.setPointSizeF(bold.pointSizeF() * 1.15)
        self.dominant.setFont(bold)
        self.show_verdict(None)

    def show_verdict(self, data: VerdictData | None, *, stale: bool = False) -> None:
        """Show ``data`` (None: nothing analysed yet); ``stale`` greys a result no longer current."""
        self._stale = stale
        # While one design is edited the strip only grows, until the edits pause: a warning
        # that comes and goes, or a line that wraps once more, must not move the plots below
        # it at every step of a scrub. The height it has is held before the new lines are
        # set (the layout lays them out).
        held = not self._fresh and data is not None and self.isVisible()
        self.setMinimumHeight(max(self.minimumHeight(), self.height()) if held else 0)
        if held:
            self._hold.start()
        self._fresh = data is None
        if data is None:
            for label in (self.gain, self.high, self.low, self.dominant, self.warnings):
                label.setText("")
            self.dominant.setText("Draw a stage with a signal source and an output probe to see its corners.")
        else:
            self.gain.setText(data.gain_text)
            self.high.setText(data.high_text)
            self.low.setText(data.low_text)
            self.dominant.setText(data.dominant_text)
            self.warnings.setText("\n".join(f"• {w}" for w in data.warnings))
            self.warnings.setVisible(bool(data.warnings))
        self._style()

    def release_height(self) -> None:
        """Let the next verdict take its own height (another design is shown; an empty sheet
        does the same)."""
        self._fresh = True

    def resizeEvent(self, event):
        super().resizeEvent(event)
        if event.size().width() != event.oldSize().width():
            self.setMinimumHeight(0)  # the lines wrap anew; the next verdict holds what they take

    def _restyle(self) -> None:
        c = self._colours
        ink = c.stale if self._stale else c.ink
        for label in (self.gain, self.high, self.low, self.dominant):
            label.setStyleSheet(f"color: {ink.name()};")
        self.warnings.setStyleSheet(f"color: {(c.stale if self._stale else c.selection).name()};")


class _ProblemLine(QLabel):
    """One listed problem; a click asks to be shown it on the sheet."""

    clicked = Signal()

    def __init__(self, text: str, parent=None):
        super().__init__(text, parent)
        self.setWordWrap(True)
        self.setCursor(Qt.CursorShape.PointingHandCursor)
        self.setToolTip("Show this on the sheet")
        self.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Maximum)

    def mousePressEvent(self, event):
        if event.button() == Qt.MouseButton.LeftButton:
            self.clicked.emit()
        super().mousePressEvent(event)


class ProblemBanner(QFrame):
    """Every problem of the circuit as drawn, naming the part or node; hidden when there is none.

    Collapsed, it shows the first problem and how many more there are; expanded, it lists
    each one, and a click on one shows it on the sheet.

    Signals
    -------
    show_requested(object)
        The user asked to see a problem (a :class:`bandsketch.engine.design.netlist.Problem`)
        on the canvas.
    """

    show_requested = Signal(object)

    def __init__(self, parent=None):
        super().__init__(parent)
        self._colours: ViewColours = view_colours()
        self._problems: list = []
        self._note = ""
        layout = QVBoxLayout(self)
        layout.setContentsMargins(8, 6, 8, 6)
        layout.setSpacing(3)
        top = QHBoxLayout()
        self.message = _ProblemLine("")
        self.message.setAlignment(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop)
        self.message.clicked.connect(self._show_first)
        top.addWidget(self.message, 1)
        self.toggle = QToolButton()
        self.toggle.setCheckable(True)
        self.toggle.setToolTip("List every problem")
        self.toggle.toggled.connect(self._fill)
        top.addWidget(self.toggle, 0, Qt.AlignmentFlag.AlignTop)
        layout.addLayout(top)
        self.lines = QWidget()
        self._lines = QVBoxLayout(self.lines)
        self._lines.setContentsMargins(12, 0, 0, 0)
        self._lines.setSpacing(2)
        layout.addWidget(self.lines)
        self.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Maximum)
        self._restyle()
        self.hide()

    def _show_first(self) -> None:
        if self._problems and not self.toggle.isChecked():
            self.show_requested.emit(self._problems[0])

    def show_problems(self, problems, *, greyed: bool = False) -> None:
        """List ``problems`` (an empty list hides the banner).

        Parameters
        ----------
        problems : list of Problem
            What is wrong, each naming its parts and sheet points; the first is shown
            when the banner is collapsed.
        greyed : bool
            Say that the last good result is still shown, in grey.
        """
        self._problems = list(problems)
        self._note = "The last result that could be analysed is shown in grey." if greyed else ""
        if not self._problems:
            self.hide()
            return
        self._fill()
        self.show()

    def _fill(self) -> None:
        n, expanded = len(self._problems), self.toggle.isChecked()
        if expanded:
            head = f"{n} problems; click one to see it on the sheet:"
        else:
            more = f" (and {n - 1} more problem{'s' if n > 2 else ''})" if n > 1 else ""
            head = self._problems[0].message + more
        self.message.setText(head + (f"\n{self._note}" if self._note else ""))
        self.message.setWordWrap(not expanded)  # a wrapped label keeps a taller height
        self.toggle.setVisible(n > 1)
        self.toggle.setText("Hide list" if expanded else f"All {n}")
        while self._lines.count():
            old = self._lines.takeAt(0).widget()
            old.hide()
            old.deleteLater()
        for problem in self._problems if expanded else ():
            line = _ProblemLine(f"• {problem.message}")
            line.clicked.connect(lambda p=problem: self.show_requested.emit(p))
            self._lines.addWidget(line)
        self.lines.setVisible(expanded and n > 1)

    def entries(self) -> list:
        """The problems listed, first one first."""
        return list(self._problems)

    def text(self) -> str:
        """Every problem listed, one a line, and the note (empty when hidden)."""
        if self.isHidden():
            return ""
        return "\n".join([p.message for p in self._problems] + ([self._note] if self._note else []))

    def set_colours(self, colours: ViewColours) -> None:
        """Redraw in ``colours`` (the theme changed)."""
        self._colours = colours
        self._restyle()

    def _restyle(self) -> None:
        c = self._colours
        self.setStyleSheet(f"ProblemBanner {{ border: 2px solid {c.problem.name()}; border-radius: 4px; }}"
                           f" QLabel {{ color: {c.ink.name()}; }}")
