"""The app's calls into the engine for values, connectivity and derived device values.

Kept in one module so every view reads a field, checks a sheet and shows a block's derived
small-signal values the same way; :class:`SheetReading` reads the sheet once per edit for
every view.
"""

from __future__ import annotations

from dataclasses import dataclass

from bandsketch.engine.design import netlist, schema
from bandsketch.engine.network import devices
from bandsketch.engine.design.document import Document, Part
from bandsketch.engine.core.errors import BadValueError, CircuitError
from bandsketch.engine.design.netlist import DrawnDesign, read_design
from bandsketch.engine.design.parts import KINDS, Field
from bandsketch.engine.core.values import format_value
from bandsketch.engine.design.schema import parse_field


@dataclass(frozen=True)
class FieldCheck:
    """The verdict on one field text: ``ok``; ``shown`` is the formatted value or the reason."""

    ok: bool
    shown: str


def check_field(doc: Document, part: Part, f: Field, text: str) -> FieldCheck:
    """Whether ``text`` is acceptable for field ``f`` of ``part``, and what to show for it.

    The design schema judges first (what a design file can hold); then what this sheet says:
    a sensed source must be a voltage source on it, and a block's own model has the last word.
    The empty text is accepted only for optional fields (it leaves the element out).
    """
    problem = schema.field_problem(part.name, f, text)
    if problem:
        return FieldCheck(False, problem)
    text = text.strip()
    if not text:
        return FieldCheck(True, "not used")
    if f.unit == "name":
        other = doc.parts.get(text)
        if other is None or other.kind != "vsource":
            return FieldCheck(False, f"{part.name} {f.label}: '{text}' is not a voltage source on this sheet; "
                                     "name the source whose current is sensed")
    if not f.numeric:
        return FieldCheck(True, text)
    if part.kind in devices.MODELS:
        try:
            netlist.derived_values(part.with_params(**{f.key: text}))
        except BadValueError as exc:
            if exc.field == f.key:
                return FieldCheck(False, exc.message)
    return FieldCheck(True, format_value(parse_field(part.name, f, text), f.unit))


def shown_value(part: Part, f: Field, *, unit: bool = True) -> str:
    """A field's value as a label shows it: formatted if it reads, the raw text if not.

    ``unit=False`` leaves the unit off (a gain in V/V reads better as a bare number).
    """
    text = part.params.get(f.key, "")
    if not f.numeric or not text.strip():
        return text
    try:
        value = parse_field(part.name, f, text)
    except BadValueError:
        return text
    return format_value(value, f.unit if unit else "")


class SheetReading:
    """The live document read once per state: its nets, its circuit and its problems.

    The sheet's problem marks, the status bar and the analysis all take the same
    :class:`~bandsketch.engine.design.netlist.DrawnDesign`, built on first use after a
    change; a drag's many changes only forget the old one.
    """

    def __init__(self, doc: Document):
        self.doc = doc
        self._drawn: DrawnDesign | None = None
        doc.changed.connect(self._forget)

    def _forget(self, _change) -> None:
        self._drawn = None

    def drawn(self) -> DrawnDesign:
        """The reading of the document as it is now."""
        if self._drawn is None:
            self._drawn = read_design(self.doc)
        return self._drawn


def derived_values(part: Part, point=None, why_not: str | None = None) -> dict | str:
    """A transistor block's derived values (key -> SI value; ``region`` a text), or the reason not.

    A block biased from the sheet gives its bias (I_C or I_D, the terminal voltages, the
    region) and the small-signal values at ``point``, the operating point of the newest
    analysis; ``why_not`` says why there is none (the analysis's problem).
    """
    try:
        values = netlist.derived_values(part)
    except CircuitError as exc:
        return exc.message
    if part.params.get("mode") != "bias":
        return values
    bias = None if point is None else point.devices.get(part.name)
    if bias is None:
        return why_not or "The bias is being solved."
    return bias_values(bias)


def bias_values(bias) -> dict:
    """A device's bias as Properties and the sheet list it: currents (A), voltages (V), region, small-signal."""
    keys = ("ic", "vbe", "vce") if bias.kind == "bjt" else ("id", "vgs", "vds", "vth")
    return {"region": bias.region, **{k: bias[k] for k in keys}, **bias.small_signal}


def kind_fields(part: Part) -> tuple:
    """The fields of a part that apply now: a transistor block shows only its chosen mode's."""
    return KINDS[part.kind].active_fields(part.params)


def main_field(part: Part):
    """The field a double-click edits and the sheet's value scrub steps: the part's first
    numeric field, or None."""
    return next((f for f in kind_fields(part) if f.numeric and f.key != "mode"), None)
