"""The app's calls into the engine for values, connectivity and derived device values.

Kept in one module so every view reads a field, checks a sheet and shows a block's derived
small-signal values the same way.
"""

from __future__ import annotations

from dataclasses import dataclass

from bandsketch.engine.design import netlist
from bandsketch.engine.network import devices
from bandsketch.engine.design.document import NAME_RE, Document, Part
from bandsketch.engine.core.errors import BadValueError, CircuitError
from bandsketch.engine.design.parts import KINDS, Field
from bandsketch.engine.core.values import format_value, parse_value

_PARSER_UNITS = {"Ω", "F", "H", "S", "A/V", "V/V", "A/A", "V", "A", "Hz", "K", "", "1/V"}
"""Units the value parser knows; other numeric fields (°C) are parsed unit-free."""

NUMERIC_SKIP = {"choice", "name", "net"}
"""Field units that hold text, not a number."""


@dataclass(frozen=True)
class FieldCheck:
    """The verdict on one field text: ``ok``; ``shown`` is the formatted value or the reason."""

    ok: bool
    shown: str


def is_numeric(f: Field) -> bool:
    """Whether a field holds a number (rather than a choice or a name)."""
    return f.unit not in NUMERIC_SKIP


def parse_field(part_name: str, f: Field, text: str) -> float:
    """The value of a numeric field's text, raising BadValueError naming part and field."""
    return parse_value(
        text,
        unit=f.unit if f.unit in _PARSER_UNITS else None,
        part=part_name,
        field=f.label,
        allow_zero=f.allow_negative or f.optional,
        allow_negative=f.allow_negative,
    )


def check_field(doc: Document, part: Part, f: Field, text: str) -> FieldCheck:
    """Whether ``text`` is acceptable for field ``f`` of ``part``, and what to show for it.

    The empty text is accepted only for optional fields (it leaves the element out).
    """
    text = text.strip()
    where = f"{part.name} {f.label}"
    if not text:
        if f.optional:
            return FieldCheck(True, "not used")
        return FieldCheck(False, f"{where} needs a value")
    if f.unit == "choice":
        if text in f.choices:
            return FieldCheck(True, text)
        return FieldCheck(False, f"{where} must be one of {', '.join(f.choices)}")
    if f.unit == "name":
        other = doc.parts.get(text)
        if other is None or other.kind != "vsource":
            return FieldCheck(False, f"{where}: '{text}' is not a voltage source on this sheet; "
                                     "name the source whose current is sensed")
        return FieldCheck(True, text)
    if f.unit == "net":
        if not NAME_RE.fullmatch(text):
            return FieldCheck(False, f"{where}: '{text}' is not a usable net name; start with a "
                                     "letter, then letters, digits or _")
        return FieldCheck(True, text)
    try:
        value = parse_field(part.name, f, text)
        if part.kind in devices.RESOLVERS:
            # The block's own model has the last word on its fields (what may be zero ...).
            try:
                netlist.derived_values(part.with_params(**{f.key: text}))
            except BadValueError as exc:
                if exc.field == f.key:
                    raise
    except BadValueError as exc:
        return FieldCheck(False, exc.message)
    return FieldCheck(True, _formatted(value, f))


def shown_value(part: Part, f: Field, *, unit: bool = True) -> str:
    """A field's value as a label shows it: formatted if it reads, the raw text if not.

    ``unit=False`` leaves the unit off (a gain in V/V reads better as a bare number).
    """
    text = part.params.get(f.key, "")
    if not is_numeric(f) or not text.strip():
        return text
    try:
        value = parse_field(part.name, f, text)
    except BadValueError:
        return text
    return _formatted(value, f) if unit else format_value(value)


def _formatted(value: float, f: Field) -> str:
    # A prefix before "1/V" would read as a prefixed volt, so that unit goes after a space.
    if f.unit == "1/V":
        return f"{format_value(value)} /V"
    return format_value(value, f.unit)


def connectivity_problems(doc: Document) -> list:
    """The engine's connectivity problems of the sheet (each with message, parts, points)."""
    return netlist.connectivity_problems(doc)


def derived_values(part: Part) -> dict | str:
    """A transistor block's derived small-signal values (key -> SI value), or the reason not."""
    try:
        return netlist.derived_values(part)
    except CircuitError as exc:
        return exc.message


def kind_fields(part: Part) -> tuple:
    """The fields of a part that apply now: a transistor block shows only its chosen mode's."""
    mode = part.params.get("mode", "")
    return tuple(f for f in KINDS[part.kind].fields if not f.mode or f.mode == mode)
