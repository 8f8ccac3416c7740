"""The verdict strip: mid-band gain, both corners estimated against exact, what limits them,
and the warnings; and the banner that says why a circuit as drawn cannot be analysed."""

from __future__ import annotations

from PySide6.QtCore import Qt, Signal
from PySide6.QtWidgets import QFrame, QGridLayout, QHBoxLayout, QLabel, QPushButton

from bandsketch.engine.present.plotdata import VerdictData

from .style import Restyles, ViewColours, view_colours


class VerdictStrip(Restyles, QFrame):
    """The analysis in a few lines, drawn from a :class:`bandsketch.engine.present.plotdata.VerdictData`."""

    def __init__(self, parent=None):
        super().__init__(parent)
        self.setFrameShape(QFrame.Shape.StyledPanel)
        self._colours: ViewColours = view_colours()
        self._stale = False
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
        self._restyle()

    def _restyle(self) -> None:
        c = self._colours
        ink = c.stale if self._stale else c.ink
        for label in (self.gain, self.high, self.low, self.dominant):
            label.setStyleSheet(f"color: {ink.name()};")
        self.warnings.setStyleSheet(f"color: {(c.stale if self._stale else c.selection).name()};")


class ProblemBanner(QFrame):
    """Why the circuit as drawn cannot be analysed, naming the part or node; hidden when it can.

    Signals
    -------
    show_requested()
        The user asked to see the faulty parts on the canvas.
    """

    show_requested = Signal()

    def __init__(self, parent=None):
        super().__init__(parent)
        self._colours: ViewColours = view_colours()
        layout = QHBoxLayout(self)
        layout.setContentsMargins(8, 6, 8, 6)
        self.message = QLabel()
        self.message.setWordWrap(True)
        self.message.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        layout.addWidget(self.message, 1)
        self.where = QPushButton("Show")
        self.where.setToolTip("Select the parts at fault on the canvas")
        self.where.clicked.connect(self.show_requested)
        layout.addWidget(self.where)
        self._restyle()
        self.hide()

    def show_problem(self, message: str | None, *, can_show: bool = False, greyed: bool = False) -> None:
        """Show ``message`` (None hides the banner).

        Parameters
        ----------
        message : str or None
            What is wrong, naming the part or node.
        can_show : bool
            Offer to select the parts at fault.
        greyed : bool
            Say that the last good result is still shown, in grey.
        """
        if message is None:
            self.hide()
            return
        note = "\nThe last result that could be analysed is shown in grey." if greyed else ""
        self.message.setText(message + note)
        self.where.setVisible(can_show)
        self.show()

    def text(self) -> str:
        """The message shown (empty when hidden)."""
        return "" if self.isHidden() else self.message.text()

    def set_colours(self, colours: ViewColours) -> None:
        """Redraw in ``colours`` (the theme changed)."""
        self._colours = colours
        self._restyle()

    def _restyle(self) -> None:
        c = self._colours
        self.setStyleSheet(f"ProblemBanner {{ border: 2px solid {c.problem.name()}; border-radius: 4px; }}"
                           f" QLabel {{ color: {c.ink.name()}; }}")
