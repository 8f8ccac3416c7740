"""Checks that a circuit can be solved, before any solve; each problem names where it is."""

from __future__ import annotations

from collections import Counter, defaultdict

from ..core.graphs import Pieces, path
from .elements import CCCS, CCVS, VCCS, VCVS, VOLTAGE_DEFINING, ISource, Rail, VSource
from ..core.errors import CircuitError


def _shown(names, limit=6):
    names = sorted(set(names))
    more = len(names) - limit
    text = ", ".join(names[:limit])
    return text + (f" and {more} more" if more > 0 else "")


def _electrical_pairs(el):
    """Node pairs an element joins for current (the sensing pins of a VCCS/VCVS carry none)."""
    if isinstance(el, (VCCS, VCVS)):
        return [(el.p, el.n)]
    return [tuple(el.nodes[:2])]


def problems(circuit) -> list[CircuitError]:
    """Every problem that stops ``circuit`` from being analysed, most basic first.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit

    Returns
    -------
    list of CircuitError
        Empty when the circuit can be solved. Each error's ``parts`` and ``nodes`` say
        where the problem is.
    """
    els = list(circuit.elements.values())
    found: list[CircuitError] = []
    if not els:
        return [CircuitError("The circuit is empty: draw a signal source, the stage and an output.")]
    owner = {el.name: (el.owner or el.name) for el in els}

    # A rail is held against ground, but only a drawn ground (or a node named 0) says where 0 V is.
    if not any("0" in el.nodes for el in els if not isinstance(el, Rail)):
        found.append(CircuitError("There is no ground: connect a ground symbol to the circuit's reference node."))

    for el in els:
        if isinstance(el, (CCCS, CCVS)):
            sensed = circuit.elements.get(el.sensed)
            if not isinstance(sensed, VSource):
                found.append(CircuitError(
                    f"{el.name} senses the current of '{el.sensed}', which is not a voltage source of this "
                    "circuit: name an existing voltage source (a 0 V source can serve as an ammeter).",
                    parts=(el.name,)))

    sources = [el for el in els if isinstance(el, (VSource, ISource)) and not isinstance(el, Rail)]
    if not sources:
        found.append(CircuitError("There is no signal source: add a voltage or current source as the input."))
    elif circuit.input_name is None:
        found.append(CircuitError(
            f"There are several sources ({_shown(s.name for s in sources)}): choose which one is the "
            "signal input.", parts=[s.name for s in sources]))
    elif circuit.input_name not in {s.name for s in sources}:
        found.append(CircuitError(
            f"The input '{circuit.input_name}' is not an independent source; choose one of "
            f"{_shown(s.name for s in sources)} as the input.", parts=()))

    nodes = set(circuit.nodes())
    if circuit.output_nodes is None:
        found.append(CircuitError("No output is chosen: place an output probe on the node to observe."))
    else:
        p, n = circuit.output_nodes
        missing = [x for x in (p, n) if x not in nodes]
        if missing:
            found.append(CircuitError(f"The output node {_shown(missing)} is not in the circuit: "
                                      "put the output probe on a wired node.", nodes=missing))
        elif p == n:
            found.append(CircuitError(f"The output is taken across node {p} and itself: choose two different nodes.",
                                      nodes=(p,)))

    counts = Counter(node for el in els for node in el.nodes)
    first = {}
    for e in els:
        for node in e.nodes:
            first.setdefault(node, e)
    for node, count in counts.items():
        if node != "0" and count == 1:
            el = first[node]
            found.append(CircuitError(
                f"Node {node} has only one connection ({owner[el.name]}): wire it to the rest of the "
                f"circuit or remove {owner[el.name]}.", parts=(owner[el.name],), nodes=(node,)))

    joined = Pieces(nodes)
    touching = defaultdict(set)
    for el in els:
        for a, b in _electrical_pairs(el):
            joined.join(a, b)
        for node in el.nodes:
            touching[node].add(owner[el.name])
    for piece in joined.pieces():
        if "0" not in piece and "0" in nodes:
            parts = set().union(*(touching[x] for x in piece))
            found.append(CircuitError(
                f"Part of the circuit ({_shown(parts)}) is not connected to the rest: wire it in or "
                "delete it.", parts=parts, nodes=piece))

    # Floating nodes are judged on the d.c. equations themselves (solve.floating), where
    # controlled sources count; a graph picture would refuse a solvable follower.
    forest, held = {}, Pieces()
    for el in els:
        if not isinstance(el, VOLTAGE_DEFINING):
            continue
        a, b = el.nodes[:2]
        if a == b:
            found.append(CircuitError(f"{owner[el.name]} is shorted: both its ends are on node {a}.",
                                      parts=(owner[el.name],), nodes=(a,)))
        elif held.joined(a, b):
            loop_nodes = path(forest, a, b)
            loop = {forest[frozenset(pair)] for pair in zip(loop_nodes, loop_nodes[1:])} | {owner[el.name]}
            found.append(CircuitError(
                f"{_shown(loop)} form a loop of voltage sources and inductors, which fixes no current: "
                "put a resistance in the loop or remove one of them.", parts=loop, nodes=loop_nodes))
        else:
            held.join(a, b)
            forest[frozenset((a, b))] = owner[el.name]
    return found


def validate(circuit) -> None:
    """Raise the first of :func:`problems` as a :class:`~bandsketch.engine.core.errors.CircuitError`, if any.

    Parameters
    ----------
    circuit : bandsketch.engine.network.circuit.Circuit
    """
    found = problems(circuit)
    if found:
        raise found[0]
