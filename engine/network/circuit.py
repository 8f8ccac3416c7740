"""The scripting model of a small-signal network: :class:`Circuit` and its builder methods."""

from __future__ import annotations

from types import MappingProxyType

from dataclasses import dataclass

from .devices import MODELS, Block, block_mode, expand
from .elements import CCCS, CCVS, VCCS, VCVS, Capacitor, Inductor, ISource, Rail, Resistor, VSource
from ..core.errors import CircuitError
from ..core.values import parse_value

GROUND_NAMES = {"0", "gnd", "ground"}

BLOCK_KEYWORDS = MappingProxyType({
    "bjt": MappingProxyType({"small_signal": ("gm", "rpi", "ro", "cpi"),
                             "operating_point": ("ic", "beta", "va", "ft", "temp"),
                             "bias": ("isat", "beta", "va", "beta_r", "ft", "tf", "cjc0", "vjc", "mjc", "temp"),
                             "": ("rb", "cmu", "ccs", "polarity", "mode")}),
    "mosfet": MappingProxyType({"small_signal": ("gm", "ro"),
                                "operating_point": ("id", "vov", "lam", "va"),
                                "bias": ("vth", "kp", "kprime", "w", "l", "cox", "cov", "lam", "gamma", "phi"),
                                "": ("gmb", "cgs", "cgd", "cdb", "csb", "polarity", "mode")}),
})
"""Block kind -> model mode -> the value keywords :meth:`Circuit.bjt` and :meth:`Circuit.mosfet`
take in that mode (``""``: in either). The part catalogue's fields carry the same keys and
modes (a test holds the two together)."""


@dataclass(frozen=True)
class LargeBlock:
    """A transistor block biased from its circuit.

    Attributes
    ----------
    kind, name : str
        ``"bjt"`` or ``"mosfet"``, and the block's name.
    pins : Mapping[str, str]
        Pin -> node of the nonlinear core (a BJT's base is the internal base when r_b > 0).
    model : LargeBjt or LargeMos
        The large-signal model (:mod:`bandsketch.engine.network.devices`).
    """

    kind: str
    name: str
    pins: MappingProxyType
    model: object


def _node_name(node) -> str:
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
        self._large: dict[str, LargeBlock] = {}
        self._expanded: dict[str, tuple] = {}
        self._point = None
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

    @property
    def large_blocks(self):
        """Name -> :class:`LargeBlock` of every block biased from the circuit."""
        return MappingProxyType(self._large)

    @property
    def operating_point(self):
        """The solved DC operating point whose small-signal values the blocks hold, or None.

        None also while a block biased from the circuit still holds its provisional values
        (see :func:`bandsketch.engine.solve.dcop.operating_point`, which solves and installs).
        """
        return self._point

    def dc_elements(self) -> list:
        """The elements of the DC network: all but the small-signal stand-ins of biased blocks."""
        skip = {n for names in self._expanded.values() for n in names}
        return [el for name, el in self._elements.items() if name not in skip]

    def install_bias(self, point, values: dict) -> None:
        """Put the small-signal values of a solved operating point into the biased blocks.

        Parameters
        ----------
        point : OperatingPoint
            The solved point (kept as :attr:`operating_point`).
        values : dict
            Block name -> small-signal values (SI units) at that point.
        """
        for name, vals in values.items():
            self._expand_large(self._large[name], vals)
        self._point = point

    def _expand_large(self, large: LargeBlock, values: dict) -> None:
        for old in self._expanded.get(large.name, ()):
            del self._elements[old]
        block = Block(large.kind, large.name, large.pins, MappingProxyType(dict(values)))
        # r_b is already in the DC network, in front of the core's internal base.
        els = expand(Block(large.kind, large.name, large.pins, MappingProxyType({**values, "rb": 0.0})
                           if "rb" in values else block.values))
        for el in els:
            self._add(el)
        self._expanded[large.name] = tuple(el.name for el in els)
        self._blocks[large.name] = block

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
        self._point = None
        if el.name in self._elements or el.name in self._blocks:
            raise CircuitError(f"the name {el.name} is used twice; give each part its own name",
                               parts=(el.name,))
        self._elements[el.name] = el
        return el

    def _value(self, name, field, value, unit, **kw):
        return parse_value(value, unit=unit, part=name, field=field, **kw)

    def resistor(self, name, a, b, value):
        """Resistor of ``value`` Ω between nodes ``a`` and ``b``.

        Parameters
        ----------
        name : str
            Unique element name (``R1``).
        a, b : str or int
            Node names; ``0`` or ``"0"`` is ground.
        value : float or str
            Resistance, Ω: a number or a text such as ``"4k7"``.
        """
        return self._add(Resistor(name, _node_name(a), _node_name(b), self._value(name, "value", value, "Ω")))

    def capacitor(self, name, a, b, value):
        """Capacitor of ``value`` F between nodes ``a`` and ``b``.

        Parameters
        ----------
        name, a, b
            As for :meth:`resistor`.
        value : float or str
            F (``"2n2"``).
        """
        return self._add(Capacitor(name, _node_name(a), _node_name(b), self._value(name, "value", value, "F")))

    def inductor(self, name, a, b, value):
        """Inductor of ``value`` H between nodes ``a`` and ``b``.

        Parameters
        ----------
        name, a, b, value
            As for :meth:`capacitor`, the value in H (``"10u"``).
        """
        return self._add(Inductor(name, _node_name(a), _node_name(b), self._value(name, "value", value, "H")))

    def vsource(self, name, p, n, dc=0.0, ac=1.0):
        """Independent voltage source: ``dc`` V at the operating point, ``ac`` V when it is
        the input (a short in small signal otherwise).

        Parameters
        ----------
        name : str
            Unique element name (``R1``).
        p, n : str or int
            Positive and negative nodes.
        dc : float or str
            V at the operating point.
        ac : float or str
            V of the small signal when it is the input.
        """
        return self._independent(VSource, name, p, n, dc, ac, "V")

    def isource(self, name, into, out_of, dc=0.0, ac=1.0):
        """Independent current source pushing ``dc`` A into ``into`` at the operating point and
        ``ac`` A when it is the input (an open in small signal otherwise).

        Parameters
        ----------
        into, out_of : str or int
            The node the current is pushed into and the node it leaves.
        name, dc, ac
            As for :meth:`vsource`, the values in A.
        """
        return self._independent(ISource, name, into, out_of, dc, ac, "A")

    def _independent(self, kind, name, a, b, dc, ac, unit):
        # The first independent source added is the input unless input() names another.
        el = self._add(kind(name, _node_name(a), _node_name(b),
                            self._value(name, "ac", ac, unit, allow_negative=True, allow_zero=True),
                            self._value(name, "dc", dc, unit, allow_negative=True, allow_zero=True)))
        self.input_name = self.input_name or name
        return el

    def rail(self, name, node, dc):
        """Supply rail ``name`` holding ``node`` at ``dc`` V against ground; AC ground.

        Rails of the same name are one rail: adding it again on the same node at the same
        voltage returns the rail already there. A rail is never the signal input.

        Parameters
        ----------
        name : str
            Unique element name (``R1``).
        node : str or int
            The node it holds.
        dc : float or str
            V against ground.
        """
        node, value = _node_name(node), self._value(name, "dc", dc, "V", allow_negative=True, allow_zero=True)
        old = self._elements.get(name)
        if isinstance(old, Rail) and old.p == node and old.dc == value:
            return old
        if isinstance(old, Rail):
            raise CircuitError(f"The rail {name} is given {old.dc:g} V and {value:g} V: give every {name} "
                               "rail the same voltage, or name them differently.", parts=(name,))
        return self._add(Rail(name, node, "0", 0.0, value))

    def vccs(self, name, out_p, out_n, ctl_p, ctl_n, gm):
        """gm·(v(ctl_p) − v(ctl_n)) flowing from ``out_p`` through it to ``out_n``; gm in S.

        Parameters
        ----------
        name : str
            Unique element name (``R1``).
        out_p, out_n : str or int
            Output nodes.
        ctl_p, ctl_n : str or int
            Controlling nodes.
        gm : float or str
            Transconductance, S.
        """
        return self._add(VCCS(name, _node_name(out_p), _node_name(out_n), _node_name(ctl_p), _node_name(ctl_n),
                              self._value(name, "gm", gm, "S", allow_negative=True, allow_zero=True)))

    def vcvs(self, name, out_p, out_n, ctl_p, ctl_n, gain):
        """v(out_p) − v(out_n) = gain·(v(ctl_p) − v(ctl_n)); gain in V/V.

        Parameters
        ----------
        name, out_p, out_n, ctl_p, ctl_n
            As for :meth:`vccs`.
        gain : float or str
            V/V.
        """
        return self._add(VCVS(name, _node_name(out_p), _node_name(out_n), _node_name(ctl_p), _node_name(ctl_n),
                              self._value(name, "gain", gain, "V/V", allow_negative=True, allow_zero=True)))

    def cccs(self, name, out_p, out_n, sensed_vsource, gain):
        """gain·i(sensed_vsource) flowing from ``out_p`` through it to ``out_n``; gain in A/A.

        Parameters
        ----------
        name, out_p, out_n
            As for :meth:`vccs`.
        sensed_vsource : str
            The voltage source whose current controls it.
        gain : float or str
            A/A.
        """
        return self._add(CCCS(name, _node_name(out_p), _node_name(out_n), str(sensed_vsource),
                              self._value(name, "gain", gain, "A/A", allow_negative=True, allow_zero=True)))

    def ccvs(self, name, out_p, out_n, sensed_vsource, r):
        """v(out_p) − v(out_n) = r·i(sensed_vsource); r in Ω.

        Parameters
        ----------
        name, out_p, out_n, sensed_vsource
            As for :meth:`cccs`.
        r : float or str
            Transresistance, Ω.
        """
        return self._add(CCVS(name, _node_name(out_p), _node_name(out_n), str(sensed_vsource),
                              self._value(name, "r", r, "Ω", allow_negative=True, allow_zero=True)))

    def _block(self, kind, name, pins, given):
        _check_name(name)
        if kind in BLOCK_KEYWORDS:
            _check_keywords(kind, name, given)
        if name in self._elements or name in self._blocks:
            raise CircuitError(f"the name {name} is used twice; give each part its own name", parts=(name,))
        given = {k: v for k, v in given.items() if v is not None}
        pins = {k: _node_name(v) for k, v in pins.items()}
        model = MODELS[kind]
        if model.large is not None and block_mode(kind, given) == "bias":
            return self._large_block(kind, name, pins, model.large(name, given))
        block = Block(kind, name, MappingProxyType(pins), MappingProxyType(model.resolve(name, given)))
        for el in expand(block):
            self._add(el)
        self._blocks[name] = block
        return block

    def _large_block(self, kind, name, pins, large):
        rb = getattr(large, "rb", 0.0)
        if rb > 0:
            # r_b is part of the DC network; the nonlinear core sits on the internal base.
            self._add(Resistor(f"{name}.rb", pins["base"], f"{name}.bi", rb, name))
            pins["base"] = f"{name}.bi"
        block = LargeBlock(kind, name, MappingProxyType(pins), large)
        self._large[name] = block
        # Provisional values at a nominal point give the block its elements (so the checks
        # see its connections); every analysis replaces them by the solved point's.
        self._expand_large(block, large.small_signal(name, large.nominal()))
        self._point = None
        return self._blocks[name]

    def bjt(self, name, collector, base, emitter, substrate="0", **values):
        """Bipolar transistor (hybrid-π in small signal).

        Give small-signal values (``gm``, ``rpi``, optional ``ro``, ``rb``, ``cpi``, ``cmu``,
        ``ccs``), or an operating point (``ic``, ``beta``, optional ``va``, ``ft``, ``temp`` in
        K, with ``rb``, ``cmu``, ``ccs``), or, to bias it from the circuit, the large-signal
        model: ``isat`` (A), ``beta``, optional ``va`` (V), ``beta_r``, ``ft`` (Hz) or ``tf``
        (s), ``cjc0`` (F), ``vjc`` (V), ``mjc``, ``temp`` (K), ``polarity`` ("npn" or "pnp").
        Returns the block; its ``values`` report g_m, r_π, r_o, C_π (for a block biased from
        the circuit, once an analysis or :func:`operating_point` has solved the bias).

        Parameters
        ----------
        name : str
            Unique element name (``R1``).
        collector, base, emitter : str or int
            Terminal nodes.
        substrate : str or int
            The node C_cs returns to; ground by default.
        **values
            Field values, SI units as listed above (numbers or texts).
        """
        return self._block("bjt", name, {"collector": collector, "base": base, "emitter": emitter,
                                         "substrate": substrate}, values)

    def mosfet(self, name, drain, gate, source, bulk=None, **values):
        """MOS transistor (square-law small-signal model); bulk defaults to the source.

        Give ``gm`` (and optional ``ro``) or an operating point ``id`` and ``vov`` (with
        ``lam`` or ``va``), or, to bias it from the circuit, the square-law model: ``vth``
        (V), ``kp`` (A/V²) or ``kprime`` (k′ = μC_ox, A/V²) with ``w`` and ``l`` (m),
        optional ``lam`` (1/V), ``gamma`` (√V), ``phi`` (2φ_F, V), ``polarity`` ("n" or "p"),
        and ``cox`` (F/m²) with ``w`` and ``l`` for C_gs and C_gd from the gate by region
        (Meyer), with an optional overlap ``cov`` (F/m); optional ``gmb``, ``cgs``, ``cgd``,
        ``cdb``, ``csb``.

        Parameters
        ----------
        name : str
            Unique element name (``R1``).
        drain, gate, source : str or int
            Terminal nodes.
        bulk : str or int, optional
            The bulk node; the source by default.
        **values
            Field values, SI units as listed above (numbers or texts).
        """
        return self._block("mosfet", name, {"drain": drain, "gate": gate, "source": source,
                                            "bulk": source if bulk is None else bulk}, values)

    def opamp(self, name, plus, minus, out, a0="100k", fu="10M", rout=None, rin=None):
        """Single-pole op-amp: A(s) = A₀ / (1 + s A₀ / (2π f_u)), with optional r_out, r_in (Ω).

        Parameters
        ----------
        name : str
            Unique element name (``R1``).
        plus, minus, out : str or int
            Non-inverting input, inverting input and output nodes.
        a0 : float or str
            Open-loop d.c. gain A₀, V/V.
        fu : float or str
            Unity-gain frequency f_u, Hz.
        rout : float or str, optional
            Output resistance, Ω (0 when absent).
        rin : float or str, optional
            Input resistance between the inputs, Ω (infinite when absent).
        """
        return self._block("opamp", name, {"plus": plus, "minus": minus, "out": out},
                           {"a0": a0, "fu": fu, "rout": rout, "rin": rin})

    def input(self, source_name: str) -> None:
        """Choose which independent source is the signal input.

        Parameters
        ----------
        source_name : str
            An independent voltage or current source of the circuit.
        """
        self.input_name = source_name

    def output(self, p, n="0") -> None:
        """Choose the output: v(p) − v(n); ``n`` defaults to ground.

        Parameters
        ----------
        p : str or int
            The output node.
        n : str or int
            The reference node; ground by default.
        """
        self.output_nodes = (_node_name(p), _node_name(n))

    def with_elements(self, replacements: dict, *, rebias: bool = False) -> "Circuit":
        """A copy in which some primitive elements are replaced (same names), e.g. for what-if.

        Parameters
        ----------
        replacements : dict
            Name -> new primitive element.
        rebias : bool
            False: blocks biased from the circuit keep the small-signal values of the operating
            point they hold (a what-if on the small-signal network, or on a derived value such as
            g_m). True: the copy has no operating point, so the next analysis solves the bias
            of the changed DC network again (a changed bias resistor moves g_m).
        """
        other = Circuit(self.title)
        other._elements = {k: replacements.get(k, el) for k, el in self._elements.items()}
        other._blocks = dict(self._blocks)
        other._large, other._expanded = dict(self._large), dict(self._expanded)
        other._point = None if rebias else self._point
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
