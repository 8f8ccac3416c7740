"""The catalogue of part kinds: their pins, where the pins sit, and the fields they take.

Geometry is in scene units on a grid of :data:`GRID`; a part's pins sit on grid points
in its own frame (y grows downwards, as on screen), and :func:`pin_positions` places them
in the sheet after mirroring (x -> -x) and then rotating clockwise by the part's rotation.
Both the canvas (to draw and hit pins) and the netlister (to join pins into nets) read this
one table, so a symbol and its connections cannot disagree.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from types import MappingProxyType

GRID = 20
"""Grid pitch of the sheet, in scene units; every pin sits on a multiple of it."""


@dataclass(frozen=True)
class Field:
    """One editable parameter of a part kind.

    Parameters
    ----------
    key : str
        Key in the part's ``params`` mapping.
    label : str
        Name shown to the user (may use Unicode subscripts).
    unit : str
        SI unit of the value ("Ω", "F", "H", "S", "V/V", "A/A", "A", "V", "Hz", "K", "1/V",
        "" for a plain number); ``"choice"`` fields hold one of ``choices``; ``"name"`` fields
        hold the name of another part.
    default : str
        Text a new part starts with; ``""`` means "absent" (an optional element).
    optional : bool
        Whether an empty text is allowed (the element is then left out).
    choices : tuple of str
        Allowed texts of a ``"choice"`` field.
    mode : str
        For transistor blocks: ``"small_signal"``, ``"operating_point"`` or ``""`` (both).
    allow_negative : bool
        Whether a negative number is meaningful (a gain, a transconductance).
    """

    key: str
    label: str
    unit: str
    default: str = ""
    optional: bool = False
    choices: tuple = ()
    mode: str = ""
    allow_negative: bool = False


@dataclass(frozen=True)
class PartKind:
    """A kind of part: its pins (name -> position in its own frame) and its fields."""

    kind: str
    title: str
    prefix: str
    pins: MappingProxyType
    fields: tuple = field(default=())

    def field(self, key: str) -> Field:
        """The field with this key (KeyError if the kind has none)."""
        for f in self.fields:
            if f.key == key:
                return f
        raise KeyError(f"{self.title} has no field {key!r}")

    def default_params(self) -> dict:
        """The texts a newly placed part of this kind starts with."""
        return {f.key: f.default for f in self.fields}


def _kind(kind, title, prefix, pins, fields=()):
    return PartKind(kind, title, prefix, MappingProxyType(dict(pins)), tuple(fields))


_TWO_TERMINAL = {"a": (0, -2 * GRID), "b": (0, 2 * GRID)}
_CONTROLLED = {
    "p": (GRID, -2 * GRID),
    "n": (GRID, 2 * GRID),
    "cp": (-2 * GRID, -GRID),
    "cn": (-2 * GRID, GRID),
}
_CURRENT_CONTROLLED = {"p": (0, -2 * GRID), "n": (0, 2 * GRID)}
_THREE_TERMINAL = {"in": (-2 * GRID, 0), "top": (GRID, -2 * GRID), "bottom": (GRID, 2 * GRID)}

_BJT_FIELDS = (
    Field("polarity", "Polarity", "choice", "npn", choices=("npn", "pnp")),
    Field("mode", "Model from", "choice", "small_signal", choices=("small_signal", "operating_point")),
    Field("gm", "gₘ", "S", "40m", mode="small_signal"),
    Field("rpi", "r_π", "Ω", "2k5", mode="small_signal"),
    Field("cpi", "C_π", "F", "10p", optional=True, mode="small_signal"),
    Field("ic", "I_C", "A", "1m", mode="operating_point"),
    Field("beta", "β", "", "100", mode="operating_point"),
    Field("ft", "f_T", "Hz", "300M", optional=True, mode="operating_point"),
    Field("va", "V_A", "V", "", optional=True, mode="operating_point"),
    Field("temp", "Temperature", "K", "300", mode="operating_point"),
    Field("ro", "r_o", "Ω", "", optional=True, mode="small_signal"),
    Field("rb", "r_b", "Ω", "", optional=True),
    Field("cmu", "C_μ", "F", "1p", optional=True),
    Field("ccs", "C_cs", "F", "", optional=True),
)

_MOS_FIELDS = (
    Field("polarity", "Polarity", "choice", "n", choices=("n", "p")),
    Field("mode", "Model from", "choice", "small_signal", choices=("small_signal", "operating_point")),
    Field("gm", "gₘ", "S", "5m", mode="small_signal"),
    Field("ro", "r_o", "Ω", "", optional=True, mode="small_signal"),
    Field("id", "I_D", "A", "1m", mode="operating_point"),
    Field("vov", "V_ov", "V", "200m", mode="operating_point"),
    Field("lam", "λ", "1/V", "", optional=True, mode="operating_point"),
    Field("va", "V_A", "V", "", optional=True, mode="operating_point"),
    Field("gmb", "g_mb", "S", "", optional=True),
    Field("cgs", "C_gs", "F", "1p", optional=True),
    Field("cgd", "C_gd", "F", "200f", optional=True),
    Field("cdb", "C_db", "F", "", optional=True),
    Field("csb", "C_sb", "F", "", optional=True),
)

KINDS = MappingProxyType(
    {
        k.kind: k
        for k in (
            _kind("resistor", "Resistor", "R", _TWO_TERMINAL, [Field("value", "Resistance", "Ω", "10k")]),
            _kind("capacitor", "Capacitor", "C", _TWO_TERMINAL, [Field("value", "Capacitance", "F", "100n")]),
            _kind("inductor", "Inductor", "L", _TWO_TERMINAL, [Field("value", "Inductance", "H", "10u")]),
            _kind("vsource", "Voltage source", "V", {"p": (0, -2 * GRID), "n": (0, 2 * GRID)}),
            _kind("isource", "Current source", "I", {"into": (0, -2 * GRID), "out_of": (0, 2 * GRID)}),
            _kind("vccs", "Voltage-controlled current source", "G", _CONTROLLED,
                  [Field("gm", "gₘ", "S", "10m", allow_negative=True)]),
            _kind("vcvs", "Voltage-controlled voltage source", "E", _CONTROLLED,
                  [Field("gain", "Gain", "V/V", "10", allow_negative=True)]),
            _kind("cccs", "Current-controlled current source", "F", _CURRENT_CONTROLLED,
                  [Field("sensed", "Sensed source", "name", "V1"),
                   Field("gain", "Gain", "A/A", "10", allow_negative=True)]),
            _kind("ccvs", "Current-controlled voltage source", "H", _CURRENT_CONTROLLED,
                  [Field("sensed", "Sensed source", "name", "V1"),
                   Field("r", "Transresistance", "Ω", "1k", allow_negative=True)]),
            _kind("bjt", "Bipolar transistor", "Q",
                  {"base": _THREE_TERMINAL["in"], "collector": _THREE_TERMINAL["top"],
                   "emitter": _THREE_TERMINAL["bottom"]}, _BJT_FIELDS),
            _kind("mosfet", "MOS transistor", "M",
                  {"gate": _THREE_TERMINAL["in"], "drain": _THREE_TERMINAL["top"],
                   "source": _THREE_TERMINAL["bottom"]}, _MOS_FIELDS),
            _kind("opamp", "Op-amp (single pole)", "U",
                  {"minus": (-2 * GRID, -GRID), "plus": (-2 * GRID, GRID), "out": (2 * GRID, 0)},
                  [Field("a0", "A₀", "V/V", "100k"), Field("fu", "Unity-gain frequency", "Hz", "10M"),
                   Field("rout", "Output resistance", "Ω", "", optional=True),
                   Field("rin", "Input resistance", "Ω", "", optional=True)]),
            _kind("ground", "Ground", "GND", {"g": (0, 0)}),
            _kind("label", "Net label", "N", {"p": (0, 0)}, [Field("net", "Net name", "net", "out")]),
            _kind("output", "Output probe", "OUT", {"p": (0, 0)}),
        )
    }
)
"""Every part kind, by its key."""

ROTATIONS = (0, 90, 180, 270)
"""Allowed rotations, in degrees clockwise on screen."""


def transform_point(x: int, y: int, rotation: int, mirror: bool) -> tuple[int, int]:
    """Map a point of a part's own frame into the sheet's axes (before translation).

    Mirroring flips x first; rotation then turns clockwise on screen (y grows downwards).
    """
    if mirror:
        x = -x
    if rotation == 0:
        return x, y
    if rotation == 90:
        return -y, x
    if rotation == 180:
        return -x, -y
    if rotation == 270:
        return y, -x
    raise ValueError(f"rotation must be one of {ROTATIONS}, not {rotation!r}")


def pin_positions(kind: str, x: int, y: int, rotation: int = 0, mirror: bool = False) -> dict:
    """Sheet positions of a part's pins.

    Parameters
    ----------
    kind : str
        Key into :data:`KINDS`.
    x, y : int
        The part's origin on the sheet, in scene units.
    rotation : int
        Degrees clockwise, one of :data:`ROTATIONS`.
    mirror : bool
        Whether the part is flipped left-to-right before rotating.

    Returns
    -------
    dict
        Pin name -> (x, y) in scene units.
    """
    out = {}
    for pin, (px, py) in KINDS[kind].pins.items():
        dx, dy = transform_point(px, py, rotation, mirror)
        out[pin] = (x + dx, y + dy)
    return out
