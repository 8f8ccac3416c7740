"""What the program says when something fails that no check foresaw: one line, and whom to tell.

The command line prints it and exits 1; the window shows it in a dialog and keeps the design.
"""

from __future__ import annotations

REPORT_HINT = ("This is a fault in Bandsketch, not in your design: please report it with the design "
               "file and what you did.")
"""The sentence every unexpected failure ends with."""


def unexpected(exc: BaseException) -> str:
    """The exception as one short line: its type and the first line of its message."""
    text = str(exc).strip().splitlines()[0] if str(exc).strip() else ""
    if len(text) > 160:
        text = text[:157] + "..."
    return f"{type(exc).__name__}: {text}" if text else type(exc).__name__
