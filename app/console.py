"""What the command line writes to a console: ASCII stand-ins where the console's encoding
lacks a character, and progress on stderr for long work.

No Qt here: the command's analysis paths run where Qt is not installed.
"""

from __future__ import annotations

import codecs
import sys
import time

ASCII_FORMS = {
    "−": "-", "–": "-", "—": "--", "─": "-", "µ": "u", "μ": "u", "Ω": "Ohm", "τ": "tau", "ω": "w",
    "π": "pi", "•": "*", "·": "*", "×": "x", "²": "^2", "√": "sqrt", "≈": "~", "±": "+/-", "°": " deg",
    "∞": "inf", "…": "...", "“": '"', "”": '"', "‘": "'", "’": "'", "₁": "1", "₂": "2", "→": "->",
}
"""What each character the command prints becomes on a console that cannot show it."""

ERROR_HANDLER = "bandsketch-ascii"


def _ascii_forms(exc: UnicodeError):
    if not isinstance(exc, UnicodeEncodeError):
        raise exc
    text = exc.object[exc.start:exc.end]
    return "".join(ASCII_FORMS.get(ch, "?") for ch in text), exc.end


codecs.register_error(ERROR_HANDLER, _ascii_forms)


def fall_back_to_ascii(*streams) -> None:
    """Let ``streams`` (stdout and stderr by default) write ASCII forms of characters their
    encoding lacks (``−`` as ``-``, ``Ω`` as ``Ohm``) instead of raising UnicodeEncodeError."""
    for stream in streams or (sys.stdout, sys.stderr):
        reconfigure = getattr(stream, "reconfigure", None)
        if reconfigure is not None:
            reconfigure(errors=ERROR_HANDLER)


PROGRESS_AFTER_S = 1.0
"""Work that has run this long starts showing its progress."""


class Progress:
    """``progress(done, total)`` callback that shows progress on ``stream`` (stderr) once the
    work has taken :data:`PROGRESS_AFTER_S`: a bar on a terminal, a percentage a line at each
    tenth otherwise (a log file reads those; a bar's carriage returns would garble it)."""

    def __init__(self, label: str, stream=None, clock=time.monotonic):
        self.label = label
        self.stream = stream if stream is not None else sys.stderr
        self.clock = clock
        self.start = clock()
        self.shown = False
        self.last_tenth = -1
        self.current: str | None = None
        self.bar = bool(getattr(self.stream, "isatty", lambda: False)())

    def __call__(self, done: int, total: int) -> None:
        self._show(done, total, self.label)

    def stage(self, name: str):
        """The ``progress(done, total)`` callback of one stage of the work, shown as
        "label (name)"; the stages share one clock, so work whose stages each take under
        :data:`PROGRESS_AFTER_S` still shows its progress once the whole has taken that long."""
        def report(done: int, total: int) -> None:
            if self.current != name:
                self.current, self.last_tenth = name, -1
            self._show(done, total, f"{self.label} ({name})")
        return report

    def _show(self, done: int, total: int, label: str) -> None:
        if not self.shown and self.clock() - self.start < PROGRESS_AFTER_S:
            return
        self.shown = True
        share = done / total if total else 1.0
        if self.bar:
            filled = int(30 * share)
            self.stream.write(f"\r{label} [{'#' * filled}{'.' * (30 - filled)}] {100 * share:3.0f} %")
            if done >= total:
                self.stream.write("\n")
        else:
            tenth = int(10 * share)
            if tenth == self.last_tenth:
                return
            self.last_tenth = tenth
            self.stream.write(f"{label}: {10 * tenth} %\n")
        self.stream.flush()
