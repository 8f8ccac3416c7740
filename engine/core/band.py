"""The bands an element can belong to, one definition for the engine, the files and the app."""

from __future__ import annotations

from enum import Enum


class Band(str, Enum):
    """Where a capacitor or inductor acts: it sets the lower corner, the upper one, or neither.

    The members are strings (``Band.LOW == "low"``), so design files, JSON summaries and
    scripts keep the plain words ``"low"``, ``"high"`` and ``"neutral"``.
    """

    LOW = "low"
    HIGH = "high"
    NEUTRAL = "neutral"

    def __str__(self) -> str:
        return self.value

    @classmethod
    def pinnable(cls) -> tuple[Band, ...]:
        """The bands a user may pin an element to in a design (the app offers these two)."""
        return (cls.LOW, cls.HIGH)
