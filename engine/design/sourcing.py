"""How the designer may change and buy each part: knob status, E series and tolerance.

Every part carries a :class:`Sourcing`; its empty texts mean "the default by kind", so a
design that never touches them (every version 1 file) keeps the defaults it always had.

- **Knob**: whether the advisor may offer another value for the part. Resistors,
  capacitors, inductors, rail voltages and source bias values are the designer's choice
  (``""`` = yes); a transistor's or op-amp's physics (β, V_A, f_T, C_μ, A₀, f_u ...) is not,
  unless the designer says ``"yes"`` ("I can choose another device"). ``"no"`` holds any
  part fixed (a source resistance, a load the stage is given).
- **Series**: the IEC 60063 series the part is bought from (capacitors E6, resistors E24,
  inductors E12 by default).
- **Tolerance**: the half-width of the part's band as a percentage (``"1 %"``); empty uses
  the default by kind of :mod:`bandsketch.engine.advise.tolerance`.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from ..core.errors import BadValueError

SERIES_NAMES = ("E3", "E6", "E12", "E24", "E48", "E96", "E192")
"""The IEC 60063:2015 series a part can be bought from."""

DEFAULT_SERIES = {"capacitor": "E6", "resistor": "E24", "inductor": "E12"}
"""Kind -> the series its parts come from unless the designer picks another.

Capacitors E6 and resistors E24 as the stock ranges of most makers carry them (common
practice, no source); inductors E12 (common practice, no source)."""

KNOB_CHOICES = ("", "yes", "no")
"""Knob status texts: by kind, the advisor may change it, held fixed."""

_PERCENT = re.compile(r"^\s*(?P<num>[0-9]*\.?[0-9]+(?:[eE][+-]?[0-9]+)?)\s*%?\s*$")


@dataclass(frozen=True)
class Sourcing:
    """The designer's choices about one part; every empty text means the default by kind.

    Attributes
    ----------
    knob : str
        ``""`` (by kind), ``"yes"`` (the advisor may change it; for a transistor or op-amp,
        "I can choose another device") or ``"no"`` (held fixed).
    series : str
        ``""`` (by kind) or one of :data:`SERIES_NAMES`.
    tolerance : str
        ``""`` (by kind) or a percentage text, ``"1 %"`` (the band is ±1 % of the value).
    """

    knob: str = ""
    series: str = ""
    tolerance: str = ""

    def __post_init__(self):
        if self.knob not in KNOB_CHOICES:
            raise ValueError(f"knob must be one of {KNOB_CHOICES}, not {self.knob!r}")
        if self.series and self.series not in SERIES_NAMES:
            raise ValueError(f"series must be one of {', '.join(SERIES_NAMES)}, not {self.series!r}")

    def is_default(self) -> bool:
        """Whether every choice is the default by kind."""
        return self == Sourcing()


def series_of(kind: str, sourcing: Sourcing) -> str | None:
    """The series a part of ``kind`` is bought from, or None for a kind not bought by value.

    Parameters
    ----------
    kind : str
        Key into :data:`bandsketch.engine.design.parts.KINDS`.
    sourcing : Sourcing
    """
    if kind not in DEFAULT_SERIES:
        return None
    return sourcing.series or DEFAULT_SERIES[kind]


def tolerance_fraction(text: str, part: str | None = None) -> float | None:
    """A tolerance text as a fraction (``"5 %"`` -> 0.05); None for an empty text.

    Parameters
    ----------
    text : str
        A per cent text (``"5 %"``).
    part : str, optional
        For the message.

    Raises
    ------
    BadValueError
        The text is not a percentage from 0 to 99 %; the message names the part.
    """
    if not text.strip():
        return None
    m = _PERCENT.match(text)
    who = f"{part} tolerance" if part else "Tolerance"
    if not m:
        raise BadValueError(f"{who}: '{text.strip()}' is not a percentage; write e.g. 1 % or 5 %",
                            part=part, field="tolerance", text=text)
    frac = float(m["num"]) / 100
    if not (math.isfinite(frac) and 0 <= frac < 0.995):
        raise BadValueError(f"{who}: '{text.strip()}' is not usable; give 0 to 99 %",
                            part=part, field="tolerance", text=text)
    return frac
