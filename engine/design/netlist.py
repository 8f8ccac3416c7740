"""From a drawn design to a circuit: nets from wire geometry, parts to elements.

Connection rules: a wire joins all its own points; pins and wire points at the same place
join; a wire end or a pin lying on another wire's segment joins it (a T-junction); wires
that merely cross do not join. Net labels with the same name join their nets; a ground
symbol makes its net node ``0``. A net is named by its label, else by its first pin
(``R1.b``), so messages point at something the user can find on the sheet.
"""

from __future__ import annotations

from bisect import bisect_left, bisect_right
from collections import defaultdict
from dataclasses import dataclass
from types import MappingProxyType
from typing import Mapping

from ..network.circuit import Circuit
from ..network.devices import MODELS, block_mode
from .parts import KINDS
from ..core.errors import BadValueError, CircuitError
from ..network.validate import problems as circuit_problems

class _Union:
    def __init__(self):
        self.parent = {}

    def find(self, x):
        self.parent.setdefault(x, x)
        while self.parent[x] != x:
            self.parent[x] = self.parent[self.parent[x]]
            x = self.parent[x]
        return x

    def join(self, a, b):
        ra, rb = self.find(a), self.find(b)
        if ra != rb:
            self.parent[max(ra, rb)] = min(ra, rb)


def _on_segment(pt, a, b) -> bool:
    (x, y), (x1, y1), (x2, y2) = pt, a, b
    if (x2 - x1) * (y - y1) != (y2 - y1) * (x - x1):
        return False
    return min(x1, x2) <= x <= max(x1, x2) and min(y1, y2) <= y <= max(y1, y2)


@dataclass(frozen=True)
class Netlist:
    """Nets of a design.

    Attributes
    ----------
    pin_net : Mapping[tuple, str]
        (part name, pin name) -> net name.
    net_points : Mapping[str, tuple]
        Net name -> sheet points (scene units) of its pins, to mark a net on the canvas.
    wire_net : Mapping[int, str or None]
        Wire id -> net name (None for a wire that touches no pin).
    """

    pin_net: Mapping
    net_points: Mapping
    wire_net: Mapping


def build_netlist(doc) -> Netlist:
    """Join the pins and wires of ``doc`` into named nets.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    """
    uf = _Union()
    at_point = defaultdict(list)
    pin_pos = {}
    for part in doc.parts.values():
        for pin, pos in part.pins().items():
            key = ("pin", part.name, pin)
            pin_pos[key] = pos
            at_point[pos].append(key)
            uf.find(key)
    ends = []
    for wire in doc.wires.values():
        key = ("wire", wire.id)
        uf.find(key)
        for pt in wire.points:
            at_point[pt].append(key)
        ends += [(wire.points[0], key), (wire.points[-1], key)]
    for things in at_point.values():
        for other in things[1:]:
            uf.join(things[0], other)
    # T-junctions: a pin or a wire end on the inside of some wire's segment.
    # Each column and row keeps its points sorted along it, so a segment reads only the
    # points within its span (sheets repeat the same rows across many copies of a stage).
    touching = [(p, k) for k, p in pin_pos.items()] + ends
    by_x, by_y = defaultdict(list), defaultdict(list)
    for pos, key in touching:
        by_x[pos[0]].append((pos[1], pos, key))
        by_y[pos[1]].append((pos[0], pos, key))
    for line in (*by_x.values(), *by_y.values()):
        line.sort(key=lambda entry: entry[0])
    along = {id(line): [entry[0] for entry in line] for line in (*by_x.values(), *by_y.values())}
    for wire in doc.wires.values():
        wkey = ("wire", wire.id)
        for a, b in zip(wire.points, wire.points[1:]):
            if a[0] == b[0] or a[1] == b[1]:
                vertical = a[0] == b[0]
                line = (by_x if vertical else by_y).get(a[0] if vertical else a[1], [])
                lo, hi = sorted((a[1], b[1]) if vertical else (a[0], b[0]))
                keys = along.get(id(line), [])
                candidates = [(pos, key) for _, pos, key in line[bisect_left(keys, lo):bisect_right(keys, hi)]]
            else:
                candidates = touching
            for pos, key in candidates:
                if key != wkey and _on_segment(pos, a, b):
                    uf.join(wkey, key)
    labels = defaultdict(list)
    for part in doc.parts.values():
        joins = KINDS[part.kind].joins
        net = joins(part.params) if joins else None
        if net:  # a blank label names nothing, so it joins nothing
            labels[net].extend(("pin", part.name, pin) for pin in KINDS[part.kind].pins)
    for name, keys in labels.items():
        for k in keys[1:]:
            uf.join(keys[0], k)

    names = {}
    for name, keys in sorted(labels.items(), key=lambda kv: kv[0] != "0"):
        if name:
            names.setdefault(uf.find(keys[0]), name)
    order = {name: i for i, name in enumerate(doc.parts)}
    for key in sorted(pin_pos, key=lambda k: (order[k[1]], k[2])):
        part = doc.parts[key[1]]
        if KINDS[part.kind].build is not None:
            names.setdefault(uf.find(key), f"{key[1]}.{key[2]}")
    for key in pin_pos:
        names.setdefault(uf.find(key), f"{key[1]}.{key[2]}")
    pin_net = {(k[1], k[2]): names[uf.find(k)] for k in pin_pos}
    net_points = defaultdict(list)
    for k, pos in pin_pos.items():
        net_points[pin_net[(k[1], k[2])]].append(pos)
    wire_net = {w: names.get(uf.find(("wire", w))) for w in doc.wires}
    return Netlist(MappingProxyType(pin_net),
                   MappingProxyType({k: tuple(v) for k, v in net_points.items()}),
                   MappingProxyType(wire_net))


@dataclass(frozen=True)
class Problem:
    """Something that stops a drawn design from being analysed, and where it is.

    Attributes
    ----------
    message : str
        What is wrong and what to do.
    parts : tuple of str
        Names of the parts involved.
    points : tuple of (int, int)
        Sheet points (scene units) to mark, e.g. a dangling pin.
    """

    message: str
    parts: tuple = ()
    points: tuple = ()
    stops: bool = True
    """Whether it stops the analysis (False: a notice; the analysis runs and says it too)."""


def _circuit_and_errors(doc):
    nets = build_netlist(doc)
    c = Circuit(doc.title)
    errors = []
    for part in doc.parts.values():
        build = KINDS[part.kind].build
        if build is None:
            continue
        try:
            build(c, part.name, part.params, lambda pin, name=part.name: nets.pin_net[(name, pin)])
        except CircuitError as exc:
            errors.append(exc)
    sources = [p.name for p in doc.parts.values() if KINDS[p.kind].signal]
    if doc.input_source:
        c.input(doc.input_source)
    elif len(sources) != 1:
        c.input_name = None
    probes = [p for p in doc.parts.values() if p.kind == "output"]
    if len(probes) > 1:
        errors.append(CircuitError(f"There are {len(probes)} output probes ({', '.join(p.name for p in probes)}): "
                                   "keep one.", parts=[p.name for p in probes]))
    if probes:
        # With several probes the first stands in, so no check also says "no output is chosen".
        c.output(nets.pin_net[(probes[0].name, "p")])
    return c, nets, errors


@dataclass(frozen=True)
class DrawnDesign:
    """What a drawn design reads as, worked out once: its nets, its circuit and its problems.

    Attributes
    ----------
    netlist : Netlist
        The nets of the sheet.
    circuit : bandsketch.engine.network.circuit.Circuit or None
        The circuit it draws, validated; None when a problem stops the analysis.
    problems : tuple of Problem
        Every problem, as :func:`connectivity_problems` lists them.
    error : CircuitError or None
        The first problem that stops the analysis, as :func:`design_to_circuit` raises it.
    """

    netlist: Netlist
    circuit: Circuit | None
    problems: tuple
    error: CircuitError | None


def read_design(doc) -> DrawnDesign:
    """Build the nets and the circuit of ``doc`` once, and check them once.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document

    Returns
    -------
    DrawnDesign
        Bad values come first among its problems; the circuit checks run only once every
        value reads.
    """
    c, nets, errors = _circuit_and_errors(doc)
    if not any(isinstance(e, BadValueError) for e in errors):
        errors += circuit_problems(c)
    problems = []
    for exc in errors:
        points = tuple(pt for node in exc.nodes for pt in nets.net_points.get(node, ()))
        parts = tuple(p for p in exc.parts if p in doc.parts)
        problems.append(Problem(exc.message, parts, points))
    return DrawnDesign(nets, None if errors else c, tuple(problems + shorted_parts(doc, nets)),
                       errors[0] if errors else None)


def design_to_circuit(doc) -> Circuit:
    """The circuit a design draws, validated.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document

    Raises
    ------
    CircuitError
        The first problem found (a bad value, a dangling pin, no ground ...), naming the
        part or node.
    """
    drawn = read_design(doc)
    if drawn.error is not None:
        raise drawn.error
    return drawn.circuit


def connectivity_problems(doc) -> list[Problem]:
    """Every problem that stops ``doc`` from being analysed, with sheet points to mark.

    Bad values are reported first; the circuit checks run only once every value reads.

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    """
    return list(read_design(doc).problems)


def shorted_parts(doc, nets: Netlist | None = None) -> list[Problem]:
    """Parts whose pins all sit on one net: each does nothing in the circuit, which is
    almost never what was meant, so each is a notice (the analysis still runs).

    Parameters
    ----------
    doc : bandsketch.engine.design.document.Document
    nets : Netlist, optional
        The nets of ``doc``, if already built.
    """
    nets = nets or build_netlist(doc)
    out = []
    for part in doc.parts.values():
        pins = part.pins()
        if KINDS[part.kind].build is None or len(pins) < 2:
            continue
        on = {nets.pin_net[(part.name, pin)] for pin in pins}
        if len(on) == 1:
            which = "both pins" if len(pins) == 2 else "all its pins"
            out.append(Problem(f"{part.name} is shorted: {which} on net {on.pop()}; "
                               "move a pin to another net or delete the part.",
                               (part.name,), tuple(pins.values()), stops=False))
    return out


def derived_values(part) -> dict:
    """Every small-signal value of a placed transistor or op-amp block, in SI units.

    Parameters
    ----------
    part : bandsketch.engine.design.document.Part
        A part of kind ``"bjt"``, ``"mosfet"`` or ``"opamp"``.

    Returns
    -------
    dict
        Value key -> float (``gm`` in S, ``rpi`` in Ω, ``cpi`` in F ...), as
        :func:`bjt_values`, :func:`mosfet_values` or :func:`opamp_values` give them.

    Raises
    ------
    BadValueError
        A field the mode uses does not hold a usable value; the message names part and field.
    """
    given, model = KINDS[part.kind].given(part.params), MODELS[part.kind]
    if model.large is not None and block_mode(part.kind, given) == "bias":
        # Biased from the sheet: its values come from the operating point; here only its fields are read.
        model.large(part.name, given)
        return {}
    return model.resolve(part.name, given)
