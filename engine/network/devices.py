"""Transistor and op-amp blocks: from the user's values to small-signal primitives.

A block is given either small-signal values or an operating point; :func:`bjt_values`,
:func:`mosfet_values` and :func:`opamp_values` resolve either into the full set of
small-signal values (SI units), and :func:`expand` turns a resolved block into primitive
elements wired as the usual hybrid-π and square-law small-signal models are drawn.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import MappingProxyType
from typing import Callable

from .elements import VCCS, VCVS, Capacitor, Resistor
from ..core.errors import BadValueError
from ..core.values import parse_value

BOLTZMANN = 1.380649e-23
"""Boltzmann constant k, J/K (exact in the SI since 2019; CODATA 2018)."""
ELEMENTARY_CHARGE = 1.602176634e-19
"""Elementary charge q, C (exact in the SI since 2019; CODATA 2018)."""


def thermal_voltage(temperature: float) -> float:
    """Thermal voltage V_T = kT/q in volts at ``temperature`` in kelvin."""
    return BOLTZMANN * temperature / ELEMENTARY_CHARGE


@dataclass(frozen=True)
class Block:
    """A resolved transistor or op-amp block.

    Parameters
    ----------
    kind : str
        ``"bjt"``, ``"mosfet"`` or ``"opamp"``.
    name : str
        The block's name (``Q1``).
    pins : Mapping[str, str]
        Pin name -> node (``{"collector": "c", "base": "b", ...}``).
    values : Mapping[str, float]
        Every small-signal value in SI units (``gm`` in S, ``rpi`` in Ω, ``cpi`` in F ...);
        absent elements are 0 (capacitances, r_b, g_mb) or ``math.inf`` (r_o, r_in).
    """

    kind: str
    name: str
    pins: MappingProxyType
    values: MappingProxyType


def _get(block, given, key, unit, *, required=False, zero=False, negative=False):
    text = given.get(key)
    if text is None or (isinstance(text, str) and not text.strip()):
        if required:
            raise BadValueError(f"{block} {key}: a value is needed", part=block, field=key, text="")
        return None
    return parse_value(text, unit=unit, part=block, field=key, allow_zero=zero, allow_negative=negative)


def _need_positive_result(block, key, value, why):
    if not (value > 0 and math.isfinite(value)):
        raise BadValueError(f"{block} {key}: {why}", part=block, field=key, text="")
    return value


def bjt_values(name: str, given: dict) -> dict:
    """Resolve a bipolar transistor's small-signal values.

    Parameters
    ----------
    name : str
        Block name, used in error messages.
    given : dict
        Field texts or numbers. Small-signal: ``gm`` (S), ``rpi`` (Ω), optional ``ro``,
        ``cpi``. Operating point (used when ``ic`` is given): ``ic`` (A), ``beta``, optional
        ``va`` (V), ``ft`` (Hz), ``temp`` (K, default 300). Either way optional ``rb`` (Ω),
        ``cmu``, ``ccs`` (F).

    Returns
    -------
    dict
        ``gm`` (S), ``rpi``, ``ro``, ``rb`` (Ω), ``cpi``, ``cmu``, ``ccs`` (F), and for an
        operating point also ``vt`` (V).
    """
    out = {"rb": _get(name, given, "rb", "Ω", zero=True) or 0.0,
           "cmu": _get(name, given, "cmu", "F", zero=True) or 0.0,
           "ccs": _get(name, given, "ccs", "F", zero=True) or 0.0}
    if given.get("ic") not in (None, ""):
        ic = _get(name, given, "ic", "A", required=True)
        beta = _get(name, given, "beta", "", required=True)
        temp = _get(name, given, "temp", "K") or 300.0
        out["vt"] = thermal_voltage(temp)
        out["gm"] = ic / out["vt"]
        out["rpi"] = beta / out["gm"]
        va = _get(name, given, "va", "V")
        out["ro"] = va / ic if va else math.inf
        ft = _get(name, given, "ft", "Hz")
        if ft:
            cpi = out["gm"] / (2 * math.pi * ft) - out["cmu"]
            out["cpi"] = _need_positive_result(
                name, "ft", cpi, f"f_T = {ft:g} Hz is too high for C_μ = {out['cmu']:g} F at "
                                  f"I_C = {ic:g} A (C_π would be negative); lower f_T or C_μ")
        else:
            out["cpi"] = 0.0
    else:
        out["gm"] = _get(name, given, "gm", "S", required=True, zero=True, negative=True)
        out["rpi"] = _get(name, given, "rpi", "Ω", required=True)
        out["ro"] = _get(name, given, "ro", "Ω", ) or math.inf
        out["cpi"] = _get(name, given, "cpi", "F", zero=True) or 0.0
    return out


def mosfet_values(name: str, given: dict) -> dict:
    """Resolve a MOS transistor's small-signal values.

    Parameters
    ----------
    name : str
        Block name, used in error messages.
    given : dict
        Small-signal: ``gm`` (S), optional ``ro`` (Ω). Operating point (used when ``id`` is
        given): ``id`` (A), ``vov`` (V), optional ``lam`` (1/V) or ``va`` (V). Either way
        optional ``gmb`` (S), ``cgs``, ``cgd``, ``cdb``, ``csb`` (F).

    Returns
    -------
    dict
        ``gm``, ``gmb`` (S), ``ro`` (Ω), ``cgs``, ``cgd``, ``cdb``, ``csb`` (F).
    """
    out = {"gmb": _get(name, given, "gmb", "S", zero=True, negative=True) or 0.0}
    for cap in ("cgs", "cgd", "cdb", "csb"):
        out[cap] = _get(name, given, cap, "F", zero=True) or 0.0
    if given.get("id") not in (None, ""):
        i_d = _get(name, given, "id", "A", required=True)
        vov = _get(name, given, "vov", "V", required=True)
        out["gm"] = 2 * i_d / vov
        lam = _get(name, given, "lam", "1/V")
        va = _get(name, given, "va", "V")
        if lam and va:
            raise BadValueError(f"{name}: give λ or V_A, not both", part=name, field="lam", text="")
        out["ro"] = 1 / (lam * i_d) if lam else (va / i_d if va else math.inf)
    else:
        out["gm"] = _get(name, given, "gm", "S", required=True, zero=True, negative=True)
        out["ro"] = _get(name, given, "ro", "Ω") or math.inf
    return out


def opamp_values(name: str, given: dict) -> dict:
    """Resolve a single-pole op-amp: ``a0`` (V/V), ``fu`` (Hz), optional ``rout``, ``rin`` (Ω).

    Returns
    -------
    dict
        ``a0``, ``fu`` (Hz), ``fp`` (Hz, the open-loop pole fu/a0), ``rout`` (Ω, 0 if
        absent), ``rin`` (Ω, inf if absent).
    """
    a0 = _get(name, given, "a0", "V/V", required=True)
    fu = _get(name, given, "fu", "Hz", required=True)
    return {"a0": a0, "fu": fu, "fp": fu / a0,
            "rout": _get(name, given, "rout", "Ω", zero=True) or 0.0,
            "rin": _get(name, given, "rin", "Ω") or math.inf}


def _pieces(block: Block):
    """The helpers that add a block's resistors and capacitors, leaving out absent ones."""
    n, v = block.name, block.values
    els: list = []

    def r(key, a, b):
        if math.isfinite(v[key]) and v[key] > 0:
            els.append(Resistor(f"{n}.{key}", a, b, v[key], n))

    def c(key, a, b):
        if v[key] > 0 and a != b:
            els.append(Capacitor(f"{n}.{key}", a, b, v[key], n))

    return els, r, c


def _expand_bjt(block: Block) -> list:
    n, v, p = block.name, block.values, block.pins
    els, r, c = _pieces(block)
    col, base, emi, sub = p["collector"], p["base"], p["emitter"], p["substrate"]
    bi = f"{n}.bi" if v["rb"] > 0 else base
    r("rb", base, bi)
    r("rpi", bi, emi)
    c("cpi", bi, emi)
    c("cmu", bi, col)
    els.append(VCCS(f"{n}.gm", col, emi, bi, emi, v["gm"], n))
    r("ro", col, emi)
    c("ccs", col, sub)
    return els


def _expand_mosfet(block: Block) -> list:
    n, v, p = block.name, block.values, block.pins
    els, r, c = _pieces(block)
    d, g, s, bulk = p["drain"], p["gate"], p["source"], p["bulk"]
    els.append(VCCS(f"{n}.gm", d, s, g, s, v["gm"], n))
    if v["gmb"] and bulk != s:
        els.append(VCCS(f"{n}.gmb", d, s, bulk, s, v["gmb"], n))
    r("ro", d, s)
    c("cgs", g, s)
    c("cgd", g, d)
    c("cdb", d, bulk)
    c("csb", s, bulk)
    return els


def _expand_opamp(block: Block) -> list:
    n, v, p = block.name, block.values, block.pins
    els, r, _ = _pieces(block)
    plus, minus, out = p["plus"], p["minus"], p["out"]
    x = f"{n}.x"
    r("rin", plus, minus)
    els.append(VCCS(f"{n}.gin", "0", x, plus, minus, 1.0, n))
    els.append(Resistor(f"{n}.rp", x, "0", 1.0, n))
    els.append(Capacitor(f"{n}.cp", x, "0", 1 / (2 * math.pi * v["fp"]), n))
    y = f"{n}.y" if v["rout"] > 0 else out
    els.append(VCVS(f"{n}.a0", y, "0", x, "0", v["a0"], n))
    r("rout", y, out)
    return els


@dataclass(frozen=True)
class BlockModel:
    """How one kind of block is resolved and expanded.

    Attributes
    ----------
    resolve : callable
        ``resolve(name, given)`` -> dict of small-signal values in SI units.
    expand : callable
        ``expand(block)`` -> list of primitive elements.
    """

    resolve: Callable
    expand: Callable


MODELS = MappingProxyType({
    "bjt": BlockModel(bjt_values, _expand_bjt),
    "mosfet": BlockModel(mosfet_values, _expand_mosfet),
    "opamp": BlockModel(opamp_values, _expand_opamp),
})
"""Every block kind's model, by kind."""


def expand(block: Block) -> list:
    """Primitive elements of a resolved block, named ``<block>.<param>``.

    BJT: r_b from the base pin to the internal base b′ (node ``<block>.bi``; no node when
    r_b = 0), r_π and C_π from b′ to the emitter, C_μ from b′ to the collector, g_m·v_b′e
    from collector to emitter, r_o collector–emitter, C_cs collector–substrate. MOSFET:
    g_m·v_gs + g_mb·v_bs from drain to source, r_o drain–source, C_gs, C_gd, C_db
    (drain–bulk), C_sb (source–bulk). Op-amp: r_in between the inputs; a unit-resistance
    pole node ``<block>.x`` driven by 1 S·(v₊ − v₋) with ``<block>.cp`` = 1/(2π f_p) F; an
    ideal A₀·v_x stage; r_out to the output. Zero capacitances and infinite resistances
    are left out.
    """
    return MODELS[block.kind].expand(block)
