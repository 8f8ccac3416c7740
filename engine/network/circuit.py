"""The scripting model of a small-signal network: :class:`Circuit` and its builder methods."""

from __future__ import annotations

from types import MappingProxyType

from .devices import MODELS, Block, expand
from .elements import CCCS, CCVS, VCCS, VCVS, Capacitor, Inductor, ISource, Resistor, VSource
from ..core.errors import CircuitError
from ..core.values import parse_value

GROUND_NAMES = {"0", "gnd", "ground"}

BLOCK_KEYWORDS = MappingProxyType({
    "bjt": MappingProxyType({"small_signal": ("gm", "rpi", "ro", "cpi"),
                             "operating_point": ("ic", "beta", "va", "ft", "temp"),
                             "": ("rb", "cmu", "ccs")}),
    "mosfet": MappingProxyType({"small_signal": ("gm", "ro"),
                                "operating_point": ("id", "vov", "lam", "va"),
                                "": ("gmb", "cgs", "cgd", "cdb", "csb")}),
})
"""Block kind -> model mode -> the value keywords :meth:`Circuit.bjt` and :meth:`Circuit.mosfet`
take in that mode (``""``: in either). The part catalogue's fields carry the same keys and
modes (a test holds the two together)."""


def node_name(node) -> str:
    """Canonical node name: ``"0"`` for ground (``0``, ``gnd``, ``GND``, ``ground``)."""
    text = str(node).strip()
    if not text:
        raise CircuitError("a node name is empty; name every node")
    return "0" if text.lower() in GROUND_NAMES else text


class Circuit:
    """A small-signal linear network built by name.

    Parameters
    ----------
    title : str
        What the circuit is (shown in reports).

    Notes
    -----
    Values may be numbers (SI units) or texts the value parser reads ("4k7", "2.2n").
    Ground is ``"0"`` (``"gnd"`` is accepted). The first independent source added is the
    input unless :meth:`input` names another; :meth:`output` chooses the output node(s).
    """

    def __init__(self, title: str = "circuit") -> None:
        self.title = title
        self._elements: dict[str, object] = {}
        self._blocks: dict[str, Block] = {}
        self.input_name: str | None = None
        self.output_nodes: tuple[str, str] | None = None

    # -- reading -------------------------------------------------------------
    @property
    def elements(self):
        """Name -> primitive element (blocks expanded), in the order added."""
        return MappingProxyType(self._elements)

    @property
    def blocks(self):
        """Name -> resolved :class:`~bandsketch.engine.network.devices.Block` with its small-signal ``values``."""
        return MappingProxyType(self._blocks)

    def nodes(self) -> list[str]:
        """Every node name, ground first."""
        seen = {"0": None}
        for el in self._elements.values():
            for node in el.nodes:
                seen.setdefault(node, None)
        return list(seen)

    # -- building ------------------------------------------------------------
    def _add(self, el):
        _check_name(el.name)
        if el.name in self._elements or el.name in self._blocks:
            raise CircuitError(f"the name {el.name} is used twice; give each part its own name",
                               parts=(el.name,))
        self._elements[el.name] = el
        return el

    def _value(self, name, field, value, unit, **kw):
        return parse_value(value, unit=unit, part=name, field=field, **kw)

    def resistor(self, name, a, b, value):
        """Resistor of ``value`` Ω between nodes ``a`` and ``b``."""
        return self._add(Resistor(name, node_name(a), node_name(b), self._value(name, "value", value, "Ω")))

    def capacitor(self, name, a, b, value):
        """Capacitor of ``value`` F between nodes ``a`` and ``b``."""
        return self._add(Capacitor(name, node_name(a), node_name(b), self._value(name, "value", value, "F")))

    def inductor(self, name, a, b, value):
        """Inductor of ``value`` H between nodes ``a`` and ``b``."""
        return self._add(Inductor(name, node_name(a), node_name(b), self._value(name, "value", value, "H")))

    def vsource(self, name, p, n):
        """Independent voltage source (AC 1 V when it is the input, a short otherwise)."""
        el = self._add(VSource(name, node_name(p), node_name(n)))
        self.input_name = self.input_name or name
        return el

    def isource(self, name, into, out_of):
        """Independent current source pushing 1 A into ``into`` when it is the input."""
        el = self._add(ISource(name, node_name(into), node_name(out_of)))
        self.input_name = self.input_name or name
        return el

    def vccs(self, name, out_p, out_n, ctl_p, ctl_n, gm):
        """gm·(v(ctl_p) − v(ctl_n)) flowing from ``out_p`` through it to ``out_n``; gm in S."""
        return self._add(VCCS(name, node_name(out_p), node_name(out_n), node_name(ctl_p), node_name(ctl_n),
                              self._value(name, "gm", gm, "S", allow_negative=True, allow_zero=True)))

    def vcvs(self, name, out_p, out_n, ctl_p, ctl_n, gain):
        """v(out_p) − v(out_n) = gain·(v(ctl_p) − v(ctl_n)); gain in V/V."""
        return self._add(VCVS(name, node_name(out_p), node_name(out_n), node_name(ctl_p), node_name(ctl_n),
                              self._value(name, "gain", gain, "V/V", allow_negative=True, allow_zero=True)))

    def cccs(self, name, out_p, out_n, sensed_vsource, gain):
        """gain·i(sensed_vsource) flowing from ``out_p`` through it to ``out_n``; gain in A/A."""
        return self._add(CCCS(name, node_name(out_p), node_name(out_n), str(sensed_vsource),
                              self._value(name, "gain", gain, "A/A", allow_negative=True, allow_zero=True)))

    def ccvs(self, name, out_p, out_n, sensed_vsource, r):
        """v(out_p) − v(out_n) = r·i(sensed_vsource); r in Ω."""
        return self._add(CCVS(name, node_name(out_p), node_name(out_n), str(sensed_vsource),
                              self._value(name, "r", r, "Ω", allow_negative=True, allow_zero=True)))

    def _block(self, kind, name, pins, given):
        _check_name(name)
        if kind in BLOCK_KEYWORDS:
            _check_keywords(kind, name, given)
        if name in self._elements or name in self._blocks:
            raise CircuitError(f"the name {name} is used twice; give each part its own name", parts=(name,))
        values = MODELS[kind].resolve(name, {k: v for k, v in given.items() if v is not None})
        block = Block(kind, name, MappingProxyType({k: node_name(v) for k, v in pins.items()}),
                      MappingProxyType(values))
        for el in expand(block):
            self._add(el)
        self._blocks[name] = block
        return block

    def bjt(self, name, collector, base, emitter, substrate="0", **values):
        """Bipolar transistor (hybrid-π), NPN and PNP alike in small signal.

        Give small-signal values (``gm``, ``rpi``, optional ``ro``, ``rb``, ``cpi``, ``cmu``,
        ``ccs``) or an operating point (``ic``, ``beta``, optional ``va``, ``ft``, ``temp`` in
        K, with ``rb``, ``cmu``, ``ccs``). Returns the resolved block; its ``values`` report
        the derived g_m, r_π, r_o, C_π.
        """
        return self._block("bjt", name, {"collector": collector, "base": base, "emitter": emitter,
                                         "substrate": substrate}, values)

    def mosfet(self, name, drain, gate, source, bulk=None, **values):
        """MOS transistor (square-law small-signal model); bulk defaults to the source.

        Give ``gm`` (and optional ``ro``) or an operating point ``id`` and ``vov`` (with
        ``lam`` or ``va``); optional ``gmb``, ``cgs``, ``cgd``, ``cdb``, ``csb``.
        """
        return self._block("mosfet", name, {"drain": drain, "gate": gate, "source": source,
                                            "bulk": source if bulk is None else bulk}, values)

    def opamp(self, name, plus, minus, out, a0="100k", fu="10M", rout=None, rin=None):
        """Single-pole op-amp: A(s) = A₀ / (1 + s A₀ / (2π f_u)), with optional r_out, r_in (Ω)."""
        return self._block("opamp", name, {"plus": plus, "minus": minus, "out": out},
                           {"a0": a0, "fu": fu, "rout": rout, "rin": rin})

    def input(self, source_name: str) -> None:
        """Choose which independent source is the signal input."""
        self.input_name = source_name

    def output(self, p, n="0") -> None:
        """Choose the output: v(p) − v(n); ``n`` defaults to ground."""
        self.output_nodes = (node_name(p), node_name(n))

    def with_elements(self, replacements: dict) -> "Circuit":
        """A copy in which some primitive elements are replaced (same names), e.g. for what-if.

        Parameters
        ----------
        replacements : dict
            Name -> new primitive element.
        """
        other = Circuit(self.title)
        other._elements = {k: replacements.get(k, el) for k, el in self._elements.items()}
        other._blocks = dict(self._blocks)
        other.input_name, other.output_nodes = self.input_name, self.output_nodes
        return other


def _check_name(name) -> None:
    if not isinstance(name, str) or not name.strip():
        raise CircuitError(f"a part is given the name {name!r}; give every part a name of its own, such as R1")


def _check_keywords(kind: str, name: str, given: dict) -> None:
    """Refuse a keyword the block does not take, and values of both model modes at once."""
    modes = BLOCK_KEYWORDS[kind]
    known = {key for keys in modes.values() for key in keys}
    unknown = sorted(set(given) - known)
    if unknown:
        raise CircuitError(f"{name}: {kind}() takes no keyword {', '.join(map(repr, unknown))}; "
                           f"it takes {', '.join(sorted(known))}", parts=(name,))
    used = {mode: [k for k in keys if given.get(k) is not None] for mode, keys in modes.items() if mode}
    if all(used.values()):
        small, op = used["small_signal"], used["operating_point"]
        raise CircuitError(f"{name}: give small-signal values ({', '.join(small)}) or an operating point "
                           f"({', '.join(op)}), not both", parts=(name,))
