"""Primitive network elements: the only things the nodal equations are built from.

Transistor and op-amp blocks expand into these (see :mod:`bandsketch.engine.network.devices`). Values are
floats in SI units. An element that belongs to a block carries the block's name in
``owner`` and is itself named ``<block>.<param>`` (``Q1.cpi``).
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class _TwoTerminal:
    """An element of one value between nodes ``a`` and ``b``."""

    name: str
    a: str
    b: str
    value: float
    owner: str | None = None

    @property
    def nodes(self):
        return (self.a, self.b)


class Resistor(_TwoTerminal):
    """Resistance ``value`` (Ω) between nodes ``a`` and ``b``."""


class Capacitor(_TwoTerminal):
    """Capacitance ``value`` (F) between nodes ``a`` and ``b``."""


class Inductor(_TwoTerminal):
    """Inductance ``value`` (H) between nodes ``a`` and ``b``; its current is a branch unknown."""


@dataclass(frozen=True)
class VSource:
    """Independent voltage source: v(p) − v(n) = ``dc`` (V) at the operating point; in small
    signal ``ac`` (V) when it is the input, else 0.

    Its branch current flows from ``p`` through the source to ``n``; current-controlled
    sources sense that current.
    """

    name: str
    p: str
    n: str
    ac: float = 1.0
    dc: float = 0.0
    owner: str | None = None

    @property
    def nodes(self):
        return (self.p, self.n)


class Rail(VSource):
    """A supply rail: node ``p`` held at ``dc`` (V) against ground ``n``; AC ground, never the input."""


@dataclass(frozen=True)
class ISource:
    """Independent current source pushing ``dc`` (A) into node ``into`` at the operating point;
    in small signal ``ac`` (A) when it is the input, else nothing."""

    name: str
    into: str
    out_of: str
    ac: float = 1.0
    dc: float = 0.0
    owner: str | None = None

    @property
    def nodes(self):
        return (self.into, self.out_of)


@dataclass(frozen=True)
class VCCS:
    """Current ``gm``·(v(cp) − v(cn)) (A, gm in S) flowing from ``p`` through it to ``n``."""

    name: str
    p: str
    n: str
    cp: str
    cn: str
    gm: float
    owner: str | None = None

    @property
    def nodes(self):
        return (self.p, self.n, self.cp, self.cn)


@dataclass(frozen=True)
class VCVS:
    """Voltage v(p) − v(n) = ``gain``·(v(cp) − v(cn)) (gain in V/V)."""

    name: str
    p: str
    n: str
    cp: str
    cn: str
    gain: float
    owner: str | None = None

    @property
    def nodes(self):
        return (self.p, self.n, self.cp, self.cn)


@dataclass(frozen=True)
class CCCS:
    """Current ``gain``·i(sensed) flowing from ``p`` through it to ``n`` (gain in A/A)."""

    name: str
    p: str
    n: str
    sensed: str
    gain: float
    owner: str | None = None

    @property
    def nodes(self):
        return (self.p, self.n)


@dataclass(frozen=True)
class CCVS:
    """Voltage v(p) − v(n) = ``r``·i(sensed) (r in Ω, i.e. V/A)."""

    name: str
    p: str
    n: str
    sensed: str
    r: float
    owner: str | None = None

    @property
    def nodes(self):
        return (self.p, self.n)


VOLTAGE_DEFINING = (VSource, VCVS, CCVS, Inductor)
"""Elements that fix a voltage at DC; a loop of them leaves the DC equations singular."""
