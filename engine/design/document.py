"""The design document: parts, pins, wires, labels and parameters, announcing its changes.

The document is the one place a design lives. The canvas, the bars and the plots are views
of it: they subscribe to :attr:`Document.changed` (one notice per primitive change) and
:attr:`Document.edited` (a whole user gesture is over: recompute now). Parts and wires are
immutable values; an edit replaces one with another, which is what makes undo exact.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from enum import Enum
from types import MappingProxyType
from typing import Mapping

from ..core.band import Band
from ..core.events import Signal
from . import schema
from .parts import KINDS, ROTATIONS, pin_positions
from .schema import TARGET_KEYS
from .sourcing import Sourcing


@dataclass(frozen=True)
class Part:
    """One placed part.

    Parameters
    ----------
    kind : str
        Key into :data:`bandsketch.engine.design.parts.KINDS`.
    name : str
        Unique name on the sheet (``R1``, ``Q2``, ``Cin``).
    x, y : int
        Origin on the sheet, in scene units (grid multiples).
    rotation : int
        Degrees clockwise, 0, 90, 180 or 270.
    mirror : bool
        Flipped left-to-right before rotating.
    params : Mapping[str, str]
        Field texts exactly as the user typed them (``"4k7"``); parsed only when analysed.
    sourcing : Sourcing
        Whether the advisor may change the part, its E series and its tolerance.
    """

    kind: str
    name: str
    x: int = 0
    y: int = 0
    rotation: int = 0
    mirror: bool = False
    params: Mapping[str, str] = field(default_factory=dict)
    sourcing: Sourcing = Sourcing()

    def __post_init__(self):
        if self.kind not in KINDS:
            raise ValueError(f"unknown part kind {self.kind!r}")
        if self.rotation not in ROTATIONS:
            raise ValueError(f"{self.name}: rotation must be one of {ROTATIONS}")
        object.__setattr__(self, "params", MappingProxyType(dict(self.params)))

    def with_params(self, **changes: str) -> "Part":
        """A copy with some field texts changed."""
        return replace(self, params={**self.params, **changes})

    def with_sourcing(self, **changes: str) -> "Part":
        """A copy with some sourcing choices changed (``knob``, ``series``, ``tolerance``)."""
        return replace(self, sourcing=replace(self.sourcing, **changes))

    def pins(self) -> dict:
        """Pin name -> sheet position (x, y) in scene units."""
        return pin_positions(self.kind, self.x, self.y, self.rotation, self.mirror)


@dataclass(frozen=True)
class Wire:
    """A wire: an orthogonal polyline of sheet points (scene units), at least two."""

    id: int
    points: tuple

    def __post_init__(self):
        pts = tuple((int(x), int(y)) for x, y in self.points)
        if len(pts) < 2:
            raise ValueError(f"wire {self.id} needs at least two points")
        object.__setattr__(self, "points", pts)


class ChangeKind(Enum):
    """What kind of primitive change a :class:`Change` announces."""

    PART_ADDED = "part added"
    PART_REMOVED = "part removed"
    PART_CHANGED = "part changed"
    WIRE_ADDED = "wire added"
    WIRE_REMOVED = "wire removed"
    WIRE_CHANGED = "wire changed"
    SETTINGS = "settings"
    """Title, description, input source, a band pin or a target."""
    RESET = "reset"
    """Everything at once (open, new, restore)."""


PART_CHANGES = frozenset({ChangeKind.PART_ADDED, ChangeKind.PART_REMOVED, ChangeKind.PART_CHANGED})
WIRE_CHANGES = frozenset({ChangeKind.WIRE_ADDED, ChangeKind.WIRE_REMOVED, ChangeKind.WIRE_CHANGED})


@dataclass(frozen=True)
class Change:
    """What one primitive change touched: ``what`` is its :class:`ChangeKind`; ``key`` is the
    part name or wire id (for a rename, the old name; ``new_key`` the new)."""

    what: ChangeKind
    key: object = None
    new_key: object = None


class Document:
    """A design: parts, wires, the chosen input source, band pins, targets and a title.

    Parameters
    ----------
    title : str
        What the design is called (shown in the window's title and the report).
    """

    def __init__(self, title: str = "Untitled design") -> None:
        self.changed = Signal()
        self.edited = Signal()
        self._parts: dict[str, Part] = {}
        self._lower: dict[str, str] = {}  # names are unique regardless of case
        self._wires: dict[int, Wire] = {}
        self._next_wire = 1
        self.title = title
        self.description = ""
        self.input_source: str | None = None
        self._band_pins: dict[str, str] = {}
        self._targets: dict[str, str] = {}
        self.read_version: int | None = None
        """The design-file format version the design was read from (None: not read from a file)."""

    # -- reading -------------------------------------------------------------
    @property
    def parts(self) -> Mapping[str, Part]:
        """Name -> :class:`Part`, in the order they were added (read-only)."""
        return MappingProxyType(self._parts)

    @property
    def wires(self) -> Mapping[int, Wire]:
        """Id -> :class:`Wire` (read-only)."""
        return MappingProxyType(self._wires)

    @property
    def band_pins(self) -> Mapping[str, Band]:
        """Element name -> :class:`~bandsketch.engine.core.band.Band` (low or high), for the elements the user pinned."""
        return MappingProxyType(self._band_pins)

    @property
    def targets(self) -> Mapping[str, str]:
        """Target key (see :data:`TARGET_KEYS`) -> text of the value."""
        return MappingProxyType(self._targets)

    def is_empty(self) -> bool:
        """Whether nothing is drawn."""
        return not self._parts and not self._wires

    def new_name(self, kind: str) -> str:
        """The lowest free automatic name for a new part of ``kind`` (R1, R2 ... C1 ...).

        Parameters
        ----------
        kind : str
            Key into :data:`bandsketch.engine.design.parts.KINDS`.
        """
        prefix = KINDS[kind].prefix
        n = 1
        while f"{prefix}{n}".lower() in self._lower:
            n += 1
        return f"{prefix}{n}"

    def name_problem(self, name: str, current: str | None = None) -> str | None:
        """Why ``name`` cannot be given to a part (now called ``current``), or None if it can.

        Parameters
        ----------
        name : str
            The proposed name.
        current : str, optional
            The part's present name (its own name is no clash).
        """
        problem = schema.name_problem(name)
        if problem:
            return problem
        clash = self._lower.get(name.lower())
        if clash is not None and clash != current:
            return f"'{name}' is already the name of {clash}; choose another"
        return None

    def new_wire_id(self) -> int:
        """An id no wire of this document has used."""
        return self._next_wire

    # -- primitive changes (the undo commands call these) ---------------------
    # Each refuses, with ValueError and the schema's reason, what a design file could not hold.
    def add_part(self, part: Part) -> None:
        """Add a part whose name is free and whose every field the schema accepts.

        Parameters
        ----------
        part : Part
        """
        problem = schema.part_problem(part) or self.name_problem(part.name)
        if problem:
            raise ValueError(problem)
        self._parts[part.name] = part
        self._lower[part.name.lower()] = part.name
        self.changed.emit(Change(ChangeKind.PART_ADDED, part.name))

    def remove_part(self, name: str) -> Part:
        """Remove a part and return it.

        Parameters
        ----------
        name : str
            The part's name.
        """
        part = self._parts.pop(name)
        del self._lower[name.lower()]
        self.changed.emit(Change(ChangeKind.PART_REMOVED, name))
        return part

    def replace_part(self, name: str, part: Part) -> None:
        """Replace part ``name`` by ``part`` (which may carry a new name), keeping its place.

        Parameters
        ----------
        name : str
            The part's present name.
        part : Part
            Its replacement.
        """
        old = self._parts[name]
        # Only what changed is judged again, so a drag of many parts stays cheap.
        changed = {k: v for k, v in part.params.items() if old.params.get(k) != v}
        problem = (schema.params_problem(part.kind, part.name, changed) if part.kind == old.kind
                   else schema.part_problem(part))
        problem = problem or schema.coordinate_problem(part.x) or schema.coordinate_problem(part.y)
        if not problem and part.sourcing != old.sourcing:
            s = part.sourcing
            problem = schema.sourcing_problem(s.knob, s.series, s.tolerance, part.name)
        if problem:
            raise ValueError(problem)
        if part.name != name:
            problem = self.name_problem(part.name, current=name)
            if problem:
                raise ValueError(problem)
            self._parts = {(part.name if k == name else k): v for k, v in self._parts.items()}
            del self._lower[name.lower()]
            self._lower[part.name.lower()] = part.name
            # A block's pins name its inner elements ("Q2.cmu"): they follow the block too.
            for element in [e for e in self._band_pins if e.split(".", 1)[0] == name]:
                self._band_pins[part.name + element[len(name):]] = self._band_pins.pop(element)
            if self.input_source == name:
                self.input_source = part.name
        self._parts[part.name] = part
        self.changed.emit(Change(ChangeKind.PART_CHANGED, name, part.name))

    def add_wire(self, wire: Wire) -> None:
        """Add a wire whose id is unused.

        Parameters
        ----------
        wire : Wire
        """
        if wire.id in self._wires:
            raise ValueError(f"wire id {wire.id} is taken")
        _check(schema.wire_problem(wire.points))
        self._wires[wire.id] = wire
        self._next_wire = max(self._next_wire, wire.id + 1)
        self.changed.emit(Change(ChangeKind.WIRE_ADDED, wire.id))

    def remove_wire(self, wire_id: int) -> Wire:
        """Remove a wire and return it.

        Parameters
        ----------
        wire_id : int
        """
        wire = self._wires.pop(wire_id)
        self.changed.emit(Change(ChangeKind.WIRE_REMOVED, wire_id))
        return wire

    def replace_wire(self, wire: Wire) -> None:
        """Replace the wire with the same id.

        Parameters
        ----------
        wire : Wire
        """
        if wire.id not in self._wires:
            raise KeyError(wire.id)
        _check(schema.wire_problem(wire.points))
        self._wires[wire.id] = wire
        self.changed.emit(Change(ChangeKind.WIRE_CHANGED, wire.id))

    def set_meta(self, **changes) -> None:
        """Change ``title``, ``description`` or ``input_source``."""
        for key, value in changes.items():
            if key not in ("title", "description", "input_source"):
                raise KeyError(key)
            problem = None if value is None and key == "input_source" else schema.text_problem(value)
            _check(problem and f"the {key} {problem}")
            setattr(self, key, value)
        self.changed.emit(Change(ChangeKind.SETTINGS))

    def set_band_pin(self, element: str, band: Band | str | None) -> None:
        """Pin ``element`` to ``Band.LOW`` or ``Band.HIGH`` (or their words), or unpin it with None.

        Parameters
        ----------
        element : str
            A capacitor's or inductor's name (``C1``, ``Q1.cmu``).
        band : Band, str or None
        """
        if band is None:
            self._band_pins.pop(element, None)
        else:
            _check(schema.band_problem(element, band))
            self._band_pins[element] = Band(band)
        self.changed.emit(Change(ChangeKind.SETTINGS))

    def set_target(self, key: str, text: str | None) -> None:
        """Set a target's text, or clear it with None or ''.

        Parameters
        ----------
        key : str
            One of :data:`TARGET_KEYS`.
        text : str or None
            The value's text: Hz for a corner (``"1M"``), V/V or dB for the gain.
        """
        if key not in TARGET_KEYS:
            raise KeyError(key)
        if text:
            _check(schema.target_problem(key, text))
            self._targets[key] = text
        else:
            self._targets.pop(key, None)
        self.changed.emit(Change(ChangeKind.SETTINGS))

    def replace_all(self, other: "Document") -> None:
        """Take every part, wire and setting of ``other`` (open, new, restore); one reset notice.

        Parameters
        ----------
        other : Document
            Not changed.
        """
        self._parts = dict(other._parts)
        self._lower = dict(other._lower)
        self._wires = dict(other._wires)
        self._next_wire = other._next_wire
        self.title, self.description = other.title, other.description
        self.input_source = other.input_source
        self._band_pins = dict(other._band_pins)
        self._targets = dict(other._targets)
        self.read_version = other.read_version
        self.changed.emit(Change(ChangeKind.RESET))

    def copy(self) -> "Document":
        """A copy that later edits of this document do not touch (parts and wires are immutable
        values, so the copy shares them); it has its own signals, with nothing connected."""
        twin = Document(self.title)
        twin.replace_all(self)
        return twin

    def finish_edit(self) -> None:
        """Announce that a user gesture is complete, so views may recompute."""
        self.edited.emit()


def _check(problem: str | None) -> None:
    if problem:
        raise ValueError(problem)
