"""A minimal signal for models that announce their own changes, with no Qt dependency."""

from __future__ import annotations

from typing import Callable


class Signal:
    """Callbacks called in connection order with whatever :meth:`emit` is given.

    The app connects Qt slots to it; the engine stays free of Qt.
    """

    def __init__(self) -> None:
        self._slots: list[Callable] = []

    def connect(self, slot: Callable) -> None:
        """Call ``slot`` on every emit (connecting the same slot twice is a no-op)."""
        if slot not in self._slots:
            self._slots.append(slot)

    def disconnect(self, slot: Callable) -> None:
        """Stop calling ``slot``; unknown slots are ignored."""
        if slot in self._slots:
            self._slots.remove(slot)

    def emit(self, *args) -> None:
        """Call every connected slot with ``args``."""
        for slot in list(self._slots):
            slot(*args)
