"""What every field of a design may hold: one definition for reading, writing and typing.

The design file loader, the saver (which checks a design can be read back before writing it),
the Properties panel, the in-place editor and the scripting :class:`~.document.Document` all
ask these functions, so a text the program accepts anywhere is one it can save and open again.
Part fields are judged from their catalogue entry (:class:`~.parts.Field`: unit, choices,
optional, sign), so a field added to the catalogue is covered without a change here.

Two levels, one definition: what a design may *hold* (the loader and the document refuse
anything else: a text too long for a file, a choice that is not one, a malformed name), and
what may be *typed* into a field (the entry refuses, keeping the text, anything a value
cannot be: empty where a value is needed, not a number, outside the usable range). A held
value that does not read (a hand-edited file) opens, and the analysis names it.

Every check returns None when the text is acceptable, or a sentence saying why not.
"""

from __future__ import annotations

import math
import re
import unicodedata

from ..core.band import Band
from ..core.errors import BadValueError
from ..core.values import UNITS, parse_value
from .parts import KINDS, ROTATIONS, Field
from .sourcing import KNOB_CHOICES, SERIES_NAMES, tolerance_fraction

MAX_TEXT = 200
"""Longest text (a name, a value, a title, a target) a design may hold, in characters."""
MAX_COORD = 10**7
"""Largest sheet coordinate, in scene units either side of the origin."""
MAX_WIRE_POINTS = 1000
"""Most points one wire may have."""
NAME_RE = re.compile(r"[A-Za-z][A-Za-z0-9_]*")
"""What a part or net name may look like (whole, with ``fullmatch``): a letter, then letters, digits or _."""
TARGET_KEYS = ("f_high_min", "f_low_max", "gain", "gain_tolerance",
               "rise_time_max", "overshoot_max", "settling_time_max")
"""Design targets a document may hold (texts, parsed by the engine's value parser): the
corners and the gain, then the step response's longest rise and settling and largest overshoot."""


def text_problem(text) -> str | None:
    """Why ``text`` cannot be held by a design (not text, too long, a broken character), or None.

    The reason reads after a colon: ``f"{where}: {problem}"``.

    Parameters
    ----------
    text : object
        What a design would hold.
    """
    if not isinstance(text, str):
        return f"expected text, found {type(text).__name__}"
    if len(text) > MAX_TEXT:
        return f"{len(text)} characters is too long; keep it to {MAX_TEXT} characters, what a design file holds"
    if not text.isascii():
        try:
            text.encode("utf-8")
        except UnicodeEncodeError:
            # A lone surrogate (JSON "\\ud800"): Python holds it, but no file can.
            return "a broken character (an unpaired UTF-16 surrogate)"
    return None


def name_problem(name) -> str | None:
    """Why ``name`` cannot name a part or a net (whatever else the sheet holds), or None.

    Parameters
    ----------
    name : object
        The proposed name.
    """
    problem = text_problem(name)
    if problem:
        return f"the name: {problem}"
    if not name:
        return "the name is empty: give a letter, then letters, digits or _"
    if not NAME_RE.fullmatch(name):
        return f"'{name}' is not a usable name: start with a letter, then letters, digits or _"
    return None


def parse_field(part_name: str, f: Field, text: str) -> float:
    """The value of a numeric field's text, raising BadValueError naming part and field.

    Parameters
    ----------
    part_name : str
        For the message.
    f : bandsketch.engine.design.parts.Field
        Its ``unit`` is the value's SI unit.
    text : str
        As typed (``"4k7"``).
    """
    return parse_value(
        text,
        unit=f.unit if unicodedata.normalize("NFKC", f.unit) in UNITS else None,
        part=part_name,
        field=f.label,
        allow_zero=f.allow_negative or f.optional,
        allow_negative=f.allow_negative,
    )


def field_problem(part_name: str, f: Field, text, *, typed: bool = True) -> str | None:
    """Why ``text`` cannot fill field ``f`` of the part ``part_name``, or None.

    ``typed=False`` asks only what a design may hold (the text, the choice, the form of a
    name); ``typed=True`` adds what an entry accepts (a value where one is needed, and one
    that reads within the usable range). Neither asks the sheet: that a sensed source exists,
    or that a block's model accepts the value, is for the analysis (and the panel) to say.

    Parameters
    ----------
    part_name, f : str, Field
        As for :func:`parse_field`.
    text : object
        The field text.
    typed : bool
        Whether to judge it as an entry would (see above).
    """
    where = f"{part_name} {f.label}"
    problem = text_problem(text)
    if problem:
        return f"{where}: {problem}"
    if f.unit == "choice":
        return None if text in f.choices else f"{where} must be one of {', '.join(f.choices)}, not '{text}'"
    text = text.strip()
    if not text:
        return None if f.optional or not typed else f"{where} needs a value"
    if f.unit in ("name", "net"):
        problem = name_problem(text)
        return f"{where}: {problem}" if problem else None
    if typed:
        try:
            parse_field(part_name, f, text)
        except BadValueError as exc:
            return exc.message
    return None


def params_problem(kind: str, part_name: str, params) -> str | None:
    """Why a part of ``kind`` cannot hold these field texts (an unknown field, a text a design
    cannot hold), or None.

    Parameters
    ----------
    kind : str
        Key into :data:`bandsketch.engine.design.parts.KINDS`.
    part_name : str
        For the message.
    params : Mapping[str, str]
        Field key -> text.
    """
    entry = KINDS[kind]
    known = {f.key: f for f in entry.fields}
    for key, text in params.items():
        if key not in known:
            return f"{part_name}: {entry.title} has no field {key!r}"
        problem = field_problem(part_name, known[key], text, typed=False)
        if problem:
            return problem
    return None


def coordinate_problem(value) -> str | None:
    """Why ``value`` cannot be a sheet coordinate (scene units), or None.

    Parameters
    ----------
    value : object
        The coordinate, scene units.
    """
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return f"expected a number, found {type(value).__name__}"
    # abs() first: a huge JSON integer (10**400) cannot be turned into a float.
    if abs(value) > MAX_COORD or not math.isfinite(value) or value != int(value):
        shown = repr(value) if len(repr(value)) <= 30 else repr(value)[:27] + "..."
        return f"{shown} is not a whole number of scene units within ±{MAX_COORD}"
    return None


def wire_problem(points) -> str | None:
    """Why a wire cannot run through these (x, y) points, or None.

    Parameters
    ----------
    points : sequence of (int, int)
        Sheet points, scene units.
    """
    if not 2 <= len(points) <= MAX_WIRE_POINTS:
        return f"a wire needs 2 to {MAX_WIRE_POINTS} points, not {len(points)}"
    for x, y in points:
        problem = coordinate_problem(x) or coordinate_problem(y)
        if problem:
            return f"a wire point {problem}"
    return None


def placement_problem(part_name: str, rotation, mirror) -> str | None:
    """Why a part cannot be turned or flipped so, or None.

    Parameters
    ----------
    part_name : str
        For the message.
    rotation : object
        Degrees clockwise: 0, 90, 180 or 270.
    mirror : object
        Flipped left-to-right (a bool).
    """
    if isinstance(rotation, bool) or rotation not in ROTATIONS:
        return f"{part_name}: rotation {rotation!r} is not one of {ROTATIONS}"
    if not isinstance(mirror, bool):
        return f"{part_name}: mirror must be true or false"
    return None


def sourcing_problem(knob, series, tolerance, part_name: str | None = None) -> str | None:
    """Why a part cannot be bought and changed so (see :mod:`.sourcing`), or None.

    Parameters
    ----------
    knob : object
        One of :data:`~.sourcing.KNOB_CHOICES`.
    series : object
        An IEC 60063 series name (``"E24"``).
    tolerance : object
        A per cent text (``"5 %"``) or empty.
    part_name : str, optional
        For the message.
    """
    who = f"{part_name} " if part_name else ""
    for key, text in (("knob", knob), ("series", series), ("tolerance", tolerance)):
        problem = text_problem(text)
        if problem:
            return f"{who}sourcing {key}: {problem}"
    if knob not in KNOB_CHOICES:
        return f"{who}sourcing knob {knob!r} is not one of {', '.join(repr(k) for k in KNOB_CHOICES)}"
    if series and series not in SERIES_NAMES:
        return f"{who}sourcing series {series!r} is not one of {', '.join(SERIES_NAMES)}"
    try:
        tolerance_fraction(tolerance, part_name)
    except BadValueError as exc:
        return exc.message
    return None


def part_problem(part) -> str | None:
    """Why a placed part (a :class:`~.document.Part`) cannot be in a design, or None.

    Parameters
    ----------
    part : bandsketch.engine.design.document.Part
    """
    if part.kind not in KINDS:
        return f"unknown kind {part.kind!r} (known: {', '.join(KINDS)})"
    problem = name_problem(part.name)
    if problem:
        return problem
    for axis, value in (("x", part.x), ("y", part.y)):
        problem = coordinate_problem(value)
        if problem:
            return f"{part.name} {axis}: {problem}"
    s = part.sourcing
    return (placement_problem(part.name, part.rotation, part.mirror)
            or params_problem(part.kind, part.name, part.params)
            or sourcing_problem(s.knob, s.series, s.tolerance, part.name))


def band_problem(element, band) -> str | None:
    """Why ``element`` cannot be pinned to ``band``, or None (the element may be a block's
    capacitor, ``Q1.cmu``, so only its text is judged).

    Parameters
    ----------
    element : object
        The element's name.
    band : object
        A :class:`~bandsketch.engine.core.band.Band` or its word.
    """
    problem = text_problem(element)
    if problem:
        return f"the pinned element's name: {problem}"
    if not element:
        return "a band pin names no element"
    if band not in Band.pinnable():
        return f"{element} is pinned to {band!r}; a band pin must be one of {', '.join(Band.pinnable())}"
    return None


def target_problem(key, text) -> str | None:
    """Why ``text`` cannot be held as target ``key``, or None. Whether it reads as a value is
    the advisor's to say, beside the target, as with any half-typed entry.

    Parameters
    ----------
    key : object
        One of :data:`TARGET_KEYS`.
    text : object
        The target's text (``"1M"``, ``"40 dB"``).
    """
    if key not in TARGET_KEYS:
        return f"unknown target {key!r} (known: {', '.join(TARGET_KEYS)})"
    problem = text_problem(text)
    return f"target {key}: {problem}" if problem else None
