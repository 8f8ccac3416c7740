"""Knobs: the values of a design its designer chooses, and so the values the advisor may change.

A resistor, capacitor or inductor value, a rail voltage, a source's bias value and a device
size (a MOSFET's W, L or K_P, a BJT's I_S, which scales with emitter area) are the
designer's to choose. The physics of a given device (β, V_A, f_T, C_μ, an op-amp's A₀ and
f_u, the small-signal values that follow from them) is not: the advisor offers another
value for those only where the designer has ticked "I can choose another device" for that
part (its :class:`bandsketch.engine.design.sourcing.Sourcing` knob ``"yes"``). Any part can be held
fixed (knob ``"no"``): a source resistance or a load the stage is given.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..core.errors import BadValueError
from ..design.schema import parse_field
from ..design.parts import KINDS
from ..design.sourcing import series_of

DESIGN_CHOICES = frozenset({
    ("resistor", "value"), ("capacitor", "value"), ("inductor", "value"),
    ("rail", "dc"), ("vsource", "dc"), ("isource", "dc"),
    ("bjt", "isat"), ("mosfet", "w"), ("mosfet", "l"), ("mosfet", "kp"),
})
"""(kind, field key) pairs a designer chooses; every other numeric field is device physics."""



@dataclass(frozen=True)
class Knob:
    """A field of a part that the advisor may set to another number.

    Attributes
    ----------
    part : str
        The part's name.
    key : str
        The field's key (``"value"``, ``"ic"``, ``"gm"`` ...).
    label : str
        How a table names it (``"RC"``, ``"Q1 β"``).
    unit : str
        The field's unit (``"Ω"``, ``"A"``, ``""`` for β).
    nominal : float
        The value the field holds now, SI units (signed for a gain).
    series : str or None
        The IEC 60063 series the part is bought from (resistors, capacitors, inductors),
        None for a value set by other means.
    device : bool
        Whether it is a device parameter, offered only because the designer can choose
        another device.
    """

    part: str
    key: str
    label: str
    unit: str
    nominal: float
    series: str | None
    device: bool

    @property
    def standard(self) -> bool:
        """Whether the value is bought from an E series."""
        return self.series is not None


def is_design_choice(kind: str, key: str) -> bool:
    """Whether field ``key`` of a part of ``kind`` is the designer's choice by default.

    Parameters
    ----------
    kind : str
        Key into :data:`bandsketch.engine.design.parts.KINDS`.
    key : str
        The field's key (``"value"``, ``"isat"``).
    """
    return (kind, key) in DESIGN_CHOICES


def _numeric_fields(part):
    # The fields the part's model mode uses; conditions of use (a temperature) are no knob.
    return [f for f in KINDS[part.kind].active_fields(part.params) if f.numeric and f.knob]


def knobs(doc, only=None) -> tuple:
    """The fields of ``doc`` the advisor may change, with their present values.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    only : collection of str, optional
        Part names or knob labels (``"R1"``, ``"Q1 β"``) to keep; every knob when None.

    Returns
    -------
    tuple of Knob
        In sheet order. A field whose text is empty, unreadable or zero is left out (it has
        no present value to scale).
    """
    out = []
    for part in doc.parts.values():
        if KINDS[part.kind].build is None or part.sourcing.knob == "no":
            continue
        for f in _numeric_fields(part):
            device = not is_design_choice(part.kind, f.key)
            if device and part.sourcing.knob != "yes":
                continue
            label = part.name if f.key == "value" else f"{part.name} {f.label}"
            if only is not None and part.name not in only and label not in only:
                continue
            text = part.params.get(f.key, "").strip()
            if not text:
                continue
            try:
                value = parse_field(part.name, f, text)
            except BadValueError:
                continue
            if value == 0 or not math.isfinite(value):
                continue
            out.append(Knob(part.name, f.key, label, f.unit, value, series_of(part.kind, part.sourcing), device))
    return tuple(out)


def has_device_fields(kind: str) -> bool:
    """Whether a part of ``kind`` has any numeric field that is device physics.

    Parameters
    ----------
    kind : str
        Key into :data:`bandsketch.engine.design.parts.KINDS`.
    """
    return any(f.numeric and f.knob and not is_design_choice(kind, f.key) for f in KINDS[kind].fields)
