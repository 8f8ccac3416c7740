"""The catalogue of part kinds: one entry per kind carries everything the rest needs.

An entry gives the pins and where they sit, the fields, how the part becomes network
elements, which net it names, how it is summarised and offered, and which symbol draws it.

Geometry is in scene units on a grid of :data:`GRID`; a part's pins sit on grid points
in its own frame (y grows downwards, as on screen), and :func:`pin_positions` places them
in the sheet after mirroring (x -> -x) and then rotating clockwise by the part's rotation.
Both the canvas (to draw and hit pins) and the netlister (to join pins into nets) read this
one table, so a symbol and its connections cannot disagree.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Callable

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
    mode : str or tuple of str
        For transistor blocks: the model mode(s) the field belongs to, or ``""`` (every mode).
    allow_negative : bool
        Whether a negative number is meaningful (a gain, a transconductance).
    knob : bool
        Whether the advisor may offer to change it (a temperature is a condition of use).
    """

    key: str
    label: str
    unit: str
    default: str = ""
    optional: bool = False
    choices: tuple = ()
    mode: str | tuple = ""
    allow_negative: bool = False
    knob: bool = True

    def applies(self, mode: str) -> bool:
        """Whether the field is used by a block in model mode ``mode``."""
        return not self.mode or mode == self.mode or (isinstance(self.mode, tuple) and mode in self.mode)

    @property
    def numeric(self) -> bool:
        """Whether the field holds a number (not a choice, a part name or a net name)."""
        return self.unit not in ("choice", "name", "net")


@dataclass(frozen=True)
class Offer:
    """One way the Parts panel offers a kind: its group, button title, field overrides, key."""

    group: str
    title: str
    params: MappingProxyType
    key: str = ""


PALETTE_GROUPS = ("Passive", "Sources", "Active", "Connections")
"""The Parts panel's groups, in order."""


@dataclass(frozen=True)
class PartKind:
    """A kind of part, with everything the rest of the program needs to know about it.

    Attributes
    ----------
    kind, title, prefix : str
        Key, name shown to the user, and the prefix of automatic part names.
    pins : Mapping[str, tuple]
        Pin name -> position (scene units) in the part's own frame.
    fields : tuple of Field
        Its editable parameters.
    build : callable or None
        ``build(circuit, name, params, net)`` adds the part's elements to a
        :class:`~bandsketch.engine.network.circuit.Circuit` (``net(pin)`` gives a pin's net);
        None for a part that marks the sheet but adds no element.
    joins : callable or None
        ``joins(params)`` -> the net name the part gives its pin (ground gives ``"0"``, a
        label its name), joining every pin so named; None for parts that name no net.
    summary : tuple of str
        Lines written beside the part on the sheet: ``{key}`` is the field's value with its
        unit, ``{key:bare}`` without; a line whose fields are unused or empty is left out.
    symbol : str
        Which symbol drawing the sheet uses (a key of the app's symbol table).
    offers : tuple of Offer
        How the Parts panel offers it.
    signal : bool
        Whether it is an independent source that can carry the input signal.
    bought : bool
        Whether its value is bought from an IEC 60063 series (resistors, capacitors, inductors).
    banded : bool
        Whether it can be pinned to a band (capacitors).
    named : bool
        Whether its name is written beside it on the sheet.
    inside : str
        The field whose text the symbol writes inside itself (a net label's name), or ``""``.
    """

    kind: str
    title: str
    prefix: str
    pins: MappingProxyType
    fields: tuple = field(default=())
    build: Callable | None = None
    joins: Callable | None = None
    summary: tuple = ()
    symbol: str = ""
    offers: tuple = ()
    signal: bool = False
    bought: bool = False
    banded: bool = False
    named: bool = True
    inside: str = ""

    def field(self, key: str) -> Field:
        """The field with this key (KeyError if the kind has none)."""
        for f in self.fields:
            if f.key == key:
                return f
        raise KeyError(f"{self.title} has no field {key!r}")

    def default_params(self) -> dict:
        """The texts a newly placed part of this kind starts with."""
        return {f.key: f.default for f in self.fields}

    def active_fields(self, params) -> tuple:
        """The fields that apply to a part with these texts (a block's chosen mode's and common ones)."""
        mode = params.get("mode", "")
        return tuple(f for f in self.fields if f.applies(mode))

    def given(self, params) -> dict:
        """The texts the part's elements are built from (its mode's fields; empty texts dropped)."""
        return {f.key: params[f.key] for f in self.active_fields(params) if params.get(f.key, "").strip()}


def _kind(kind, title, prefix, pins, fields=(), *, offers=(), **kw):
    offers = tuple(Offer(g, t, MappingProxyType(dict(p)), k) for g, t, p, k in offers)
    return PartKind(kind, title, prefix, MappingProxyType(dict(pins)), tuple(fields),
                    symbol=kw.pop("symbol", kind), offers=offers, **kw)


# Builders take the Circuit method as a selector (``lambda c: c.resistor``), not by name:
# the loading chain computes no attribute names.
def _two_terminal(method):
    def build(c, name, params, net):
        method(c)(name, net("a"), net("b"), params["value"])
    return build


def _controlled(method, key):
    def build(c, name, params, net):
        method(c)(name, net("p"), net("n"), net("cp"), net("cn"), params[key])
    return build


def _sensing(method, key):
    def build(c, name, params, net):
        method(c)(name, net("p"), net("n"), params["sensed"].strip(), params[key])
    return build


def _block(kind, method):
    # The block's builder method takes its pins and fields by the catalogue's own names.
    def build(c, name, params, net):
        pins = {pin: net(pin) for pin in KINDS[kind].pins}
        method(c)(name, **pins, **KINDS[kind].given(params))
    return build


def _label_net(params):
    return params.get("net", "").strip() or None


_TWO_TERMINAL = {"a": (0, -2 * GRID), "b": (0, 2 * GRID)}
_CONTROLLED = {
    "p": (GRID, -2 * GRID),
    "n": (GRID, 2 * GRID),
    "cp": (-2 * GRID, -GRID),
    "cn": (-2 * GRID, GRID),
}
_CURRENT_CONTROLLED = {"p": (0, -2 * GRID), "n": (0, 2 * GRID)}
_THREE_TERMINAL = {"in": (-2 * GRID, 0), "top": (GRID, -2 * GRID), "bottom": (GRID, 2 * GRID)}

_MODES = ("small_signal", "operating_point", "bias")
_TYPED_OR_SOLVED = ("operating_point", "bias")

_BJT_FIELDS = (
    Field("polarity", "Polarity", "choice", "npn", choices=("npn", "pnp")),
    Field("mode", "Model from", "choice", "small_signal", choices=_MODES),
    Field("gm", "gₘ", "S", "40m", mode="small_signal"),
    Field("rpi", "r_π", "Ω", "2k5", mode="small_signal"),
    Field("cpi", "C_π", "F", "10p", optional=True, mode="small_signal"),
    Field("ic", "I_C", "A", "1m", mode="operating_point"),
    Field("isat", "I_S", "A", "10f", mode="bias"),
    Field("beta", "β", "", "100", mode=_TYPED_OR_SOLVED),
    Field("beta_r", "β_R", "", "", optional=True, mode="bias"),
    Field("ft", "f_T", "Hz", "300M", optional=True, mode=_TYPED_OR_SOLVED),
    Field("tf", "τ_F", "s", "", optional=True, mode="bias"),
    Field("va", "V_A", "V", "", optional=True, mode=_TYPED_OR_SOLVED),
    Field("cjc0", "C_jc0", "F", "", optional=True, mode="bias"),
    Field("vjc", "φ_C", "V", "", optional=True, mode="bias"),
    Field("mjc", "m_C", "", "", optional=True, mode="bias"),
    Field("temp", "Temperature", "K", "300", mode=_TYPED_OR_SOLVED, knob=False),
    Field("ro", "r_o", "Ω", "", optional=True, mode="small_signal"),
    Field("rb", "r_b", "Ω", "", optional=True),
    Field("cmu", "C_μ", "F", "1p", optional=True),
    Field("ccs", "C_cs", "F", "", optional=True),
)

_MOS_FIELDS = (
    Field("polarity", "Polarity", "choice", "n", choices=("n", "p")),
    Field("mode", "Model from", "choice", "small_signal", choices=_MODES),
    Field("gm", "gₘ", "S", "5m", mode="small_signal"),
    Field("ro", "r_o", "Ω", "", optional=True, mode="small_signal"),
    Field("id", "I_D", "A", "1m", mode="operating_point"),
    Field("vov", "V_ov", "V", "200m", mode="operating_point"),
    Field("vth", "V_th", "V", "500m", mode="bias", allow_negative=True),
    Field("kp", "K_P", "A/V²", "2m", optional=True, mode="bias"),
    Field("kprime", "k′ = μC_ox", "A/V²", "", optional=True, mode="bias"),
    Field("w", "W", "m", "", optional=True, mode="bias"),
    Field("l", "L", "m", "", optional=True, mode="bias"),
    Field("cox", "C_ox", "F/m²", "", optional=True, mode="bias"),
    Field("cov", "C_ov", "F/m", "", optional=True, mode="bias"),
    Field("lam", "λ", "1/V", "", optional=True, mode=_TYPED_OR_SOLVED),
    Field("va", "V_A", "V", "", optional=True, mode="operating_point"),
    Field("gamma", "γ", "√V", "", optional=True, mode="bias"),
    Field("phi", "2φ_F", "V", "", optional=True, mode="bias"),
    Field("gmb", "g_mb", "S", "", optional=True),
    Field("cgs", "C_gs", "F", "1p", optional=True),
    Field("cgd", "C_gd", "F", "200f", optional=True),
    Field("cdb", "C_db", "F", "", optional=True),
    Field("csb", "C_sb", "F", "", optional=True),
)

_BJT_PINS = {"base": _THREE_TERMINAL["in"], "collector": _THREE_TERMINAL["top"],
             "emitter": _THREE_TERMINAL["bottom"]}
_MOS_PINS = {"gate": _THREE_TERMINAL["in"], "drain": _THREE_TERMINAL["top"],
             "source": _THREE_TERMINAL["bottom"]}

KINDS = MappingProxyType(
    {
        k.kind: k
        for k in (
            _kind("resistor", "Resistor", "R", _TWO_TERMINAL, [Field("value", "Resistance", "Ω", "10k")],
                  build=_two_terminal(lambda c: c.resistor), summary=("{value}",), bought=True,
                  offers=[("Passive", "Resistor", {}, "R")]),
            _kind("capacitor", "Capacitor", "C", _TWO_TERMINAL, [Field("value", "Capacitance", "F", "100n")],
                  build=_two_terminal(lambda c: c.capacitor), summary=("{value}",), bought=True, banded=True,
                  offers=[("Passive", "Capacitor", {}, "C")]),
            _kind("inductor", "Inductor", "L", _TWO_TERMINAL, [Field("value", "Inductance", "H", "10u")],
                  build=_two_terminal(lambda c: c.inductor), summary=("{value}",), bought=True,
                  offers=[("Passive", "Inductor", {}, "L")]),
            _kind("vsource", "Voltage source", "V", {"p": (0, -2 * GRID), "n": (0, 2 * GRID)},
                  [Field("dc", "DC value", "V", "0", allow_negative=True)],
                  build=lambda c, name, params, net: c.vsource(name, net("p"), net("n"),
                                                               dc=params.get("dc") or 0.0),
                  signal=True, offers=[("Sources", "Voltage source", {}, "V")]),
            _kind("isource", "Current source", "I", {"into": (0, -2 * GRID), "out_of": (0, 2 * GRID)},
                  [Field("dc", "DC value", "A", "0", allow_negative=True)],
                  build=lambda c, name, params, net: c.isource(name, net("into"), net("out_of"),
                                                               dc=params.get("dc") or 0.0),
                  signal=True, offers=[("Sources", "Current source", {}, "I")]),
            _kind("rail", "Supply rail", "VR", {"p": (0, 0)},
                  [Field("net", "Rail name", "net", "VCC"), Field("dc", "Voltage", "V", "12", allow_negative=True)],
                  build=lambda c, name, params, net: c.rail(_label_net(params) or name, net("p"), params["dc"]),
                  joins=_label_net, named=False, summary=("{net} {dc}",),
                  offers=[("Sources", "Supply rail", {}, "P")]),
            _kind("vccs", "Voltage-controlled current source", "G", _CONTROLLED,
                  [Field("gm", "gₘ", "S", "10m", allow_negative=True)],
                  build=_controlled(lambda c: c.vccs, "gm"), summary=("gm {gm}",),
                  offers=[("Sources", "V-controlled I", {}, "")]),
            _kind("vcvs", "Voltage-controlled voltage source", "E", _CONTROLLED,
                  [Field("gain", "Gain", "V/V", "10", allow_negative=True)],
                  build=_controlled(lambda c: c.vcvs, "gain"), summary=("×{gain:bare}",),
                  offers=[("Sources", "V-controlled V", {}, "")]),
            _kind("cccs", "Current-controlled current source", "F", _CURRENT_CONTROLLED,
                  [Field("sensed", "Sensed source", "name", "V1"),
                   Field("gain", "Gain", "A/A", "10", allow_negative=True)],
                  build=_sensing(lambda c: c.cccs, "gain"), summary=("×{gain:bare} · I({sensed})",),
                  offers=[("Sources", "I-controlled I", {}, "")]),
            _kind("ccvs", "Current-controlled voltage source", "H", _CURRENT_CONTROLLED,
                  [Field("sensed", "Sensed source", "name", "V1"),
                   Field("r", "Transresistance", "Ω", "1k", allow_negative=True)],
                  build=_sensing(lambda c: c.ccvs, "r"), summary=("{r} · I({sensed})",),
                  offers=[("Sources", "I-controlled V", {}, "")]),
            _kind("bjt", "Bipolar transistor", "Q", _BJT_PINS, _BJT_FIELDS, build=_block("bjt", lambda c: c.bjt),
                  summary=("gₘ {gm}", "rπ {rpi}", "IC {ic}", "β {beta}"),
                  offers=[("Active", "NPN transistor", {"polarity": "npn"}, "Q"),
                          ("Active", "PNP transistor", {"polarity": "pnp"}, "")]),
            _kind("mosfet", "MOS transistor", "M", _MOS_PINS, _MOS_FIELDS, build=_block("mosfet", lambda c: c.mosfet),
                  summary=("gₘ {gm}", "ro {ro}", "ID {id}", "Vov {vov}"),
                  offers=[("Active", "n-MOS transistor", {"polarity": "n"}, "M"),
                          ("Active", "p-MOS transistor", {"polarity": "p"}, "")]),
            _kind("opamp", "Op-amp (single pole)", "U",
                  {"minus": (-2 * GRID, -GRID), "plus": (-2 * GRID, GRID), "out": (2 * GRID, 0)},
                  [Field("a0", "A₀", "V/V", "100k"), Field("fu", "Unity-gain frequency", "Hz", "10M"),
                   Field("rout", "Output resistance", "Ω", "", optional=True),
                   Field("rin", "Input resistance", "Ω", "", optional=True)],
                  build=_block("opamp", lambda c: c.opamp), summary=("A₀ {a0:bare}", "fᵤ {fu}"),
                  offers=[("Active", "Op-amp", {}, "U")]),
            _kind("ground", "Ground", "GND", {"g": (0, 0)}, joins=lambda params: "0", named=False,
                  offers=[("Connections", "Ground", {}, "G")]),
            _kind("label", "Net label", "N", {"p": (0, 0)}, [Field("net", "Net name", "net", "out")],
                  joins=_label_net, named=False, inside="net", offers=[("Connections", "Net label", {}, "N")]),
            _kind("output", "Output probe", "OUT", {"p": (0, 0)},
                  offers=[("Connections", "Output probe", {}, "O")]),
        )
    }
)
"""Every part kind, by its key."""

ROTATIONS = (0, 90, 180, 270)
"""Allowed rotations, in degrees clockwise on screen."""


def transform_point(x: int, y: int, rotation: int, mirror: bool) -> tuple[int, int]:
    """Map a point of a part's own frame into the sheet's axes (before translation).

    Mirroring flips x first; rotation then turns clockwise on screen (y grows downwards).

    Parameters
    ----------
    x, y : int
        The point in the part's own frame, scene units.
    rotation : int
        Degrees clockwise: 0, 90, 180 or 270.
    mirror : bool
        Flipped left-to-right before rotating.
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
